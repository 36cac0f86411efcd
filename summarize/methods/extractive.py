"""Extractive methods: each picks whole source sentences and keeps their spans.

All methods share one shape (as scikit-learn estimators do): the constructor only
stores parameters; ``fit`` learns archive-wide statistics where a method needs them;
``summarize(document, segmentation)`` returns a :class:`Summary` whose sentences are in
document order, each with its source span and the score that ranked it. Heading lines,
marked asides (an e-mail's greeting or signature) and fragments shorter than
``min_words`` are never selected, nor a sentence that reads the same as one before it. Ties are broken by
document position, so every method is deterministic.
"""

from __future__ import annotations

import re
import time
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
from scipy import sparse
from sklearn.feature_extraction.text import CountVectorizer, TfidfVectorizer

from store.records import Document, Segmentation, SourceLink, Summary, SummarySentence
from summarize.methods.archive_idf import fit_archive_idf
from summarize.methods.budget import Budget, count_words
from summarize.methods.contract import ParamsFromFields
from summarize.methods.graph import pagerank, top_k_symmetric

DEFAULT_BUDGET = Budget(sentences=3)
_NON_WORD = re.compile(r"[^\w]+")


def selectable_sentences(
    segmentation: Segmentation, words: list[int], min_words: int, texts: list[str] | None = None
) -> list[int]:
    """Indices of sentences a method may pick: not headings, not asides (an e-mail's
    greeting, signature, quoted message), at least ``min_words`` long, and, given
    the sentence ``texts``, only the first of sentences that read the same
    (:func:`sentence_key`), so no summary holds one sentence twice."""
    allowed = [i for i in range(len(words)) if not segmentation.is_aside(i)]
    chosen = [i for i in allowed if not segmentation.sentence_is_heading[i] and words[i] >= min_words]
    # A document made only of short lines still gets a summary.
    chosen = chosen or [i for i in allowed if words[i] > 0] or [i for i in range(len(words)) if words[i] > 0]
    if texts is None:
        return chosen
    seen: set[str] = set()
    distinct = []
    for index in chosen:
        key = sentence_key(texts[index])
        if key not in seen:
            seen.add(key)
            distinct.append(index)
    return distinct


def sentence_key(sentence: str) -> str:
    """A sentence with case, spacing and punctuation normalised away: two sentences
    with the same key read the same."""
    return " ".join(_NON_WORD.sub(" ", sentence.casefold()).split())


def rank_by_score(scores: np.ndarray, candidates: list[int]) -> list[int]:
    """Candidates best first; ties go to the earlier sentence."""
    return sorted(candidates, key=lambda i: (-scores[i], i))


def extracted_sentences(
    document: Document, segmentation: Segmentation, chosen: list[int], scores: np.ndarray
) -> list[SummarySentence]:
    """The ``chosen`` sentences in the order given, each quoting its source span exactly."""
    return [
        SummarySentence(
            text=segmentation.sentences[i].slice(document.text),
            score=float(scores[i]),
            sources=(SourceLink(segmentation.sentences[i], 1.0),),
        )
        for i in chosen
    ]

def build_summary(
    method: str,
    params: dict,
    document: Document,
    segmentation: Segmentation,
    chosen: list[int],
    scores: np.ndarray,
    started: float,
) -> Summary:
    """A Summary of the ``chosen`` sentences (document order), each with its span and score."""
    return Summary(
        method=method,
        params=params,
        sentences=extracted_sentences(document, segmentation, chosen, scores),
        seconds=time.perf_counter() - started,
        details={"sentence_indices": chosen, "document_sentences": len(segmentation.sentences)},
    )


class CosineRows:
    """Rows of the cosine-similarity matrix of l2-normalised sentence ``vectors``,
    each computed when asked for (``rows[i]`` is ``vectors[i] · vectorsᵀ``, the same
    numbers as row ``i`` of the full product), so MMR never holds all n² pairs."""

    def __init__(self, vectors: sparse.csr_matrix):
        self.vectors = sparse.csr_matrix(vectors)

    def __getitem__(self, index: int) -> sparse.csr_matrix:
        return self.vectors[index] @ self.vectors.T


def mmr_order(
    relevance: np.ndarray, similarity: np.ndarray, candidates: list[int], lambda_: float
) -> list[int]:
    """Maximal Marginal Relevance ordering (Carbonell & Goldstein 1998).

    Repeatedly takes ``argmax_i  λ·rel(i) − (1−λ)·max_{j∈S} sim(i, j)`` over the
    sentences not yet chosen, where ``S`` holds those already chosen. ``relevance`` is
    rescaled to [0, 1] first so that λ means the same for every scorer; λ = 1 is plain
    relevance order, smaller λ penalises redundancy more. ``similarity`` is a dense or
    sparse cosine matrix over all sentences, or :class:`CosineRows`.
    """
    if not candidates:
        return []
    rel = relevance[candidates].astype(float)
    span = rel.max() - rel.min()
    rel = (rel - rel.min()) / span if span > 0 else np.ones_like(rel)
    chosen = np.zeros(len(candidates), dtype=bool)
    redundancy = np.zeros(len(candidates))
    order: list[int] = []
    # One similarity row per pick, never the candidates × candidates block, so
    # memory stays linear in the document's length.
    for _ in range(len(candidates)):
        gains = np.where(chosen, -np.inf, lambda_ * rel - (1 - lambda_) * redundancy)
        best = int(np.argmax(gains))
        chosen[best] = True
        order.append(candidates[best])
        row = similarity[candidates[best]]
        row = row.toarray() if sparse.issparse(row) else np.asarray(row)
        redundancy = np.maximum(redundancy, row.ravel()[candidates])
    return order


@dataclass
class LeadSummarizer(ParamsFromFields):
    """Lead baseline: the first sentences of the document, up to the budget.

    Common practice (the standard news-summarization baseline); no published formula.
    Headings and fragments shorter than ``min_words`` are skipped.
    """

    budget: Budget = DEFAULT_BUDGET
    min_words: int = 4
    name: str = field(default="lead", init=False)

    def fit(self, texts: Iterable[str]) -> LeadSummarizer:
        return self

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        started = time.perf_counter()
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(s) for s in texts]
        candidates = selectable_sentences(segmentation, words, self.min_words, texts)
        chosen = self.budget.select(candidates, words)
        # Score = 1 / (1 + rank): the position the baseline ranks by.
        scores = np.zeros(len(words))
        for rank, index in enumerate(candidates):
            scores[index] = 1.0 / (1 + rank)
        return build_summary(self.name, self.get_params(), document, segmentation, chosen, scores, started)


@dataclass
class TfidfSummarizer(ParamsFromFields):
    """Sentences ranked by TF-IDF similarity to their whole document.

    Weights follow Salton & Buckley (1988) as scikit-learn's ``TfidfVectorizer``
    computes them: ``w(t, s) = tf(t, s) · idf(t)`` with the smooth inverse document
    frequency ``idf(t) = ln((1 + n) / (1 + df(t))) + 1`` over the ``n`` documents the
    method was fitted on, then each vector l2-normalised. IDF is fitted once over the
    whole archive (``fit``), not per document, so a term common to every report of the
    archive carries little weight. A sentence's score is the cosine between its vector
    and the vector of its document (a centroid score; Radev et al. 2004 use the same
    idea). With ``mmr_lambda`` set, MMR (Carbonell & Goldstein 1998) reorders the
    ranking to avoid redundant sentences.
    """

    budget: Budget = DEFAULT_BUDGET
    min_words: int = 4
    mmr_lambda: float | None = None
    stop_words: str | None = "english"
    sublinear_tf: bool = False
    name: str = field(default="tfidf", init=False)

    def fit(self, texts: Iterable[str]) -> TfidfSummarizer:
        """Fit IDF over the archive: one entry of ``texts`` per document (streamed once)."""
        self.vectorizer_ = fit_archive_idf(
            TfidfVectorizer(stop_words=self.stop_words, sublinear_tf=self.sublinear_tf, smooth_idf=True, norm="l2"),
            texts,
        )
        return self

    def sentence_scores(self, document: Document, segmentation: Segmentation) -> tuple[np.ndarray, sparse.csr_matrix]:
        """Centroid cosine per sentence, and the sentence vectors (rows l2-normalised)."""
        if not hasattr(self, "vectorizer_"):
            raise RuntimeError("TfidfSummarizer.fit must be called (on the archive) before summarize")
        # One transform call for the sentences and the document (rows are independent).
        rows = self.vectorizer_.transform([*segmentation.sentence_texts(document.text), document.text]).tocsr()
        vectors, centroid = rows[:-1], rows[-1]
        return np.asarray((vectors @ centroid.T).toarray()).ravel(), vectors

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        started = time.perf_counter()
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(s) for s in texts]
        candidates = selectable_sentences(segmentation, words, self.min_words, texts)
        scores, vectors = self.sentence_scores(document, segmentation)
        if self.mmr_lambda is None:
            ranked = rank_by_score(scores, candidates)
        else:
            ranked = mmr_order(scores, CosineRows(vectors), rank_by_score(scores, candidates), self.mmr_lambda)
        chosen = self.budget.select(ranked, words)
        return build_summary(self.name, self.get_params(), document, segmentation, chosen, scores, started)


@dataclass
class TextRankSummarizer(ParamsFromFields):
    """TextRank (Mihalcea & Tarau 2004): PageRank over a sentence-similarity graph.

    Edge weight between sentences ``i`` and ``j`` (``similarity="overlap"``, the
    original): ``|W_i ∩ W_j| / (ln|W_i| + ln|W_j|)`` with ``W`` the set of content
    words (stop words removed) and ``|W|`` the sentence's word count. Variant
    ``similarity="cosine"``: TF-IDF cosine within the document, as LexRank (Erkan &
    Radev 2004) uses. Each sentence keeps only its ``top_k`` strongest edges (then the
    graph is symmetrised), so memory grows with ``n·k``, not ``n²``. Scores are the
    weighted PageRank (Brin & Page 1998) with damping ``d = 0.85``:
    ``PR(i) = (1 − d)/n + d · Σ_j PR(j) · w_ji / Σ_k w_jk``, nodes without edges
    spreading their rank uniformly, iterated until the change falls below
    ``tolerance`` or for ``max_iterations`` rounds (both are parameters: a looser
    tolerance can reorder close scores). With ``mmr_lambda`` set, MMR reorders the ranking.
    """

    budget: Budget = DEFAULT_BUDGET
    min_words: int = 4
    damping: float = 0.85
    similarity: str = "overlap"
    top_k: int | None = 50
    mmr_lambda: float | None = None
    tolerance: float = 1e-10
    max_iterations: int = 200
    name: str = field(default="textrank", init=False)

    def fit(self, texts: Iterable[str]) -> TextRankSummarizer:
        return self

    def similarity_graph(self, sentences: list[str]) -> sparse.csr_matrix:
        """Symmetric sparse weight matrix with an empty diagonal."""
        n = len(sentences)
        if self.similarity not in ("overlap", "cosine"):
            raise ValueError(f"similarity must be 'overlap' or 'cosine', got {self.similarity!r}")
        try:
            if self.similarity == "overlap":
                counts = CountVectorizer(stop_words="english", binary=True).fit_transform(sentences)
                lengths = np.array([max(count_words(s), 1) for s in sentences], dtype=float)
                logs = np.log(lengths)
                features = counts.astype(float).tocsr()
            else:
                features = TfidfVectorizer(stop_words="english").fit_transform(sentences).tocsr()
        except ValueError:  # no content words at all
            return sparse.csr_matrix((n, n))

        def block_weights(rows: slice) -> np.ndarray:
            block = (features[rows] @ features.T).toarray()
            if self.similarity == "overlap":
                denominator = logs[rows, None] + logs[None, :]
                with np.errstate(divide="ignore", invalid="ignore"):
                    block = np.where(denominator > 0, block / denominator, 0.0)
            return block

        return top_k_symmetric(block_weights, n, self.top_k)

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        started = time.perf_counter()
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(s) for s in texts]
        candidates = selectable_sentences(segmentation, words, self.min_words, texts)
        graph = self.similarity_graph(texts)
        scores = pagerank(graph, self.damping, self.tolerance, self.max_iterations)
        if self.mmr_lambda is None:
            ranked = rank_by_score(scores, candidates)
        else:
            vectors = TfidfVectorizer().fit_transform(texts) if texts else sparse.csr_matrix((0, 0))
            ranked = mmr_order(scores, CosineRows(vectors), rank_by_score(scores, candidates), self.mmr_lambda)
        chosen = self.budget.select(ranked, words)
        return build_summary(self.name, self.get_params(), document, segmentation, chosen, scores, started)

