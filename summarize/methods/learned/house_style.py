"""The house-style method: an extractive sentence scorer trained on the archive's own
reference summaries, so that the rest of the archive is summarised the way its
people already summarise."""

from __future__ import annotations

import copy
import time
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
from sklearn.ensemble import HistGradientBoostingClassifier
from sklearn.linear_model import LogisticRegression
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from threadpoolctl import threadpool_limits

from store.errors import UsageError
from store.records import Document, Segmentation, Summary
from summarize.evaluation.matched import MatchedBudget
from summarize.evaluation.oracle import OracleSummarizer
from summarize.methods.budget import Budget, count_words
from summarize.methods.contract import ParamsFromFields
from summarize.methods.extractive import (
    DEFAULT_BUDGET,
    CosineRows,
    build_summary,
    mmr_order,
    rank_by_score,
    selectable_sentences,
)
from summarize.methods.learned.sentence_features import FEATURE_NAMES, SentenceFeatures

CLASSIFIERS = ("gradient-boosting", "logistic")
# The types a stored house-style model is made of, beyond the NumPy, SciPy and
# scikit-learn types skops trusts by default: loading refuses any other.
TRUSTED_TYPES = (
    "sklearn.ensemble._hist_gradient_boosting.predictor.TreePredictor",
    "summarize.methods.budget.Budget",
    "summarize.methods.learned.house_style.HouseStyleSummarizer",
    "summarize.methods.learned.sentence_features.SentenceFeatures",
)
Example = tuple[Document, Segmentation]


@dataclass
class HouseStyleSummarizer(ParamsFromFields):
    """Supervised sentence scoring with selection under the budget.

    Training (``fit``): for every document with a reference summary, each candidate
    sentence (no headings, at least ``min_words`` words) gets a feature row
    (:class:`~summarize.methods.learned.sentence_features.SentenceFeatures`) and a label ``y = 1``
    when the greedy extractive oracle (:class:`~summarize.evaluation.oracle.OracleSummarizer`,
    maximising the mean of ROUGE-1 and ROUGE-2 F1) picks it at the reference's
    length in words, else ``y = 0``. A probabilistic classifier learns
    ``P(y = 1 | features)`` with balanced class weights (each class weighted by
    ``n / (2 · n_class)``), since only a few sentences per document are positive.

    Summarising: candidates are ranked by that probability (ties by position),
    optionally reordered by MMR (Carbonell & Goldstein 1998) over TF-IDF cosines
    with ``mmr_lambda``, and cut by :meth:`Budget.select`, the rule every method uses.

    Variants (``classifier``): ``"gradient-boosting"`` — scikit-learn's
    HistGradientBoostingClassifier (gradient boosting, Friedman 2001, on binned
    features as in LightGBM, Ke et al. 2017; early stopping on a seeded 10%
    validation split); ``"logistic"`` — standardised features and l2-regularised
    logistic regression. Trainable extractive summarisers with position, length and
    cue-phrase features go back to Kupiec, Pedersen & Chen (1995); oracle labels as
    training targets follow Nallapati et al. (2017) (both cited from memory). The
    design here — the feature set and the label rule — is our own choice.

    Training and scoring run on one thread: the models are small, and OpenMP threads
    competing with a batch's worker processes slow both down many times over.

    ``fit(examples, archive_texts)`` fits the IDF over ``archive_texts`` (all of the
    archive's texts, no references needed; the examples' texts when omitted), then
    trains. Everything is seeded with ``seed``.
    """

    budget: Budget = DEFAULT_BUDGET
    min_words: int = 4
    classifier: str = "gradient-boosting"
    mmr_lambda: float | None = None
    seed: int = 0
    name: str = field(default="house-style", init=False)

    def __setstate__(self, state: dict) -> None:
        # Models stored before the classifier setting had its own name called it "model".
        if "model" in state:
            state["classifier"] = state.pop("model")
        self.__dict__.update(state)

    # training -----------------------------------------------------------------------

    def fit(self, examples: Iterable[Example], archive_texts: Iterable[str] | None = None) -> HouseStyleSummarizer:
        examples = list(examples)
        if any(isinstance(example, str) for example in examples):
            raise TypeError("HouseStyleSummarizer.fit takes (document, segmentation) pairs with reference summaries, "
                            "not bare texts; a run uses a stored model through summarize.methods.learned.method_choice")
        examples = [(d, s) for d, s in examples if d.reference_summary]
        if not examples:
            raise ValueError("the house-style method needs documents with reference summaries to train on")
        self.fit_features(archive_texts if archive_texts is not None else [d.text for d, _ in examples])
        return self.fit_rows([self.labelled_rows(d, s) for d, s in examples])

    def fit_features(self, archive_texts: Iterable[str]) -> HouseStyleSummarizer:
        """First half of ``fit``: the archive-wide IDF behind the similarity features."""
        self.features_ = SentenceFeatures().fit(archive_texts)
        return self

    def labelled_rows(self, document: Document, segmentation: Segmentation) -> tuple[np.ndarray, np.ndarray]:
        """Feature rows and oracle labels of one document's candidate sentences."""
        if not document.reference_summary:
            raise ValueError(f"{document.record_key}: training needs a reference summary")
        features = self._features().transform(document, segmentation)
        words = [count_words(t) for t in segmentation.sentence_texts(document.text)]
        candidates = selectable_sentences(segmentation, words, self.min_words)
        oracle = OracleSummarizer(
            budget=MatchedBudget().budget_for(document.reference_summary), min_words=self.min_words
        ).summarize(document, segmentation)
        labels = np.zeros(len(words))
        labels[oracle.details["sentence_indices"]] = 1.0
        return features[candidates], labels[candidates]

    def fit_rows(self, rows: list[tuple[np.ndarray, np.ndarray]]) -> HouseStyleSummarizer:
        """Second half of ``fit``: train the classifier on ``labelled_rows`` output."""
        features = np.vstack([x for x, _ in rows])
        labels = np.concatenate([y for _, y in rows])
        if len(np.unique(labels)) < 2:
            raise ValueError("the oracle labels are all of one class: nothing to learn from these references")
        with threadpool_limits(limits=1):
            self.model_ = self._new_model().fit(features, labels)
        self.training_documents_ = len(rows)
        self.feature_names_ = FEATURE_NAMES
        return self

    def _new_model(self):
        if self.classifier == "gradient-boosting":
            return HistGradientBoostingClassifier(
                learning_rate=0.05, max_iter=200, class_weight="balanced", random_state=self.seed
            )
        if self.classifier == "logistic":
            return make_pipeline(
                StandardScaler(),
                LogisticRegression(C=1.0, class_weight="balanced", max_iter=2000, random_state=self.seed),
            )
        raise UsageError(f"classifier must be one of {', '.join(CLASSIFIERS)}, got {self.classifier!r}")

    def _features(self) -> SentenceFeatures:
        if not hasattr(self, "features_"):
            raise RuntimeError("HouseStyleSummarizer.fit must be called before it can score sentences")
        return self.features_

    def untrained_copy(self) -> HouseStyleSummarizer:
        """The same settings and fitted IDF, without a trained classifier (for folds)."""
        fresh = copy.copy(self)
        for attribute in ("model_", "training_documents_", "feature_names_"):
            fresh.__dict__.pop(attribute, None)
        return fresh

    # summarising --------------------------------------------------------------------

    def sentence_probabilities(self, document: Document, segmentation: Segmentation) -> tuple[np.ndarray, list[int]]:
        """P(oracle would pick it) for every sentence (0 for non-candidates), and the candidates."""
        if not hasattr(self, "model_"):
            raise RuntimeError("HouseStyleSummarizer.fit must be called before summarize")
        if tuple(self.feature_names_) != FEATURE_NAMES:
            raise RuntimeError("this model was trained on another feature set; train it again")
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(t) for t in texts]
        candidates = selectable_sentences(segmentation, words, self.min_words, texts)
        probabilities = np.zeros(len(texts))
        if candidates:
            rows = self._features().transform(document, segmentation)[candidates]
            with threadpool_limits(limits=1):
                probabilities[candidates] = self.model_.predict_proba(rows)[:, 1]
        return probabilities, candidates

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        started = time.perf_counter()
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(t) for t in texts]
        probabilities, candidates = self.sentence_probabilities(document, segmentation)
        ranked = rank_by_score(probabilities, candidates)
        if self.mmr_lambda is not None and ranked:
            vectors = self._features().vectorizer_.transform(texts)
            ranked = mmr_order(probabilities, CosineRows(vectors), ranked, self.mmr_lambda)
        chosen = self.budget.select(ranked, words)
        return build_summary(self.name, self.get_params(), document, segmentation, chosen, probabilities, started)
