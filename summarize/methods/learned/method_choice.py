"""Methods a run settles only once the archive is read: ``house-style`` (the latest
trained model in the store, trained first when there is none) and ``auto`` (the
method with the best held-out ROUGE on the store's referenced documents).

The runner calls ``resolve(store, run_id, say)`` on each and runs what comes back;
``decision`` then says what was chosen and why, and the run's configuration keeps it.
Without enough referenced documents to train (see
:data:`~summarize.methods.learned.training.MIN_REFERENCED_DOCUMENTS`), both fall back to the best
fixed method by held-out ROUGE — lead when no document has a reference — and say so.
"""

from __future__ import annotations

import copy
from collections.abc import Callable
from dataclasses import asdict, dataclass, field

from store.runs import recorded_run
from store.store import Store
from summarize.methods.budget import Budget
from summarize.methods.contract import ParamsFromFields, ResolvedAtRunTime, SkipsDocuments
from summarize.methods.extractive import DEFAULT_BUDGET
from summarize.methods.learned.house_style import TRUSTED_TYPES, HouseStyleSummarizer
from summarize.methods.learned.sentence_features import FEATURE_NAMES
from summarize.methods.learned.training import (
    FIXED_METHODS,
    MIN_REFERENCED_DOCUMENTS,
    SELECTION_RULE,
    score_fixed_methods,
    selection_score,
    train_in_store,
    usable_folds,
)
from summarize.methods.registry import MethodSettings, build_method

LEARNED = "house-style"


@dataclass
class Decision:
    """Which method a run uses for a requested one, and why."""

    requested: str
    method: str
    reason: str
    fallback: bool
    referenced_documents: int
    selection_rule: str = SELECTION_RULE
    scores: dict[str, float] = field(default_factory=dict)
    model_id: int | None = None

    def as_dict(self) -> dict:
        return asdict(self)


@dataclass
class PretrainedMethod(SkipsDocuments):
    """A trained method as a run uses it: the run's archive-wide ``fit`` leaves the
    model as trained, ``trained_model`` in the params ties each summary to the stored
    model, and the documents it was trained on are left out — they have a human
    summary, and a summary of a training document would look better than it is."""

    method: HouseStyleSummarizer
    model_id: int
    exclude_document_ids: frozenset[int] = frozenset()

    @property
    def name(self) -> str:
        return self.method.name

    @property
    def skipped_document_ids(self) -> frozenset[int]:
        return self.exclude_document_ids

    def get_params(self) -> dict:
        return {**self.method.get_params(), "trained_model": self.model_id}

    def fit(self, texts) -> PretrainedMethod:
        return self

    def summarize(self, document, segmentation):
        summary = self.method.summarize(document, segmentation)
        summary.params = self.get_params()
        return summary


def _fixed_method(name: str, budget: Budget, mmr_lambda: float | None):
    return build_method(name, MethodSettings(budget=budget, mmr_lambda=mmr_lambda))


def _best(scores: dict[str, float], order: tuple[str, ...]) -> str:
    """Highest score; a tie goes to the method earlier in ``order`` (the simpler one)."""
    return max((name for name in order if name in scores), key=lambda n: (scores[n], -order.index(n)))


def choose_in_store(
    store: Store, run_id: int, folds: int = 5, seed: int = 0, say: Callable[[str], None] | None = None,
    requested: str = "auto",
) -> Decision:
    """Evaluate lead, TF-IDF, TextRank and (with enough references) house-style on the
    referenced documents, held out and at matched budgets, and pick the best."""
    referenced = len(store.references.referenced_document_ids())
    if referenced == 0:
        decision = Decision(
            requested, "lead", "no document in the store has a reference summary, so nothing can be "
            "compared; using the lead baseline", fallback=True, referenced_documents=0,
        )
    elif usable_folds(referenced, folds) is None:
        means = score_fixed_methods(store, run_id, say)
        scores = {name: selection_score(m) for name, m in means.items()}
        best = _best(scores, FIXED_METHODS) if scores else "lead"
        decision = Decision(
            requested, best,
            f"only {referenced} documents have a reference summary (the house-style method needs at least "
            f"{MIN_REFERENCED_DOCUMENTS}); using the best fixed method by held-out ROUGE",
            fallback=True, referenced_documents=referenced, scores=scores,
        )
    else:
        report = train_in_store(store, run_id, HouseStyleSummarizer(seed=seed), folds, say)
        scores = {name: selection_score(m) for name, m in report.held_out.items() if name != "oracle"}
        best = _best(scores, (*FIXED_METHODS, LEARNED))
        decision = Decision(
            requested, best,
            f"best held-out ROUGE on {referenced} referenced documents ({report.folds}-fold cross-validation "
            "for house-style; the fixed methods never see references)",
            fallback=False, referenced_documents=referenced, scores=scores, model_id=report.model_id,
        )
    if decision.fallback and say:
        say(f"{requested}: {decision.reason}: {decision.method}")
    return decision


def _pretrained(store: Store, budget: Budget, mmr_lambda: float | None) -> PretrainedMethod:
    stored = store.models.latest(LEARNED)
    method = copy.copy(stored.load(TRUSTED_TYPES))
    method.budget = budget
    method.mmr_lambda = mmr_lambda
    return PretrainedMethod(method, stored.id, frozenset(stored.training_documents))


@dataclass
class HouseStyleForRun(ParamsFromFields, ResolvedAtRunTime):
    """``--methods house-style`` before the run has read the archive: resolves to the
    latest model stored for the method, trained on the store's referenced documents
    first when there is none (or when it expects other features)."""

    budget: Budget = DEFAULT_BUDGET
    mmr_lambda: float | None = None
    folds: int = 5
    seed: int = 0
    model_source: str = field(default="latest stored; trained from the referenced documents when none", init=False)
    name: str = field(default=LEARNED, init=False)

    def resolve(self, store: Store, run_id: int, say: Callable[[str], None] | None = None):
        stored = store.models.latest(LEARNED)
        if stored is not None and stored.features == list(FEATURE_NAMES):
            self.decision = Decision(
                LEARNED, LEARNED, f"latest stored model #{stored.id} (trained {stored.created})", fallback=False,
                referenced_documents=len(stored.training_documents), model_id=stored.id,
            ).as_dict()
            return _pretrained(store, self.budget, self.mmr_lambda)
        decision = choose_in_store(store, run_id, self.folds, self.seed, say, requested=LEARNED)
        if not decision.fallback:
            decision.method, decision.reason = LEARNED, "no stored model: trained one on the referenced documents"
        self.decision = decision.as_dict()
        if decision.method == LEARNED:
            return _pretrained(store, self.budget, self.mmr_lambda)
        return _fixed_method(decision.method, self.budget, self.mmr_lambda)


@dataclass
class AutoForRun(ParamsFromFields, ResolvedAtRunTime):
    """``--methods auto``: the best method by held-out ROUGE (see :data:`SELECTION_RULE`)
    among lead, TF-IDF, TextRank and house-style on the store's referenced
    documents, applied to the run at its own budget."""

    budget: Budget = DEFAULT_BUDGET
    mmr_lambda: float | None = None
    folds: int = 5
    seed: int = 0
    selection_rule: str = field(default=SELECTION_RULE, init=False)
    name: str = field(default="auto", init=False)

    def resolve(self, store: Store, run_id: int, say: Callable[[str], None] | None = None):
        decision = choose_in_store(store, run_id, self.folds, self.seed, say)
        self.decision = decision.as_dict()
        if say and not decision.fallback:
            say(f"auto: chose {decision.method} ({decision.reason})")
        if decision.method == LEARNED:
            return _pretrained(store, self.budget, self.mmr_lambda)
        return _fixed_method(decision.method, self.budget, self.mmr_lambda)


RUN_TIME_METHODS = {LEARNED: HouseStyleForRun, "auto": AutoForRun}


def choose(
    db_path: str, folds: int = 5, seed: int = 0, say: Callable[[str], None] | None = None,
    lock_wait_seconds: float = 0.0,
) -> tuple[int, Decision]:
    """:func:`choose_in_store` as a run of its own (command ``choose``), under the
    store's writer lock; the decision is kept in the run's configuration."""
    config = {"folds": folds, "seed": seed, "selection_rule": SELECTION_RULE}
    with recorded_run(db_path, "choose", config, lock_wait_seconds, say) as run:
        decision = choose_in_store(run.store, run.run_id, folds, seed, say)
        run.store.runs.update_config(run.run_id, {**config, "decisions": {"auto": decision.as_dict()}})
    return run.run_id, decision
