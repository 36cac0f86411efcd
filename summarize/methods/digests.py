"""Digests: one extractive summary across many documents, every sentence cited."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import sparse

from store.aspect_records import Citation, DigestSentence
from store.records import Document, Segmentation
from summarize.methods.aspects.definitions import Aspect
from summarize.methods.aspects.lexrank import ContinuousLexRank, QueryBiasedLexRank
from summarize.methods.aspects.relevance import QueryRelevance
from summarize.methods.aspects.selection import answer_candidates, judged_texts
from summarize.methods.budget import Budget, count_words
from summarize.methods.extractive import CosineRows, mmr_order, rank_by_score

DIGEST_BUDGET = Budget(sentences=8)
StoredDocument = tuple[int, Document, Segmentation]


@dataclass
class PooledSentences:
    """Every selectable sentence of the selected documents, with where it comes from."""

    documents: list[int]
    spans: list
    texts: list[str]
    words: list[int]
    judged: list[str]  # what relevance to an aspect is judged on (selection.judged_texts)


def pool_sentences(documents: list[StoredDocument], min_words: int, max_words: int) -> PooledSentences:
    pooled = PooledSentences([], [], [], [], [])
    for document_id, document, segmentation in documents:
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(t) for t in texts]
        judged, fields = judged_texts(document.text, segmentation, texts)
        for index in answer_candidates(segmentation, texts, words, min_words, max_words, fields):
            pooled.documents.append(document_id)
            pooled.spans.append(segmentation.sentences[index])
            pooled.texts.append(texts[index])
            pooled.words.append(words[index])
            pooled.judged.append(judged[index])
    return pooled


def near_duplicate_groups(order: list[int], rows: CosineRows, threshold: float) -> dict[int, list[tuple[int, float]]]:
    """Leader clustering (Hartigan 1975, cited from memory) in ``order``: a sentence
    joins the group of the most similar earlier leader when their cosine is at least
    ``threshold``, else it leads a group of its own. Returns leader → members with
    their cosine to it. Leaders are pairwise below the threshold by construction."""
    groups: dict[int, list[tuple[int, float]]] = {}
    leaders = np.zeros(rows.vectors.shape[0], dtype=bool)
    for index in order:
        row = np.asarray(rows[index].toarray()).ravel()
        similar = np.where(leaders, row, -1.0)
        best = int(np.argmax(similar)) if leaders.any() else -1
        if best >= 0 and similar[best] >= threshold:
            groups[best].append((index, float(row[best])))
        else:
            leaders[index] = True
            groups[index] = []
    return groups


@dataclass
class DigestSummarizer:
    """Multi-document extractive digest: continuous LexRank (Erkan & Radev 2004) over
    the pooled sentences of all selected documents — query-biased LexRank
    (Otterbacher, Erkan & Radev 2005) when an aspect is given — with near-duplicate
    merging and MMR (Carbonell & Goldstein 1998).

    1. Pool the sentences an answer may use (no headings, ``min_words`` to
       ``max_words`` words, no list item fields); for an aspect keep those with
       ``evidence(s) ≥ min_evidence``
       (:class:`~summarize.methods.aspects.relevance.QueryRelevance`; a list item's
       first sentence judged with its fields, as for aspect answers).
    2. TF-IDF vectors (IDF fitted over the selected documents, so a digest depends on
       its selection alone), the cosine graph with ``top_k`` edges per sentence, and
       LexRank scores ``p`` with ``damping`` (``bias`` for the aspect form).
    3. Near-duplicates: leader clustering in score order at cosine ``≥
       duplicate_threshold``; a group's leader stands for it and carries every
       member's citation, so no two digest sentences are near-duplicates.
    4. MMR with ``mmr_lambda`` over the leaders; at most ``per_document`` sentences
       led by the same document (None: no cap; the cap is our own rule, so that one
       long report cannot fill a digest of many); cut by the budget. Sentences are
       given best first.
    """

    budget: Budget = DIGEST_BUDGET
    min_words: int = 5
    max_words: int = 60
    damping: float = 0.85
    bias: float = 0.85
    mmr_lambda: float = 0.7
    duplicate_threshold: float = 0.8
    per_document: int | None = 2
    min_evidence: float = 0.5
    top_k: int | None = 50

    def get_params(self) -> dict:
        return {
            "method": "lexrank-mmr",
            "budget": self.budget.as_dict(),
            "min_words": self.min_words,
            "max_words": self.max_words,
            "damping": self.damping,
            "bias": self.bias,
            "mmr_lambda": self.mmr_lambda,
            "duplicate_threshold": self.duplicate_threshold,
            "per_document": self.per_document,
            "min_evidence": self.min_evidence,
            "top_k": self.top_k,
        }

    def _capped(self, ranked: list[int], owners: list[int]) -> list[int]:
        if self.per_document is None:
            return ranked
        taken: dict[int, int] = {}
        kept = []
        for index in ranked:
            if taken.get(owners[index], 0) < self.per_document:
                taken[owners[index]] = taken.get(owners[index], 0) + 1
                kept.append(index)
        return kept

    def summarize(self, documents: list[StoredDocument], aspect: Aspect | None = None) -> tuple[list[DigestSentence], dict]:
        """The digest's sentences and facts about how they were found."""
        pooled = pool_sentences(documents, self.min_words, self.max_words)
        relevance = QueryRelevance().fit([document.text for _, document, _ in documents] or ["empty"])
        details = {"documents": len(documents), "pooled_sentences": len(pooled.texts)}
        if aspect is not None and pooled.texts:
            raw, _ = relevance.relevance(pooled.judged, aspect)
            evidence = raw / relevance.evidence_unit(aspect)
            keep = [i for i, value in enumerate(evidence) if value >= self.min_evidence]
            pooled = PooledSentences(*([values[i] for i in keep] for values in (
                pooled.documents, pooled.spans, pooled.texts, pooled.words, pooled.judged)))
            evidence = evidence[keep]
            details["answering_sentences"] = len(keep)
        if not pooled.texts:
            return [], details
        vectors = sparse.csr_matrix(relevance.sentence_vectors(pooled.texts))
        if aspect is None:
            scores = ContinuousLexRank(self.damping, self.top_k).scores(vectors)
        else:
            scores = QueryBiasedLexRank(self.bias, self.top_k).scores(vectors, evidence)
        rows = CosineRows(vectors)
        order = rank_by_score(scores, list(range(len(pooled.texts))))
        groups = near_duplicate_groups(order, rows, self.duplicate_threshold)
        leaders = rank_by_score(scores, list(groups))
        ranked = self._capped(mmr_order(scores, rows, leaders, self.mmr_lambda), pooled.documents)
        chosen = set(self.budget.select(ranked, pooled.words))
        ranked_chosen = [i for i in ranked if i in chosen]
        details["merged_near_duplicates"] = sum(len(groups[i]) for i in ranked_chosen)
        sentences = []
        for leader in ranked_chosen:
            members = sorted(groups[leader], key=lambda m: (-m[1], pooled.documents[m[0]], pooled.spans[m[0]].start))
            citations = (Citation(pooled.documents[leader], pooled.spans[leader], 1.0),) + tuple(
                Citation(pooled.documents[i], pooled.spans[i], round(similarity, 4)) for i, similarity in members
            )
            sentences.append(DigestSentence(pooled.texts[leader], float(scores[leader]), citations))
        return sentences, details
