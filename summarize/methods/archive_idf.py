"""IDF over a whole archive in one streaming pass, in memory that grows with the
archive's vocabulary, not with its size.

scikit-learn's ``TfidfVectorizer.fit`` first builds the document-term matrix of every
document, then counts in how many documents each term occurs (about 36 MB per 10,000
generated reports, so several hundred MB for a large archive). The IDF needs only
those counts. :func:`fit_archive_idf` takes them with the vectorizer's own analyzer
(the same preprocessing, tokens, stop words and n-grams) and gives the vectorizer the
vocabulary and IDF its own ``fit`` would have given (``tests/test_archive_idf.py``
compares both with scikit-learn's):

    idf(t) = ln((1 + n) / (1 + df(t))) + 1      smooth_idf=True (the default)
    idf(t) = ln(n / df(t)) + 1                  smooth_idf=False

with ``n`` documents, ``df(t)`` of which contain ``t``; the vocabulary is every term,
indexed in sorted order. Settings that prune the vocabulary by frequency
(``max_df``, ``min_df``, ``max_features``) or fix it in advance fall back to
scikit-learn's own ``fit``.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Callable, Iterable

import numpy as np
from sklearn.feature_extraction.text import TfidfVectorizer

# The one term of an archive without a single content word, so that the vectorizer
# still transforms (every sentence then scores 0); no analyzer yields it.
NO_TERM = "\x00"


def fit_archive_idf(vectorizer: TfidfVectorizer, texts: Iterable[str]) -> TfidfVectorizer:
    """Fit ``vectorizer``'s vocabulary and IDF on ``texts`` (one per document, read
    once); an archive without a content word gets the vocabulary ``{NO_TERM: 0}``."""
    if isinstance(texts, str):
        raise ValueError("fit_archive_idf takes one text per document, not a single string")
    prunes = (vectorizer.max_df, vectorizer.min_df, vectorizer.max_features) != (1.0, 1, None)
    if prunes or vectorizer.vocabulary is not None or not vectorizer.use_idf:
        try:
            return vectorizer.fit(texts)
        except ValueError:  # "empty vocabulary"
            return _no_terms(vectorizer)
    analyze = vectorizer.build_analyzer()
    frequencies: Counter[str] = Counter()
    documents = 0
    for text in texts:
        frequencies.update(set(analyze(text)))
        documents += 1
    if not frequencies:
        return _no_terms(vectorizer)
    terms = sorted(frequencies)
    smooth = float(vectorizer.smooth_idf)
    document_frequency = np.fromiter((frequencies[term] for term in terms), dtype=vectorizer.dtype, count=len(terms))
    vectorizer.vocabulary_ = {term: index for index, term in enumerate(terms)}
    vectorizer.idf_ = np.log((documents + smooth) / (document_frequency + smooth)) + 1.0
    return vectorizer


def frequent_terms(analyze: Callable[[str], list[str]], texts: Iterable[str], count: int) -> list[str]:
    """The ``count`` terms ``analyze`` finds in the most of ``texts`` (one pass, memory
    of the vocabulary), most frequent first, ties in alphabetical order."""
    frequencies: Counter[str] = Counter()
    for text in texts:
        frequencies.update(set(analyze(text)))
    return [term for term, _ in sorted(frequencies.items(), key=lambda item: (-item[1], item[0]))[:count]]


def _no_terms(vectorizer: TfidfVectorizer) -> TfidfVectorizer:
    vectorizer.vocabulary_ = {NO_TERM: 0}
    vectorizer.idf_ = np.ones(1, dtype=vectorizer.dtype)
    return vectorizer
