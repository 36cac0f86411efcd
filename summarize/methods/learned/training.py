"""Training the house-style method on a store's referenced documents, with an honest
estimate of how well it does on documents it has not seen.

    train_in_store(store, run_id, HouseStyleSummarizer())

1. Every active document with a reference gets a held-out house-style summary (k-fold
   cross-validation over documents, at the reference's length in words) and, at the
   same matched budget, lead, TF-IDF, TextRank and oracle summaries; all are scored
   with ROUGE, so ``summarize compare`` shows them side by side.
2. The method is then trained on all referenced documents and stored in
   ``learned_models`` with its held-out scores.

Below :data:`MIN_REFERENCED_DOCUMENTS` referenced documents nothing is trained: fold
estimates from a handful of documents swing too much to trust (a threshold of our
own choosing; common practice has no fixed number).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import asdict, dataclass, field

import numpy as np

from store.errors import SummarizerError
from store.learned_models import SKOPS
from store.records import param_hash
from store.runs import recorded_run
from store.store import Store
from summarize.evaluation.matched import MatchedBudget, add_matched_summaries
from summarize.evaluation.rouge import RougeMetric
from summarize.evaluation.scoring import score_unscored
from summarize.methods.learned.held_out import CrossValidation
from summarize.methods.learned.house_style import HouseStyleSummarizer
from summarize.methods.learned.sentence_features import FEATURE_NAMES
from summarize.methods.registry import MATCHED, MethodSettings, build_method

MIN_REFERENCED_DOCUMENTS = 20
MIN_TEST_DOCUMENTS_PER_FOLD = 4
FIXED_METHODS = ("lead", "tfidf", "textrank")
# What "best" means when methods are ranked: the mean over documents of these F1s,
# then averaged over the three measures.
SELECTION_METRICS = ("rouge1", "rouge2", "rougeL")
SELECTION_RULE = "mean of ROUGE-1, ROUGE-2 and ROUGE-L F1 (Porter stemming), held out, at each reference's length"


class TooFewReferences(SummarizerError, ValueError):
    """Not enough referenced documents to train and cross-validate a model."""


def usable_folds(referenced: int, folds: int) -> int | None:
    """The number of folds to use with ``referenced`` documents: ``folds``, lowered
    so every test part keeps at least :data:`MIN_TEST_DOCUMENTS_PER_FOLD` documents;
    None below :data:`MIN_REFERENCED_DOCUMENTS`."""
    if referenced < MIN_REFERENCED_DOCUMENTS:
        return None
    return max(2, min(folds, referenced // MIN_TEST_DOCUMENTS_PER_FOLD))


def selection_score(means: dict[str, float]) -> float:
    return float(np.mean([means[m] for m in SELECTION_METRICS]))


@dataclass
class TrainingReport:
    model_id: int
    documents: int
    folds: int
    held_out_added: int = 0
    matched_added: int = 0
    scored: int = 0
    reused_model: bool = False
    held_out: dict[str, dict[str, float]] = field(default_factory=dict)
    seconds: float = 0.0

    def as_dict(self) -> dict:
        return asdict(self)


def matched_params(name: str, reference: str, budget: MatchedBudget = MatchedBudget()) -> dict:
    """Params of a fixed method's summary at the matched budget, as the evaluation
    code (:func:`~summarize.evaluation.matched.add_matched_summaries`) stores them."""
    return budget.tagged(build_method(name, MethodSettings(budget=budget.budget_for(reference)), MATCHED).get_params())


def held_out_means(
    store: Store, document_ids: list[int], expected: dict[str, Callable[[str], dict]]
) -> dict[str, dict[str, float]]:
    """Mean F1 per ROUGE measure of each method over the documents every method has a
    scored summary for. ``expected[name](reference)`` gives the params the method's
    summary of a document with that reference carries (so other settings stored in
    the same file are left out)."""
    per_method: dict[str, dict[int, dict[str, float]]] = {name: {} for name in expected}
    references = store.references.of_ids(document_ids)
    for document_id in document_ids:
        reference = references[document_id].text
        for name, params_for in expected.items():
            f1 = store.evaluation.f1_by_metric(document_id, name, param_hash(name, params_for(reference)))
            if f1:
                per_method[name][document_id] = f1
    shared = set(document_ids)
    for scores in per_method.values():
        shared &= set(scores)
    if not shared:
        return {}
    return {
        name: {
            **{m: float(np.mean([scores[d][m] for d in shared])) for m in SELECTION_METRICS},
            "documents": len(shared),
        }
        for name, scores in per_method.items()
    }


def score_fixed_methods(store: Store, run_id: int, progress: Callable[[str], None] | None = None) -> dict:
    """Matched-budget lead, TF-IDF and TextRank summaries of every referenced document,
    scored; returns their held-out means (these methods never see references)."""
    add_matched_summaries(store, run_id, MatchedBudget(), FIXED_METHODS, progress)
    score_unscored(store, RougeMetric(), progress)
    expected = {name: (lambda reference, name=name: matched_params(name, reference)) for name in FIXED_METHODS}
    return held_out_means(store, store.references.referenced_document_ids(), expected)


def train_in_store(
    store: Store,
    run_id: int,
    prototype: HouseStyleSummarizer | None = None,
    folds: int = 5,
    progress: Callable[[str], None] | None = None,
) -> TrainingReport:
    """Cross-validate, score, train on every referenced document and store the model.

    Held-out summaries already stored are kept; when every one is there and the
    latest stored model was trained on exactly these documents with these settings,
    that model is reused rather than trained again. Raises :class:`TooFewReferences`
    below the threshold.
    """
    started = time.perf_counter()
    prototype = HouseStyleSummarizer() if prototype is None else prototype
    ids = store.references.referenced_document_ids()
    fold_count = usable_folds(len(ids), folds)
    if fold_count is None:
        raise TooFewReferences(
            f"{len(ids)} documents have a reference summary; the house-style method needs at least "
            f"{MIN_REFERENCED_DOCUMENTS} to train and cross-validate (`summarize choose` picks the best fixed "
            "method instead)"
        )
    cv = CrossValidation(folds=fold_count, seed=prototype.seed)
    examples = [store.documents.load(document_id) for document_id in ids]
    missing = {
        k
        for k, (document_id, (document, _)) in enumerate(zip(ids, examples))
        if not store.has_summary(
            document_id, prototype.name, param_hash(prototype.name, cv.summary_params(prototype, document.reference_summary))
        )
    }
    latest = store.models.latest(prototype.name)
    # A model in an earlier, unsafe format is replaced, never loaded.
    current = (
        latest is not None
        and latest.format == SKOPS
        and latest.training_documents == sorted(ids)
        and latest.features == list(FEATURE_NAMES)
        and latest.params == prototype.get_params()
    )
    report = TrainingReport(model_id=latest.id if current else 0, documents=len(ids), folds=fold_count)
    if missing or not current:
        fitted = prototype.untrained_copy().fit_features(store.documents.active_texts())
        if progress:
            progress(f"house-style: labelling sentences of {len(ids)} referenced documents with the oracle")
        rows = [fitted.labelled_rows(document, segmentation) for document, segmentation in examples]
        for k, summary in cv.held_out_summaries(fitted, examples, rows, wanted=missing, progress=progress).items():
            store.add_summary(ids[k], run_id, summary)
        report.held_out_added = len(missing)
    report.matched_added = add_matched_summaries(store, run_id, MatchedBudget(), (*FIXED_METHODS, "oracle"), progress)
    report.scored = score_unscored(store, RougeMetric(), progress)
    expected = {name: (lambda reference, name=name: matched_params(name, reference)) for name in FIXED_METHODS}
    expected[prototype.name] = lambda reference: cv.summary_params(prototype, reference)
    expected["oracle"] = lambda reference: matched_params("oracle", reference)
    report.held_out = held_out_means(store, ids, expected)
    if current:
        report.reused_model = True
    else:
        final = fitted.untrained_copy().fit_rows(rows)
        report.model_id = store.models.save(
            final,
            run_id,
            ids,
            FEATURE_NAMES,
            {
                "evaluation": cv.label(),
                "seed": cv.seed,
                "documents": len(ids),
                "budget": "matched: each reference's length in words",
                "held_out_means": report.held_out,
                "selection_rule": SELECTION_RULE,
            },
        )
    report.seconds = time.perf_counter() - started
    return report


def train(
    db_path: str,
    folds: int = 5,
    classifier: str = "gradient-boosting",
    seed: int = 0,
    progress: Callable[[str], None] | None = None,
    lock_wait_seconds: float = 0.0,
) -> tuple[int, TrainingReport]:
    """:func:`train_in_store` as a run of its own (command ``train``), under the
    store's writer lock; returns the run id and the report."""
    prototype = HouseStyleSummarizer(classifier=classifier, seed=seed)
    config = {"method": prototype.name, "params": prototype.get_params(), "folds": folds}
    with recorded_run(db_path, "train", config, lock_wait_seconds, progress) as run:
        report = train_in_store(run.store, run.run_id, prototype, folds, progress)
        run.counts = report.as_dict()
    return run.run_id, report
