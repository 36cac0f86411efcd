"""Comparing methods on the stored scores, one table per budget.

Within a budget, each method's mean ROUGE over documents carries a percentile
bootstrap interval; each method's difference from the lead baseline is a paired
bootstrap over the documents both have; extractive fragments (coverage, density,
compression, novel n-grams) say how much each method copies. Summaries made under
different budgets are never pooled: ROUGE F1 moves with length.
"""

from __future__ import annotations

import hashlib
import json
from collections import defaultdict
from dataclasses import dataclass, field

import numpy as np

from store.errors import SummarizerError, UsageError
from store.evaluation import ScoredSummary
from store.store import Store
from summarize.evaluation.bootstrap import Difference, Interval, PercentileBootstrap
from summarize.evaluation.fragments import IndexedSource, extractiveness
from summarize.evaluation.matched import MatchedBudget
from summarize.evaluation.rouge import METRICS
from summarize.methods.budget import count_words
from summarize.methods.labels import budget_label, is_matched, setting_label

MEASURES = ("f1", "precision", "recall")
BASELINE = "lead"
UPPER_BOUND = "oracle"
EXTRACTIVENESS_FIELDS = ("coverage", "density", "compression", "novel_unigrams", "novel_bigrams")


class NothingScored(SummarizerError):
    """A budget was asked for, and no summary at that budget has scores."""


@dataclass
class SystemResult:
    """One method (with one parameter setting) under one budget.

    ``per_document`` maps a document id to ``{"summary_id", "words", metric: value}``
    for the chosen measure; the report draws its charts and examples from it.
    """

    name: str
    method: str
    params: dict
    documents: int
    scores: dict[str, Interval]
    versus_baseline: dict[str, Difference]
    extractiveness: dict[str, float]
    mean_words: float
    per_document: dict[int, dict] = field(repr=False, default_factory=dict)

    @property
    def is_upper_bound(self) -> bool:
        return self.method == UPPER_BOUND

    def as_dict(self) -> dict:
        return {
            "name": self.name,
            "method": self.method,
            "params": self.params,
            "upper_bound": self.is_upper_bound,
            "documents": self.documents,
            "scores": {metric: interval.as_dict() for metric, interval in self.scores.items()},
            "difference_from_lead": {metric: diff.as_dict() for metric, diff in self.versus_baseline.items()},
            "extractiveness": self.extractiveness,
            "mean_words": self.mean_words,
        }


@dataclass
class BudgetGroup:
    budget: str
    matched: bool
    systems: list[SystemResult]

    def as_dict(self) -> dict:
        return {"budget": self.budget, "matched": self.matched, "systems": [s.as_dict() for s in self.systems]}


@dataclass
class Comparison:
    measure: str
    confidence: float
    resamples: int
    seed: int
    groups: list[BudgetGroup]
    reference_words: dict[int, int] = field(repr=False, default_factory=dict)

    def as_dict(self) -> dict:
        return {
            "measure": self.measure,
            "bootstrap": {
                "kind": "percentile (Efron & Tibshirani 1993); differences paired over documents (Koehn 2004)",
                "confidence": self.confidence,
                "resamples": self.resamples,
                "seed": self.seed,
            },
            "budgets": [group.as_dict() for group in self.groups],
        }


def _settings_key(method: str, params: dict) -> str:
    """Parameters other than the budget identify a method's setting within a budget."""
    rest = {k: v for k, v in params.items() if k != "budget"}
    canonical = json.dumps({"method": method, "params": rest}, sort_keys=True, default=str)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()[:6]


def _budget_order(label: str, matched: bool) -> tuple:
    return (not matched, "own length" in label, label)


def _system_order(system: SystemResult) -> tuple:
    return (system.method != BASELINE, system.is_upper_bound, system.name)


def compare(
    db_path: str | Store,
    measure: str = "f1",
    budget: str | None = None,
    resamples: int = 1000,
    confidence: float = 0.95,
    seed: int = 0,
) -> Comparison:
    """Per budget and method: mean of each ROUGE metric (``measure`` = f1, precision
    or recall) with a bootstrap interval, the paired difference from lead, and
    extractiveness. ``budget`` keeps one budget: "reference", a number of words, or
    None for all. ``db_path`` may be an open :class:`Store` (the review site's read-only
    one), which is left open."""
    if measure not in MEASURES:
        raise UsageError(f"measure must be one of {', '.join(MEASURES)}, got {measure!r}")
    wanted = None if budget in (None, "all") else MatchedBudget.parse(budget).label()
    bootstrap = PercentileBootstrap(resamples=resamples, confidence=confidence, seed=seed)
    store = db_path if isinstance(db_path, Store) else Store(db_path, read_only=True)
    try:
        summaries = store.evaluation.scored()
        sentences = store.evaluation.sentences([s.summary_id for s in summaries])
        documents = store.documents.briefs(sorted({s.document_id for s in summaries}))
    finally:
        if store is not db_path:
            store.close()

    grouped: dict[str, dict[tuple[str, str], list[ScoredSummary]]] = defaultdict(lambda: defaultdict(list))
    matched_labels = set()
    scored_labels = set()
    for summary in summaries:
        label = budget_label(summary.params)
        scored_labels.add(label)
        if is_matched(summary.params):
            matched_labels.add(label)
        if wanted is not None and label != wanted:
            continue
        key = (summary.method, _settings_key(summary.method, summary.params))
        grouped[label][key].append(summary)
    if wanted is not None and not grouped:
        present = "; ".join(sorted(scored_labels)) or "none (run `summarize score` first)"
        raise NothingScored(f"{db_path}: no scored summaries at budget '{budget}' ({wanted}); scored budgets: {present}")

    extractive = _extractiveness(
        [member for systems in grouped.values() for members in systems.values() for member in members],
        sentences, documents,
    )
    groups = []
    for label, systems in grouped.items():
        names = {key: setting_label(key[0], members[0].params, with_budget=False) for key, members in systems.items()}
        results = []
        for (method, settings), members in systems.items():
            name = names[(method, settings)]
            if list(names.values()).count(name) > 1:  # settings the label cannot tell apart
                name = f"{name}#{settings}"
            results.append(_system_result(name, method, members, extractive, measure, bootstrap))
        baseline = next((r for r in sorted(results, key=_system_order) if r.method == BASELINE), None)
        if baseline is not None:
            for result in results:
                if result is not baseline:
                    result.versus_baseline = _paired(result, baseline, bootstrap)
        groups.append(BudgetGroup(budget=label, matched=label in matched_labels, systems=sorted(results, key=_system_order)))
    groups.sort(key=lambda g: _budget_order(g.budget, g.matched))
    reference_words = {i: count_words(d.reference or "") for i, d in documents.items()}
    return Comparison(measure, confidence, resamples, seed, groups, reference_words)


def _extractiveness(summaries: list[ScoredSummary], sentences: dict, documents: dict) -> dict[int, object]:
    """Coverage and density of each summary, by summary id. Each document's token
    index is built once for all its summaries and then dropped: kept for every
    document of a large archive, the indexes took gigabytes."""
    by_document: dict[int, list[int]] = defaultdict(list)
    for summary in summaries:
        by_document[summary.document_id].append(summary.summary_id)
    found = {}
    for document_id, summary_ids in by_document.items():
        source = IndexedSource(documents[document_id].text)
        for summary_id in summary_ids:
            found[summary_id] = extractiveness(source, sentences.get(summary_id, []))
    return found


def _system_result(name, method, members, extractive, measure, bootstrap) -> SystemResult:
    per_document = {}
    fragments = defaultdict(list)
    for summary in members:
        values = {metric: summary.scores[metric][measure] for metric in METRICS if metric in summary.scores}
        per_document[summary.document_id] = {
            "summary_id": summary.summary_id,
            "words": count_words(summary.text or ""),
            **values,
        }
        found = extractive[summary.summary_id]
        for field_name in EXTRACTIVENESS_FIELDS:
            fragments[field_name].append(getattr(found, field_name))
    metrics = [m for m in METRICS if all(m in row for row in per_document.values())]
    params = {k: v for k, v in members[0].params.items() if k != "budget"}
    return SystemResult(
        name=name,
        method=method,
        params=params,
        documents=len(per_document),
        scores={m: bootstrap.mean([row[m] for row in per_document.values()]) for m in metrics},
        versus_baseline={},
        extractiveness={k: float(np.mean(v)) for k, v in fragments.items()},
        mean_words=float(np.mean([row["words"] for row in per_document.values()])),
        per_document=per_document,
    )


def _paired(result: SystemResult, baseline: SystemResult, bootstrap: PercentileBootstrap) -> dict[str, Difference]:
    shared = sorted(set(result.per_document) & set(baseline.per_document))
    return {
        metric: bootstrap.paired_difference(
            [result.per_document[d][metric] for d in shared], [baseline.per_document[d][metric] for d in shared]
        )
        for metric in result.scores
        if metric in baseline.scores
    }
