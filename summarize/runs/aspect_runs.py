"""Aspect summaries of stored documents, and training the learned aspect method.

Python API (the ``summarize aspects`` commands call these):

    summarize_aspects(db_path, documents=None, aspects=REPORT_ASPECTS, method="aspect-lexrank")
    train_aspects(db_path, aspects=REPORT_ASPECTS, folds=5)
    load_aspects(job_file)
"""

from __future__ import annotations

import copy
import time
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from sklearn.model_selection import KFold

from store import Store
from store.aspect_records import StoredAnswer
from store.errors import SummarizerError, UsageError
from store.queries import DocumentNotFound
from store.records import param_hash
from store.runs import recorded_run
from summarize.evaluation.matched import MatchedBudget
from summarize.evaluation.rouge import RougeMetric
from summarize.methods.aspects.definitions import REPORT_ASPECTS, Aspect, aspects_from_mapping
from summarize.methods.aspects.learned import ASPECT_FEATURE_NAMES, LearnedAspectSummarizer
from summarize.methods.aspects.learned import TRUSTED_TYPES as LEARNED_ASPECT_TYPES
from summarize.methods.aspects.references import aspect_references
from summarize.methods.aspects.selection import ASPECT_BUDGET, AspectSummarizer, aspect_params
from summarize.methods.budget import Budget
from summarize.runs.jobfile import load_job

ASPECT_METHODS = ("aspect-lexrank", "aspect-learned")
MIN_TRAINING_DOCUMENTS = 10


class AspectModelMissing(SummarizerError):
    """The learned aspect method was asked for, but the store holds no trained one."""


class TooFewAspectReferences(SummarizerError):
    """Not enough documents with aspect-labelled references to train and cross-validate."""


def load_aspects(job_file: str) -> tuple[Aspect, ...]:
    """The ``[aspects]`` table of a job file (the default report aspects when it has none)."""
    try:
        job = load_job(job_file)
    except ValueError as error:
        raise UsageError(str(error)) from None
    return aspects_from_mapping(job["aspects"]) if "aspects" in job else REPORT_ASPECTS


@dataclass
class AspectOutcome:
    run_id: int
    method: str
    added: int
    kept: int
    seconds: float
    rows: list[StoredAnswer] = field(default_factory=list)

    def as_dict(self) -> dict:
        return {"run_id": self.run_id, "method": self.method, "added": self.added, "kept": self.kept,
                "seconds": round(self.seconds, 3), "aspect_summaries": [row.as_dict() for row in self.rows]}


def _document_ids(store: Store, references: list[str] | None) -> list[int]:
    if not references:
        return sorted(version.id for version in store.documents.active())
    ids = []
    for reference in references:
        try:
            ids.append(store.queries.resolve(reference)["id"])
        except DocumentNotFound as error:
            raise UsageError(str(error)) from None
    return ids


def _summarizer(store: Store, method: str, budget: Budget):
    if method == "aspect-lexrank":
        return AspectSummarizer(budget=budget).fit(store.documents.active_texts())
    if method == "aspect-learned":
        model = store.models.latest("aspect-learned")
        if model is None:
            raise AspectModelMissing(
                f"{store.path}: no trained aspect-learned model in the store (train one with `summarize train-aspects`)"
            )
        if model.features != list(ASPECT_FEATURE_NAMES):
            raise AspectModelMissing(
                f"{store.path}: the stored aspect-learned model was trained on another feature set; "
                "train it again with `summarize train-aspects`"
            )
        summarizer = copy.copy(model.load(LEARNED_ASPECT_TYPES))
        summarizer.budget = budget
        return summarizer
    raise UsageError(f"aspect method must be one of {', '.join(ASPECT_METHODS)}, got {method!r}")


def summarize_aspects(
    db_path: str,
    documents: list[str] | None = None,
    aspects: tuple[Aspect, ...] = REPORT_ASPECTS,
    method: str = "aspect-lexrank",
    budget: Budget = ASPECT_BUDGET,
    lock_wait_seconds: float = 0.0,
    progress: Callable[[str], None] | None = None,
) -> AspectOutcome:
    """Answer each aspect for each document (all active documents when ``documents``
    is None; else ids, record keys or paths), store what is missing and return every
    requested aspect summary as a row. A rerun adds nothing."""
    started = time.perf_counter()
    config = {"method": method, "budget": budget.as_dict(), "aspects": [a.as_dict() for a in aspects]}
    with recorded_run(db_path, "aspects", config, lock_wait_seconds, progress) as run:
        store = run.store
        document_ids = _document_ids(store, documents)
        summarizer = _summarizer(store, method, budget)
        added = kept = 0
        hashes = []
        for aspect in aspects:
            p_hash = param_hash(f"{method}:{aspect.name}", aspect_params(summarizer.get_params(), aspect))
            hashes.append(p_hash)
            done = store.aspects.done(aspect.name, method, p_hash)
            for document_id in document_ids:
                if document_id in done:
                    kept += 1
                    continue
                document, segmentation = store.documents.load(document_id)
                store.aspects.add(document_id, run.run_id, summarizer.summarize(document, segmentation, aspect))
                added += 1
            if progress:
                progress(f"aspect {aspect.name}: {len(document_ids)} documents")
        run.counts = {"added": added, "kept": kept}
        outcome = AspectOutcome(run.run_id, method, added, kept, time.perf_counter() - started)
        rows = store.aspects.rows(document_ids, [a.name for a in aspects], method, hashes)
    order = {aspect.name: index for index, aspect in enumerate(aspects)}
    outcome.rows = sorted(rows, key=lambda row: (row.record_key, order[row.aspect]))
    return outcome


@dataclass
class AspectTraining:
    run_id: int
    model_id: int
    documents: dict[str, int]
    folds: int
    held_out: dict[str, dict[str, float]]
    seconds: float

    def as_dict(self) -> dict:
        return {"run_id": self.run_id, "model_id": self.model_id, "documents": self.documents, "folds": self.folds,
                "held_out_rouge1_f1": self.held_out, "seconds": round(self.seconds, 3)}


def cross_validated_rouge(
    examples: list, aspects: tuple[Aspect, ...], learned: LearnedAspectSummarizer, folds: int, seed: int
) -> dict[str, dict[str, float]]:
    """Held-out mean ROUGE-1 F1 per aspect of the learned and the unlearned method,
    each document summarized at its aspect reference's length by a model trained on
    the other folds (k-fold over documents)."""
    metric = RougeMetric(metrics=("rouge1",))
    references = [aspect_references(document, aspects) for document, _ in examples]
    scores: dict[str, dict[str, list[float]]] = {a.name: {"aspect-learned": [], "aspect-lexrank": []} for a in aspects}
    splitter = KFold(n_splits=folds, shuffle=True, random_state=seed)
    for train, test in splitter.split(np.arange(len(examples))):
        fold_model = learned.untrained_copy().fit_rows(learned.labelled_rows([examples[i] for i in train]))
        for i in test:
            document, segmentation = examples[i]
            for aspect in aspects:
                reference = references[i].get(aspect.name)
                if not reference:
                    continue
                budget = MatchedBudget().budget_for(reference)
                for name, method in (("aspect-learned", fold_model), ("aspect-lexrank", learned.unlearned_)):
                    method.budget = budget
                    summary = method.summarize(document, segmentation, aspect)
                    value = metric.score([s.text for s in summary.sentences], [reference])["rouge1"].f1
                    scores[aspect.name][name].append(value)
    return {aspect: {name: float(np.mean(v)) if v else float("nan") for name, v in by_method.items()}
            for aspect, by_method in scores.items()}


def train_aspects(
    db_path: str,
    aspects: tuple[Aspect, ...] = REPORT_ASPECTS,
    folds: int = 5,
    seed: int = 0,
    lock_wait_seconds: float = 0.0,
    progress: Callable[[str], None] | None = None,
) -> AspectTraining:
    """Train the learned aspect method on the documents with aspect-labelled references
    (labelled sections of the reference summary, or JSON fields): first a k-fold
    held-out comparison with the unlearned method, then a model on all of them, kept
    in the store for ``summarize_aspects(method="aspect-learned")``."""
    started = time.perf_counter()
    config = {"folds": folds, "seed": seed, "aspects": [a.as_dict() for a in aspects]}
    with recorded_run(db_path, "train-aspects", config, lock_wait_seconds, progress) as run:
        store = run.store
        examples, example_ids = [], []
        for document_id in sorted(version.id for version in store.documents.active()):
            document, segmentation = store.documents.load(document_id)
            if aspect_references(document, aspects):
                examples.append((document, segmentation))
                example_ids.append(document_id)
        needed = max(MIN_TRAINING_DOCUMENTS, 2 * folds)
        if len(examples) < needed:
            raise TooFewAspectReferences(
                f"{db_path}: {len(examples)} documents have aspect-labelled references; training needs at least "
                f"{needed} (sections such as 'Cause:' in the reference summary, or JSON fields named after aspects)"
            )
        learned = LearnedAspectSummarizer(aspects=aspects, seed=seed).fit_features(store.documents.active_texts())
        if progress:
            progress(f"cross-validating on {len(examples)} documents ({folds} folds)")
        held_out = cross_validated_rouge(examples, aspects, learned, folds, seed)
        learned.fit_rows(learned.labelled_rows(examples))
        learned.budget = ASPECT_BUDGET
        model_id = store.models.save(learned, run.run_id, example_ids, list(ASPECT_FEATURE_NAMES),
                                     {"held_out_rouge1_f1": held_out, "folds": folds})
        run.counts = {"documents": len(examples), "model_id": model_id}
        return AspectTraining(run.run_id, model_id, dict(learned.training_documents_), folds, held_out,
                              time.perf_counter() - started)
