"""Summaries at matched budgets, made from what the store already holds.

ROUGE F1 moves with summary length, so methods are compared at the same length:
by default each document's budget is its reference summary's length in words; or
one fixed number of words for every document. The extractive oracle is added at the
matched budget and at every budget already stored, so each comparison shows its
upper bound.

Documents are rebuilt from the store (text and stored sentence spans), so the
summaries point into exactly the text that was stored; TF-IDF is fitted over every
active document in the store.
"""

from __future__ import annotations

import copy
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from store.records import param_hash
from store.store import Store
from summarize.evaluation.budget_labels import BUDGET_RULE_KEY, REFERENCE_WORDS, budget_label, is_matched
from summarize.evaluation.oracle import OracleSummarizer
from summarize.methods.budget import REFERENCE, Budget, count_words
from summarize.methods.registry import MATCHED, MethodSettings, build_method, check_names

__all__ = ["BUDGET_RULE_KEY", "REFERENCE_WORDS", "MatchedBudget", "add_matched_summaries", "budget_label", "is_matched"]

MATCHED_METHODS = ("lead", "tfidf", "textrank", "oracle")


@dataclass(frozen=True)
class MatchedBudget:
    """The budget every compared method gets: ``fixed=None`` is each document's
    reference length in words (``count_words``); otherwise one :class:`Budget` for
    every document (sentences, words or a share of the document)."""

    fixed: Budget | None = None

    @classmethod
    def parse(cls, spec: str | int) -> MatchedBudget:
        """The budget grammar: ``reference``, ``3``, ``80w`` or ``10%``."""
        if str(spec).strip().lower() == REFERENCE:
            return cls()
        return cls(fixed=Budget.parse(spec))

    def budget_for(self, reference: str) -> Budget:
        return self.fixed if self.fixed is not None else Budget(words=max(1, count_words(reference)))

    def tagged(self, params: dict) -> dict:
        """A fixed budget is an ordinary budget; a per-document one is marked, so
        it is grouped as one budget and its summaries never collide with a fixed one."""
        return params if self.fixed is not None else {**params, BUDGET_RULE_KEY: REFERENCE_WORDS}

    def label(self) -> str:
        if self.fixed is not None:
            return str(self.fixed)
        return budget_label(self.tagged({"budget": {"words": 1}}))


def _with_budget(method, budget: Budget):
    # A shallow copy keeps what ``fit`` learned (TF-IDF's vectorizer) under a new budget.
    adjusted = copy.copy(method)
    adjusted.budget = budget
    return adjusted


def add_matched_summaries(
    store: Store,
    run_id: int,
    budget: MatchedBudget,
    methods: Sequence[str] = MATCHED_METHODS,
    progress: Callable[[str], None] | None = None,
) -> int:
    """Summarize every active document with a reference with each of ``methods`` at
    the matched budget; returns how many summaries were added (stored ones are kept)."""
    prototypes = [build_method(name, MethodSettings(), usable=MATCHED) for name in check_names(methods, MATCHED)]
    missing = []
    for document_id in store.references.referenced_document_ids():
        document, segmentation = store.documents.load(document_id)
        document_budget = budget.budget_for(document.reference_summary)
        todo = []
        for prototype in prototypes:
            params = budget.tagged(_with_budget(prototype, document_budget).get_params())
            if not store.has_summary(document_id, prototype.name, param_hash(prototype.name, params)):
                todo.append(prototype)
        if todo:
            missing.append((document_id, document, segmentation, document_budget, todo))
    if not missing:
        return 0
    texts = store.documents.active_texts()
    fitted = {id(prototype) for _, _, _, _, todo in missing for prototype in todo}
    for prototype in prototypes:
        if id(prototype) in fitted:
            prototype.fit(texts)
    for number, (document_id, document, segmentation, document_budget, todo) in enumerate(missing, 1):
        for prototype in todo:
            method = _with_budget(prototype, document_budget)
            summary = method.summarize(document, segmentation)
            summary.params = budget.tagged(summary.params)
            store.add_summary(document_id, run_id, summary)
        if progress and (number % 25 == 0 or number == len(missing)):
            progress(f"matched-budget summaries: {number}/{len(missing)} documents")
    return sum(len(todo) for *_, todo in missing)


def add_oracle_at_stored_budgets(
    store: Store, run_id: int, progress: Callable[[str], None] | None = None
) -> int:
    """Add an oracle summary beside every stored budget of a document with a
    reference (sentence, word or ratio budgets), so every budget has its upper bound."""
    pairs = set()
    for document_id, params in store.evaluation.stored_summary_budgets(exclude_methods=("oracle",)):
        if is_matched(params) or "budget" not in params:
            continue
        try:
            budget = Budget(**params["budget"])
        except (TypeError, ValueError):
            continue
        oracle = OracleSummarizer(budget=budget)
        if not store.has_summary(document_id, oracle.name, param_hash(oracle.name, oracle.get_params())):
            pairs.add((document_id, budget))
    for number, (document_id, budget) in enumerate(sorted(pairs, key=lambda p: (p[0], str(p[1]))), 1):
        document, segmentation = store.documents.load(document_id)
        store.add_summary(document_id, run_id, OracleSummarizer(budget=budget).summarize(document, segmentation))
        if progress and (number % 25 == 0 or number == len(pairs)):
            progress(f"oracle summaries at stored budgets: {number}/{len(pairs)}")
    return len(pairs)
