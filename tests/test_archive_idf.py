"""The streaming IDF fit gives a vectorizer exactly what scikit-learn's own ``fit``
gives it, on real papers (External check: scikit-learn's ``TfidfVectorizer`` as the
reference library; documents from the ``aclsum`` package, MIT)."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.feature_extraction.text import TfidfVectorizer

from summarize.methods.archive_idf import NO_TERM, fit_archive_idf, frequent_terms
from summarize.methods.aspects.learned import cue_analyzer, fit_cue_words
from summarize.methods.aspects.relevance import stemmed_words
from summarize.reading.datasets import load_aclsum

SETTINGS = [
    {"stop_words": "english"},
    {"stop_words": "english", "sublinear_tf": True},
    {"smooth_idf": False},
    {"ngram_range": (1, 2)},
    {"analyzer": stemmed_words, "sublinear_tf": True},
    {"min_df": 2},  # prunes by frequency: scikit-learn's own fit is used
]


@pytest.fixture(scope="module")
def papers() -> list[str]:
    return [document.text for document in load_aclsum("val", limit=30)]


@pytest.mark.parametrize("settings", SETTINGS, ids=[str(sorted(s)) for s in SETTINGS])
def test_streaming_fit_equals_scikit_learn(papers, settings):
    # External check: scikit-learn TfidfVectorizer.fit on the same ACLSum papers (aclsum package)
    reference = TfidfVectorizer(**settings).fit(papers)
    streamed = fit_archive_idf(TfidfVectorizer(**settings), iter(papers))
    assert streamed.vocabulary_ == reference.vocabulary_
    assert np.array_equal(streamed.idf_, reference.idf_)
    sample = papers[:3]
    assert (abs(streamed.transform(sample) - reference.transform(sample))).max() == 0


def test_texts_are_read_once_from_a_generator(papers):
    reads = []

    def texts():
        for text in papers:
            reads.append(1)
            yield text

    fit_archive_idf(TfidfVectorizer(), texts())
    assert len(reads) == len(papers)


@pytest.mark.parametrize("settings", [{"stop_words": "english"}, {"stop_words": "english", "min_df": 2}])
def test_an_archive_without_content_words_still_transforms(settings):
    # "empty" is itself an English stop word, which once made the fallback fail too.
    vectorizer = fit_archive_idf(TfidfVectorizer(**settings), ["the and of", "a an", "empty"])
    assert list(vectorizer.vocabulary_) == [NO_TERM]
    assert vectorizer.transform(["the pump failed"]).nnz == 0


def test_a_single_string_is_refused():
    with pytest.raises(ValueError, match="one text per document"):
        fit_archive_idf(TfidfVectorizer(), "a single string")


# Common practice (no outside source): counting in how many documents each term
# occurs, worked by hand on three short texts.
def test_frequent_terms_counts_documents_not_occurrences():
    texts = ["pump pump pump failed", "the pump was isolated", "valve failed"]
    assert frequent_terms(str.split, texts, 2) == ["failed", "pump"]
    assert frequent_terms(str.split, texts, 10)[:2] == ["failed", "pump"]
    assert frequent_terms(str.split, [], 5) == []


# Common practice (no outside source): cue words keep stop words and word pairs,
# and the indicators mark exactly the sentences holding them.
def test_cue_words_keep_stop_words_and_word_pairs():
    assert cue_analyzer("However, we propose it.") == ["however", "we", "propose", "it", "however we",
                                                       "we propose", "propose it"]
    cues = fit_cue_words(["However the pump failed.", "However we replaced it.", "It failed."], 3)
    assert cues.vocabulary == ["failed", "however", "it"]  # each in two texts: ties go alphabetically
    rows = cues.transform(["However, it held.", "Nothing here."]).toarray()
    assert rows.tolist() == [[0.0, 1.0, 1.0], [0.0, 0.0, 0.0]]
    assert fit_cue_words(["...", "!"], 3).transform(["anything"]).nnz == 0
