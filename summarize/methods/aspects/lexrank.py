"""LexRank on TF-IDF cosine graphs: continuous LexRank and its query-biased form.

Both are PageRank on a sentence graph whose edge weights are cosine similarities of
TF-IDF sentence vectors (no threshold: "continuous" LexRank, Erkan & Radev 2004).
Self-similarities are left out of the graph (a sentence does not vote for itself).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from nltk.stem import porter
from scipy import sparse
from sklearn.feature_extraction.text import ENGLISH_STOP_WORDS

from summarize.methods.graph import pagerank, top_k_symmetric

_STEM = lru_cache(maxsize=200_000)(porter.PorterStemmer().stem)


def stemmed_words(text: str) -> list[str]:
    """Lower-case word tokens without English stop words, Porter-stemmed: the
    vectorizers' analyzer (module level, so fitted vectorizers can be pickled)."""
    return [_STEM(word) for word in re.findall(r"[a-z0-9]+", text.lower()) if word not in ENGLISH_STOP_WORDS]


def cosine_graph(vectors: sparse.spmatrix, top_k: int | None = None) -> sparse.csr_matrix:
    """Symmetric cosine-similarity graph of l2-normalised row ``vectors``; each row
    keeps its ``top_k`` strongest edges (all when None), diagonal empty."""
    vectors = sparse.csr_matrix(vectors)
    return top_k_symmetric(lambda rows: (vectors[rows] @ vectors.T).toarray(), vectors.shape[0], top_k)


@dataclass
class ContinuousLexRank:
    """Continuous LexRank (Erkan & Radev 2004, eq. 5 with cosine weights):

        p(u) = (1 − d)/N + d · Σ_v [cos(u, v) / Σ_z cos(z, v)] · p(v)

    with ``d = damping`` (Erkan & Radev write the jump probability as ``d``; here ``d``
    is the follow-an-edge probability, as in PageRank and networkx's ``alpha``).
    ``top_k`` bounds the edges kept per sentence for long inputs (None keeps all).
    """

    damping: float = 0.85
    top_k: int | None = None

    def scores(self, vectors: sparse.spmatrix) -> np.ndarray:
        return pagerank(cosine_graph(vectors, self.top_k), damping=self.damping)


@dataclass
class QueryBiasedLexRank:
    """Query-biased LexRank (Otterbacher, Erkan & Radev 2005):

        p(s | q) = b · rel(s | q) / Σ_z rel(z | q)
                   + (1 − b) · Σ_v [cos(s, v) / Σ_z cos(z, v)] · p(v | q)

    where ``b = bias`` is the weight of the jump to query-relevant sentences and
    ``rel`` the relevance of each sentence to the query (see
    :class:`~summarize.methods.aspects.relevance.QueryRelevance`). It is personalised
    PageRank with damping ``1 − b`` and teleport distribution ``rel / Σ rel``; with
    uniform relevance it is continuous LexRank. When no sentence is relevant the
    ranking falls back to continuous LexRank.
    """

    bias: float = 0.85
    top_k: int | None = None

    def scores(self, vectors: sparse.spmatrix, relevance: np.ndarray) -> np.ndarray:
        graph = cosine_graph(vectors, self.top_k)
        teleport = relevance if np.sum(relevance) > 0 else None
        return pagerank(graph, damping=1 - self.bias, teleport=teleport)
