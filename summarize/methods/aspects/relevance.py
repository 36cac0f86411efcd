"""How much a sentence says about an aspect."""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
from sklearn.feature_extraction.text import CountVectorizer, TfidfVectorizer

from summarize.methods.archive_idf import fit_archive_idf
from summarize.methods.aspects.definitions import Aspect
from summarize.methods.aspects.lexrank import stemmed_words
from summarize.methods.aspects.negation import NegationScope


@dataclass
class QueryRelevance:
    """Relevance of sentences to an aspect, the term-weighting of Otterbacher, Erkan &
    Radev (2005):

        rel(s | q) = Σ_{w ∈ q} log(tf(w, s) + 1) · log(tf(w, q) + 1) · idf(w)

    Terms are Porter-stemmed content words of the aspect's question and guide
    phrases, plus — our addition — each guide phrase as one term of its own
    (``tf(phrase, q) = 1``, ``idf(phrase)`` the sum of its words' IDF), so that "root
    cause" counts for more than "root" and "cause" met apart. A phrase match inside a
    negated statement ("No failures resulted from …";
    :class:`~summarize.methods.aspects.negation.NegationScope`) counts neither as a
    phrase term nor as a match. IDF is scikit-learn's
    smooth IDF ``ln((1 + n)/(1 + df)) + 1`` fitted over the archive (``fit``); words
    the archive never uses get the largest IDF seen.

    ``evidence(s) = rel(s | q) / (log(2)² · mean phrase IDF)`` rescales relevance so
    that 1 is what one occurrence of an average guide phrase contributes, which makes
    thresholds mean the same for every aspect and archive.
    """

    def fit(self, texts: Iterable[str]) -> QueryRelevance:
        self.vectorizer_ = fit_archive_idf(
            TfidfVectorizer(analyzer=stemmed_words, smooth_idf=True, sublinear_tf=True, norm="l2"), texts
        )
        self.idf_ = dict(zip(self.vectorizer_.get_feature_names_out(), self.vectorizer_.idf_))
        self.max_idf_ = float(self.vectorizer_.idf_.max())
        return self

    def _idf(self, word: str) -> float:
        return float(self.idf_.get(word, self.max_idf_))

    def relevance(self, sentences: list[str], aspect: Aspect) -> tuple[np.ndarray, np.ndarray]:
        """``rel(s | q)`` for every sentence, and the count of its guide-phrase
        matches that are not negated."""
        if not hasattr(self, "vectorizer_"):
            raise RuntimeError("QueryRelevance.fit must be called (on the archive) before scoring")
        query_counts = CountVectorizer(analyzer=stemmed_words).fit([aspect.query_text()])
        words = query_counts.get_feature_names_out()
        if len(sentences) == 0:
            return np.zeros(0), np.zeros(0)
        word_weights = np.log1p(query_counts.transform([aspect.query_text()]).toarray().ravel()) * np.array(
            [self._idf(w) for w in words]
        )
        sentence_counts = query_counts.transform(sentences).toarray()
        scores = np.log1p(sentence_counts) @ word_weights
        phrase_hits = np.zeros(len(sentences))
        negation = NegationScope()
        for pattern, weight in zip(aspect.phrase_patterns(), self.phrase_idfs(aspect)):
            counts = np.array(
                [sum(not negation.negated(s, m.start()) for m in pattern.finditer(s)) for s in sentences], dtype=float
            )
            phrase_hits += counts
            scores += np.log1p(counts) * math.log(2) * weight
        return scores, phrase_hits

    def phrase_idfs(self, aspect: Aspect) -> list[float]:
        return [sum(self._idf(w) for w in stemmed_words(p)) or self.max_idf_ for p in aspect.phrases]

    def evidence_unit(self, aspect: Aspect) -> float:
        return math.log(2) ** 2 * float(np.mean(self.phrase_idfs(aspect)))

    def sentence_vectors(self, sentences: list[str]):
        return self.vectorizer_.transform(sentences)
