"""Aspect summaries against aspect references: per-document ROUGE of each system at
each reference's length, the learned variant tuned on held-out documents, and
paired comparisons. Used by the ACLSum aspect benchmark and its test."""

from __future__ import annotations

import itertools
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from store.records import Document, Segmentation
from summarize.evaluation.matched import MatchedBudget
from summarize.evaluation.oracle import OracleSummarizer
from summarize.evaluation.rouge import RougeMetric
from summarize.methods.aspects.definitions import Aspect
from summarize.methods.aspects.learned import TUNABLE, LearnedAspectSummarizer
from summarize.methods.aspects.references import aspect_references
from summarize.methods.aspects.selection import AspectSummarizer
from summarize.methods.budget import Budget
from summarize.methods.extractive import LeadSummarizer, TextRankSummarizer, TfidfSummarizer

Example = tuple[Document, Segmentation]
METRICS = ("rouge1", "rouge2", "rougeL")
GENERIC_METHODS = ("lead", "tfidf", "textrank")
# Settings the learned variant is tuned over (on validation documents only).
TUNING_GRID = {
    "c": (0.002, 0.05),
    "label_top": (0, 3, 5),
    "bias": (0.5, 0.85, 1.0),
    "min_probability": (0.2, 0.5),
    "relevance": ("probability", "probability-evidence"),
}


@dataclass
class AspectSystems:
    """Per system, per aspect, per document: ROUGE F1 values, and how many documents
    got no answer."""

    scores: dict[str, dict[str, list[dict[str, float]]]]
    unanswered: dict[str, dict[str, int]]

    def mean(self, system: str, aspect: str, metric: str = "rouge1") -> float:
        values = [row[metric] for row in self.scores[system][aspect]]
        return sum(values) / len(values) if values else float("nan")

    def values(self, system: str, aspect: str, metric: str) -> list[float]:
        return [row[metric] for row in self.scores[system][aspect]]


def generic_summarizers(archive_texts: Sequence[str]) -> dict[str, Callable[[Budget], object]]:
    """The fixed generic methods, each fitted once over the archive; called with a budget."""
    tfidf = TfidfSummarizer().fit(archive_texts)

    def with_budget(method):
        def make(budget: Budget):
            method.budget = budget
            return method
        return make

    return {"lead": with_budget(LeadSummarizer()), "tfidf": with_budget(tfidf),
            "textrank": with_budget(TextRankSummarizer())}


def score_aspect_systems(
    examples: Sequence[Example],
    aspects: Sequence[Aspect],
    aspect_methods: dict[str, object],
    archive_texts: Sequence[str],
    include_generic: bool = True,
    include_oracle: bool = True,
) -> AspectSystems:
    """Every system on every (document, aspect) with a reference, at the reference's
    length in words (:class:`MatchedBudget`), ROUGE-1/2/L F1 with Porter stemming.
    A generic method summarises each document once per budget, whatever the aspect."""
    metric = RougeMetric(metrics=METRICS)
    generic = generic_summarizers(archive_texts) if include_generic else {}
    systems = [*aspect_methods, *generic, *(["oracle"] if include_oracle else [])]
    scores = {name: {a.name: [] for a in aspects} for name in systems}
    unanswered = {name: {a.name: 0 for a in aspects} for name in systems}
    for document, segmentation in examples:
        references = aspect_references(document, tuple(aspects))
        for aspect in aspects:
            reference = references.get(aspect.name)
            if not reference:
                continue
            budget = MatchedBudget().budget_for(reference)
            outputs = {}
            for name, method in aspect_methods.items():
                method.budget = budget
                outputs[name] = method.summarize(document, segmentation, aspect).sentences
            for name, make in generic.items():
                outputs[name] = make(budget).summarize(document, segmentation).sentences
            if include_oracle:
                labelled = Document(**{**document.__dict__, "reference_summary": reference})
                outputs["oracle"] = OracleSummarizer(budget).summarize(labelled, segmentation).sentences
            for name, sentences in outputs.items():
                if not sentences:
                    unanswered[name][aspect.name] += 1
                values = metric.score([s.text for s in sentences], [reference])
                scores[name][aspect.name].append({m: values[m].f1 for m in METRICS})
    return AspectSystems(scores, unanswered)


@dataclass
class TunedLearned:
    method: LearnedAspectSummarizer
    settings: dict[str, dict]
    validation_rouge1: dict[str, float]


def tune_learned(
    train: Sequence[Example],
    validation: Sequence[Example],
    aspects: tuple[Aspect, ...],
    archive_texts: Sequence[str],
    grid: dict[str, tuple] = TUNING_GRID,
    seed: int = 0,
    cue_words: int = LearnedAspectSummarizer.cue_words,
) -> TunedLearned:
    """Train the learned variant on ``train`` and choose, for each aspect on its own,
    the setting of ``grid`` (keys among :data:`TUNABLE`: ``c``, ``label_top``,
    ``bias``, ``min_probability``, ``relevance``) with the best mean ROUGE-1 F1 on ``validation``. The test split
    plays no part."""
    unknown = sorted(set(grid) - set(TUNABLE))
    if unknown:
        raise ValueError(f"cannot tune {', '.join(unknown)}; tunable settings: {', '.join(TUNABLE)}")
    metric = RougeMetric(metrics=("rouge1",))
    base = LearnedAspectSummarizer(aspects=aspects, seed=seed, cue_words=cue_words).fit_features(archive_texts)
    training = list(train)
    references = [aspect_references(document, aspects) for document, _ in validation]
    choice: dict[str, tuple[float, dict]] = {}
    # Settings that change the trained scorer (labels, regularisation) are looped
    # over outside; those that only change selection reuse each scorer's probabilities.
    selection_keys = [key for key in grid if key not in ("c", "label_top")]
    for label_top in grid.get("label_top", (base.label_top,)):
        labelling = base.untrained_copy()
        labelling.label_top = label_top
        rows = labelling.labelled_rows(training)
        for c in grid.get("c", (base.c,)):
            model = labelling.untrained_copy()
            model.c = c
            model.fit_rows(rows)
            for aspect in aspects:
                if aspect.name not in model.models_:
                    continue
                known = [
                    (document, segmentation, references[i][aspect.name],
                     model.sentence_evidence(document, segmentation, aspect))
                    for i, (document, segmentation) in enumerate(validation) if references[i].get(aspect.name)
                ]
                for values in itertools.product(*(grid[key] for key in selection_keys)):
                    settings = {"c": c, "label_top": label_top, **dict(zip(selection_keys, values))}
                    model.per_aspect = {aspect.name: settings}
                    total = 0.0
                    for document, segmentation, reference, evidence in known:
                        model.budget = MatchedBudget().budget_for(reference)
                        sentences = model.summarize(document, segmentation, aspect, evidence).sentences
                        total += metric.score([s.text for s in sentences], [reference])["rouge1"].f1
                    value = total / max(len(known), 1)
                    if aspect.name not in choice or value > choice[aspect.name][0]:
                        choice[aspect.name] = (value, settings)
    tuned = base.untrained_copy()
    tuned.per_aspect = {name: settings for name, (_, settings) in choice.items()}
    tuned.fit_rows(tuned.labelled_rows(training))
    return TunedLearned(tuned, tuned.per_aspect, {name: value for name, (value, _) in choice.items()})


def unlearned(archive_texts: Sequence[str]) -> AspectSummarizer:
    return AspectSummarizer().fit(archive_texts)
