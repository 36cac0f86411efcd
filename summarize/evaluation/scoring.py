"""Scoring stored summaries against the archive's own reference summaries.

    score(db_path)        add matched-budget summaries and oracles, then score_store
    score_store(db_path)  ROUGE for every summary with a reference and no score yet

A rerun scores only what is new; scores already stored are never recomputed, so
they keep the library versions recorded with the run that made them.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import asdict, dataclass

from store.runs import recorded_run, writable_store
from store.store import Store
from summarize.evaluation.matched import (
    MATCHED_METHODS,
    MatchedBudget,
    add_matched_summaries,
    add_oracle_at_stored_budgets,
)
from summarize.evaluation.rouge import RougeMetric, reference_sentences


def score_unscored(store: Store, metric: RougeMetric, progress: Callable[[str], None] | None) -> int:
    """Score every stored summary that has a reference and no score yet, inside the
    caller's run (the caller holds the store's writer lock). Returns how many."""
    pending = store.evaluation.unscored()
    references: dict[int, list[str]] = {}
    for number, item in enumerate(pending, 1):
        if item.document_id not in references:
            references[item.document_id] = reference_sentences(item.reference)
        values = metric.score(item.sentences, references[item.document_id])
        store.evaluation.write_scores(item.summary_id, values)
        if progress and (number % 200 == 0 or number == len(pending)):
            progress(f"scored {number}/{len(pending)} summaries")
    return len(pending)


def score_store(
    db_path: str,
    metric: RougeMetric | None = None,
    progress: Callable[[str], None] | None = None,
    lock_wait_seconds: float = 0.0,
) -> int:
    """Score every stored summary whose document has a reference and that has no
    score yet; returns how many summaries were scored. Takes the store's writer lock
    (:class:`~store.lock.StoreLocked` when a run holds it)."""
    with writable_store(db_path, lock_wait_seconds, progress) as (store, _lock):
        return score_unscored(store, metric or RougeMetric(), progress)


@dataclass
class ScoreReport:
    run_id: int
    budget: str
    summaries_added: int = 0
    oracles_added: int = 0
    summaries_scored: int = 0
    seconds: float = 0.0

    def as_dict(self) -> dict:
        return asdict(self)


def score(
    db_path: str,
    budget: MatchedBudget | str = "reference",
    methods: Sequence[str] = MATCHED_METHODS,
    progress: Callable[[str], None] | None = None,
    lock_wait_seconds: float = 0.0,
) -> ScoreReport:
    """Make the summaries a fair comparison needs, then score everything unscored.

    For every active document with a reference: each of ``methods`` (the oracle
    included by default) at the matched ``budget`` ("reference" = the reference's
    length in words, or a number of words), and the oracle at every budget already
    stored. The work is recorded as a run of its own (command ``score``), under the
    store's writer lock, so it never interleaves with a ``summarize run``.
    """
    budget = budget if isinstance(budget, MatchedBudget) else MatchedBudget.parse(budget)
    started = time.perf_counter()
    metric = RougeMetric()
    config = {"budget": budget.label(), "methods": list(methods), "metric": asdict(metric)}
    with recorded_run(db_path, "score", config, lock_wait_seconds, progress) as run:
        report = ScoreReport(run_id=run.run_id, budget=budget.label())
        try:
            report.summaries_added = add_matched_summaries(run.store, run.run_id, budget, methods, progress)
            report.oracles_added = add_oracle_at_stored_budgets(run.store, run.run_id, progress)
            report.summaries_scored = score_unscored(run.store, metric, progress)
        finally:
            report.seconds = time.perf_counter() - started
            run.counts = {k: v for k, v in report.as_dict().items() if k not in ("run_id", "budget")}
    return report
