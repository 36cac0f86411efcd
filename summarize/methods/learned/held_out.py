"""Cross-validation over documents for the trained method: every document is
summarised by a model that never saw it."""

from __future__ import annotations

import copy
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from sklearn.model_selection import KFold

from store.records import Summary
from summarize.evaluation.matched import MatchedBudget
from summarize.methods.labels import EVALUATION_KEY
from summarize.methods.learned.house_style import Example, HouseStyleSummarizer


@dataclass(frozen=True)
class Fold:
    number: int
    train: tuple[int, ...]
    test: tuple[int, ...]


@dataclass
class CrossValidation:
    """k-fold cross-validation with documents as the unit (Stone 1974, cited from
    memory; the usual resampling estimate of out-of-sample error).

    The documents, in the order given, are shuffled with ``seed`` and cut into
    ``folds`` parts of near-equal size (scikit-learn's ``KFold(shuffle=True)``); fold
    ``k`` trains on the other parts and summarises part ``k``. A document is in
    exactly one test part and never in the training part of its own fold, so no
    sentence of a test document — and no label derived from its reference — reaches
    the model that summarises it. Variant not used: stratified or grouped folds
    (documents here are independent units; near-duplicates are already collapsed by
    the store's content hash).
    """

    folds: int = 5
    seed: int = 0

    def label(self) -> str:
        return f"{self.folds}-fold held-out"

    def plan(self, count: int) -> list[Fold]:
        if count < self.folds:
            raise ValueError(f"{self.folds}-fold cross-validation needs at least {self.folds} documents, got {count}")
        splitter = KFold(n_splits=self.folds, shuffle=True, random_state=self.seed)
        return [
            Fold(number, tuple(int(i) for i in train), tuple(int(i) for i in test))
            for number, (train, test) in enumerate(splitter.split(np.arange(count)))
        ]

    def summary_params(self, method: HouseStyleSummarizer, reference: str, budget: MatchedBudget = MatchedBudget()) -> dict:
        """The parameters a held-out summary of a document with this reference carries."""
        adjusted = copy.copy(method)
        adjusted.budget = budget.budget_for(reference)
        return budget.tagged({**adjusted.get_params(), EVALUATION_KEY: self.label()})

    def held_out_summaries(
        self,
        prototype: HouseStyleSummarizer,
        examples: Sequence[Example],
        rows: Sequence[tuple[np.ndarray, np.ndarray]],
        budget: MatchedBudget = MatchedBudget(),
        wanted: set[int] | None = None,
        progress: Callable[[str], None] | None = None,
    ) -> dict[int, Summary]:
        """A summary for each wanted example index (all by default), each by a model
        trained on the other folds' ``rows`` (``prototype.labelled_rows`` of every
        example, in order; ``prototype`` has its IDF fitted already). Summaries are at
        ``budget`` and tagged with it and with this evaluation, so stored ones are
        compared at the same budget as the other methods; the fold goes in details."""
        wanted = set(range(len(examples))) if wanted is None else wanted
        summaries: dict[int, Summary] = {}
        for fold in self.plan(len(examples)):
            targets = [i for i in fold.test if i in wanted]
            if not targets:
                continue
            trained = prototype.untrained_copy().fit_rows([rows[i] for i in fold.train])
            for index in targets:
                document, segmentation = examples[index]
                method = copy.copy(trained)
                method.budget = budget.budget_for(document.reference_summary)
                summary = method.summarize(document, segmentation)
                summary.params = self.summary_params(trained, document.reference_summary, budget)
                summary.details.update(
                    {"fold": fold.number, "folds": self.folds, "training_documents": len(fold.train)}
                )
                summaries[index] = summary
            if progress:
                progress(f"cross-validation: fold {fold.number + 1}/{self.folds} summarised")
        return summaries

