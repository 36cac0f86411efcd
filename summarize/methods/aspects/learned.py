"""The learned aspect summarizer: one sentence scorer per aspect, trained on the
archive's aspect-labelled references."""

from __future__ import annotations

import copy
import re
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field

import numpy as np
from scipy.stats import rankdata
from sklearn.ensemble import HistGradientBoostingClassifier
from sklearn.feature_extraction.text import CountVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from threadpoolctl import threadpool_limits

from store.aspect_records import AspectSummary
from store.records import Document, Segmentation
from summarize.evaluation.matched import MatchedBudget
from summarize.evaluation.oracle import OracleSummarizer, sentence_objectives
from summarize.methods.archive_idf import NO_TERM, frequent_terms
from summarize.methods.aspects.definitions import Aspect
from summarize.methods.aspects.lexrank import QueryBiasedLexRank
from summarize.methods.aspects.references import aspect_references
from summarize.methods.aspects.selection import (
    ASPECT_BUDGET,
    AspectSummarizer,
    answer_candidates,
    aspect_params,
    aspect_summary,
    judged_texts,
    list_item_fields,
)
from summarize.methods.budget import Budget, count_words
from summarize.methods.extractive import CosineRows, mmr_order, rank_by_score, selectable_sentences
from summarize.methods.learned.house_style import TRUSTED_TYPES as HOUSE_STYLE_TRUSTED_TYPES
from summarize.methods.learned.sentence_features import FEATURE_NAMES, SentenceFeatures

OPENING_SENTENCES = 3
# The last name stands for the model's own cue words, one indicator column each.
ASPECT_FEATURE_NAMES = (*FEATURE_NAMES, "aspect_evidence", "aspect_evidence_rank", "aspect_phrase_hits",
                        "aspect_lexrank", "aspect_lexrank_rank",
                        *(f"opening_{k + 1}" for k in range(OPENING_SENTENCES)), "opening_inverse", "cue_words")
MODELS = ("logistic", "gradient-boosting")
Example = tuple[Document, Segmentation]
TUNABLE = ("c", "label_top", "bias", "min_probability", "relevance")
RELEVANCE_RULES = ("probability", "probability-evidence")


# The types a stored aspect-learned model is made of, beyond those a house-style model
# needs and those skops trusts by default: loading refuses any other.
TRUSTED_TYPES = (
    *HOUSE_STYLE_TRUSTED_TYPES,
    "summarize.methods.aspects.definitions.Aspect",
    "summarize.methods.aspects.learned.LearnedAspectSummarizer",
    "summarize.methods.aspects.learned.cue_analyzer",
    "summarize.methods.aspects.lexrank.stemmed_words",
    "summarize.methods.aspects.relevance.QueryRelevance",
    "summarize.methods.aspects.selection.AspectSummarizer",
)

@dataclass(frozen=True)
class SentenceEvidence:
    """What the learned scorer knows about one document's sentences for one aspect."""

    probabilities: np.ndarray
    evidence: np.ndarray
    vectors: object
    candidates: list[int]
    words: list[int]


def _rank_share(values: np.ndarray) -> np.ndarray:
    return rankdata(values, method="average") / len(values) if len(values) else values


def cue_analyzer(text: str) -> list[str]:
    """Lower-case words and word pairs, stop words kept: "however", "we propose" and
    "results show" are the cues (module level, so a fitted model can be stored)."""
    words = re.findall(r"[a-z]+(?:'[a-z]+)?", text.lower())
    return words + [f"{first} {second}" for first, second in zip(words, words[1:])]


def fit_cue_words(archive_texts: Iterable[str], count: int) -> CountVectorizer:
    """Indicators of the ``count`` words and word pairs found in the most documents
    of the archive (no labels involved, like the IDF)."""
    vocabulary = frequent_terms(cue_analyzer, archive_texts, count) or [NO_TERM]
    return CountVectorizer(analyzer=cue_analyzer, vocabulary=vocabulary, binary=True, dtype=np.float64)


def opening_columns(segmentation: Segmentation) -> np.ndarray:
    """Where a sentence stands among the document's non-heading sentences, as one
    indicator per opening sentence (first, second, third) and ``1 / (1 + order)``.
    The house-style position features are smooth in position; these let a linear
    scorer single out the opening sentences, where papers and reports state their
    problem."""
    body = [i for i, heading in enumerate(segmentation.sentence_is_heading) if not heading]
    order = np.full(len(segmentation.sentences), np.inf)
    order[body] = np.arange(len(body))
    indicators = [(order == k).astype(float) for k in range(OPENING_SENTENCES)]
    return np.column_stack([*indicators, 1.0 / (1.0 + order)])


@dataclass
class LearnedAspectSummarizer:
    """Supervised sentence scoring per aspect, ranked by query-biased LexRank.

    Features: the house-style sentence features (position, section cues, centrality,
    surface cues; :class:`~summarize.methods.learned.sentence_features.SentenceFeatures`),
    indicators of the opening sentences (:func:`opening_columns`), indicators of the
    archive's ``cue_words`` most widespread words and word pairs, stop words kept
    (:func:`fit_cue_words`; cue phrases as features of a trainable summarizer follow
    Kupiec, Pedersen & Chen 1995, and "however", "we propose", "results show" as signs of
    a sentence's rhetorical role Teufel & Moens 2002, both cited from memory), plus, per aspect,
    ``evidence(s)``, the guide-phrase count and the query-biased LexRank score
    (Otterbacher, Erkan & Radev 2005), raw and as within-document rank shares.

    Labels: ``y = 1`` for the sentences the greedy extractive oracle
    (:class:`~summarize.evaluation.oracle.OracleSummarizer`) picks against that
    aspect's reference, at the reference's length in words, and for the
    ``label_top`` sentences that score best on their own against it (the oracle's
    objective, mean ROUGE-1/2 F1, :func:`~summarize.evaluation.oracle.sentence_objectives`;
    only those scoring above 0). A short reference makes the oracle pick one or two
    sentences, so oracle labels alone leave the scorer very few positives, and a
    sentence that says nearly the same as the one picked is labelled negative; the
    added top sentences soften that. Scoring sentences by their own ROUGE against the
    reference follows Cao et al. (2015) (cited from memory); taking the union with the
    oracle and ``label_top`` are our own choice, ``label_top = 0`` is oracle labels
    alone. Documents without a reference for an aspect do not train it. One
    classifier per aspect learns
    ``P(y = 1 | features)`` with balanced class weights (``model``: l2 logistic
    regression with inverse strength ``c`` on standardised features, or scikit-learn's
    histogram gradient boosting). Oracle labels as targets follow Nallapati et al.
    (2017) (cited from memory); the feature set is our own choice.

    Summarising: candidates are the sentences with ``P ≥ min_probability`` (none →
    no summary, never a filler). They are ranked by query-biased LexRank whose
    relevance term is learned — ``rel(s | q) = P(s)`` (``relevance="probability"``) or
    ``P(s) · evidence(s)`` (``"probability-evidence"``); ``bias = 1`` ranks by
    ``rel`` alone — then MMR (Carbonell & Goldstein 1998) with ``mmr_lambda`` and the
    budget. Confidence = mean ``P`` of the chosen sentences.

    ``c``, ``label_top``, ``bias``, ``min_probability`` and ``relevance`` are defaults;
    ``per_aspect`` overrides them for single aspects (set by tuning on held-out
    documents, so each aspect gets its own). Aspects without a trained scorer fall
    back to the unlearned :class:`~summarize.methods.aspects.selection.AspectSummarizer`.
    """

    aspects: tuple[Aspect, ...] = ()
    budget: Budget = ASPECT_BUDGET
    min_words: int = 4
    model: str = "logistic"
    c: float = 0.002
    min_probability: float = 0.5
    bias: float = 0.85
    relevance: str = "probability-evidence"
    mmr_lambda: float = 0.7
    cue_words: int = 50
    label_top: int = 3
    per_aspect: dict = field(default_factory=dict)
    seed: int = 0
    name: str = field(default="aspect-learned", init=False)

    def get_params(self) -> dict:
        return {
            "budget": self.budget.as_dict(),
            "min_words": self.min_words,
            "model": self.model,
            "c": self.c,
            "min_probability": self.min_probability,
            "bias": self.bias,
            "relevance": self.relevance,
            "mmr_lambda": self.mmr_lambda,
            "cue_words": self.cue_words,
            "label_top": self.label_top,
            "per_aspect": self.per_aspect,
            "seed": self.seed,
            "aspects": [aspect.as_dict() for aspect in self.aspects],
        }

    def setting(self, aspect: str, key: str):
        return self.per_aspect.get(aspect, {}).get(key, getattr(self, key))

    # training -----------------------------------------------------------------------

    def fit_features(self, archive_texts: Iterable[str]) -> LearnedAspectSummarizer:
        """The archive-wide IDF and cue words behind the features (no references
        needed). ``archive_texts`` is read three times: an iterator is first listed,
        a re-iterable (such as the store's) is streamed each time."""
        texts = list(archive_texts) if isinstance(archive_texts, Iterator) else archive_texts
        self.features_ = SentenceFeatures().fit(texts)
        self.unlearned_ = AspectSummarizer(budget=self.budget, min_words=self.min_words,
                                           mmr_lambda=self.mmr_lambda).fit(texts)
        self.cues_ = fit_cue_words(texts, self.cue_words) if self.cue_words else None
        return self

    def fit(self, examples: Iterable[Example], archive_texts: Iterable[str] | None = None) -> LearnedAspectSummarizer:
        examples = list(examples)
        self.fit_features(archive_texts if archive_texts is not None else [d.text for d, _ in examples])
        return self.fit_rows(self.labelled_rows(examples))

    def labelled_rows(self, examples: list[Example]) -> dict[str, list[tuple[np.ndarray, np.ndarray]]]:
        """Aspect name → (feature rows, labels) of each document with that aspect's reference."""
        rows: dict[str, list[tuple[np.ndarray, np.ndarray]]] = {aspect.name: [] for aspect in self.aspects}
        for document, segmentation in examples:
            references = aspect_references(document, self.aspects)
            if not references:
                continue
            base = self.features_.transform(document, segmentation)
            texts = segmentation.sentence_texts(document.text)
            words = [count_words(t) for t in texts]
            candidates = selectable_sentences(segmentation, words, self.min_words)
            for aspect in self.aspects:
                reference = references.get(aspect.name)
                if not reference or not candidates:
                    continue
                labelled = copy.copy(document)
                labelled.reference_summary = reference
                oracle = OracleSummarizer(MatchedBudget().budget_for(reference), self.min_words).summarize(
                    labelled, segmentation
                )
                labels = np.zeros(len(words))
                labels[oracle.details["sentence_indices"]] = 1.0
                labels[self._best_alone(texts, candidates, reference, self.setting(aspect.name, "label_top"))] = 1.0
                features = np.hstack([base, self._aspect_columns(document, segmentation, aspect)[0]])
                rows[aspect.name].append((features[candidates], labels[candidates]))
        return rows

    @staticmethod
    def _best_alone(texts: list[str], candidates: list[int], reference: str, count: int) -> list[int]:
        """The ``count`` candidates whose own oracle objective is highest and above 0
        (ties: the earlier sentence)."""
        if count <= 0:
            return []
        values = sentence_objectives([texts[i] for i in candidates], reference)
        order = np.argsort(-values, kind="stable")[:count]
        return [candidates[k] for k in order if values[k] > 0]

    def fit_rows(self, rows: dict[str, list[tuple[np.ndarray, np.ndarray]]]) -> LearnedAspectSummarizer:
        self.models_ = {}
        self.training_documents_ = {}
        for name, pairs in rows.items():
            if not pairs:
                continue
            labels = np.concatenate([y for _, y in pairs])
            if len(np.unique(labels)) < 2:
                continue
            with threadpool_limits(limits=1):
                self.models_[name] = self._new_model(self.setting(name, "c")).fit(
                    np.vstack([x for x, _ in pairs]), labels
                )
            self.training_documents_[name] = len(pairs)
        if not self.models_:
            raise ValueError("no aspect has references to learn from (labelled sections or fields)")
        return self

    def _new_model(self, c: float):
        if self.model == "logistic":
            return make_pipeline(
                StandardScaler(),
                LogisticRegression(C=c, class_weight="balanced", max_iter=2000, random_state=self.seed),
            )
        if self.model == "gradient-boosting":
            return HistGradientBoostingClassifier(learning_rate=0.05, max_iter=200, class_weight="balanced",
                                                  random_state=self.seed)
        raise ValueError(f"model must be one of {', '.join(MODELS)}, got {self.model!r}")

    def _aspect_columns(self, document: Document, segmentation: Segmentation, aspect: Aspect):
        texts = segmentation.sentence_texts(document.text)
        evidence, hits = self.unlearned_.evidence(judged_texts(document.text, segmentation, texts)[0], aspect)
        vectors = self.unlearned_.relevance_.sentence_vectors(texts)
        lexrank = QueryBiasedLexRank(self.unlearned_.bias, self.unlearned_.top_k).scores(
            vectors, np.clip(evidence, 0, None)
        )
        lexrank = lexrank * max(len(texts), 1)
        columns = np.column_stack([evidence, _rank_share(evidence), hits, lexrank, _rank_share(lexrank),
                                   opening_columns(segmentation)])
        if getattr(self, "cues_", None) is not None:
            columns = np.hstack([columns, self.cues_.transform(texts).toarray()])
        return columns, evidence, vectors

    def untrained_copy(self) -> LearnedAspectSummarizer:
        """The same settings and fitted IDF, without trained scorers (for folds)."""
        fresh = copy.copy(self)
        for attribute in ("models_", "training_documents_"):
            fresh.__dict__.pop(attribute, None)
        return fresh

    # summarising --------------------------------------------------------------------

    def trained_aspects(self) -> list[str]:
        return sorted(getattr(self, "models_", {}))

    def sentence_evidence(self, document: Document, segmentation: Segmentation, aspect: Aspect) -> SentenceEvidence:
        """``P`` per sentence (0 for non-candidates), ``evidence(s)``, TF-IDF vectors."""
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(t) for t in texts]
        fields = list_item_fields(document.text, segmentation)
        candidates = answer_candidates(segmentation, texts, words, self.min_words, self.unlearned_.max_words, fields)
        columns, evidence, vectors = self._aspect_columns(document, segmentation, aspect)
        probabilities = np.zeros(len(texts))
        if candidates:
            rows = np.hstack([self.features_.transform(document, segmentation), columns])[candidates]
            with threadpool_limits(limits=1):
                probabilities[candidates] = self.models_[aspect.name].predict_proba(rows)[:, 1]
        return SentenceEvidence(probabilities, evidence, vectors, candidates, words)

    def summarize(
        self, document: Document, segmentation: Segmentation, aspect: Aspect, known: SentenceEvidence | None = None
    ) -> AspectSummary:
        """``known``: this document's :meth:`sentence_evidence` for the aspect, when
        already computed (tuning tries many settings on the same scores)."""
        if not hasattr(self, "features_"):
            raise RuntimeError("LearnedAspectSummarizer.fit must be called before summarize")
        if aspect.name not in getattr(self, "models_", {}):
            self.unlearned_.budget = self.budget
            fallback = self.unlearned_.summarize(document, segmentation, aspect)
            fallback.details["fallback"] = f"aspect-lexrank: no trained scorer for {aspect.name!r}"
            fallback.method = self.name
            fallback.params = aspect_params(self.get_params(), aspect)
            return fallback
        known = known or self.sentence_evidence(document, segmentation, aspect)
        probabilities = known.probabilities
        answering = [i for i in known.candidates if probabilities[i] >= self.setting(aspect.name, "min_probability")]
        best = float(probabilities.max()) if len(probabilities) else 0.0
        if not answering:
            return aspect_summary(self.name, self.get_params(), aspect, document, segmentation, [], probabilities, 0.0,
                                  {"best_probability": round(best, 4)})
        relevance = probabilities
        if self.setting(aspect.name, "relevance") == "probability-evidence":
            relevance = probabilities * np.clip(known.evidence, 0, None)
        bias = self.setting(aspect.name, "bias")
        top_k = self.unlearned_.top_k
        scores = QueryBiasedLexRank(bias, top_k).scores(known.vectors, relevance) if bias < 1 else relevance
        ranked = mmr_order(scores, CosineRows(known.vectors), rank_by_score(scores, answering), self.mmr_lambda)
        chosen = self.budget.select(ranked, known.words)
        confidence = float(np.mean(probabilities[chosen]))
        return aspect_summary(self.name, self.get_params(), aspect, document, segmentation, chosen, probabilities,
                              confidence, {"best_probability": round(best, 4)})
