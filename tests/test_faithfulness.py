"""Flags for facts a summary adds, and provenance links, on fixed summary/source pairs.

The flag rules are common practice without a published reference; the cases below are
worked by hand on invented text. Provenance similarities are checked against
scikit-learn's own cosine of the same TF-IDF vectors.
"""

from __future__ import annotations

import pytest
from sklearn.feature_extraction.text import TfidfVectorizer
from sklearn.metrics.pairwise import cosine_similarity

from store.records import Document, Flag
from summarize.methods.seq2seq.faithfulness import find_dates, number_values, unsupported_facts
from summarize.methods.seq2seq.support import supporting_sources
from summarize.reading.split import split_document

SOURCE = (
    "The Brindlemoor Reservoir spillway was inspected on 3 March 2025 by the Tollcaster Water Board.\n\n"
    "Seepage at the east toe drain measured 1,200 litres per day, up 12.50% on 2024. "
    "Repairs to the wave wall were estimated at £48,000. The next visit is due 2026-03-03.\n\n"
    "Inspector Maren Oakhurst recommends a follow-up visit after the next heavy rainfall."
)


def _flags(*sentences: str) -> list[tuple[str, str, int]]:
    return [(f.kind, f.detail, f.position) for f in unsupported_facts(list(sentences), SOURCE)]


def test_a_number_absent_from_the_source_is_flagged():
    assert _flags("Seepage reached 1,350 litres per day.") == [("unsupported-number", "1,350", 0)]


def test_numbers_match_by_value_across_writings():
    # 1,200 = 1200; 12.50% = 12.5 percent; £48,000 = 48000.
    assert _flags("Seepage was 1200 litres per day, up 12.5 percent; repairs cost 48000.") == []


def test_amounts_and_percentages_are_checked():
    assert _flags("Repairs were estimated at £52,000, up 7.5% on the estimate.") == [
        ("unsupported-number", "£52,000", 0),
        ("unsupported-number", "7.5%", 0),
    ]


def test_dates_match_across_formats_and_invented_dates_are_flagged():
    assert _flags("The spillway was inspected on March 3, 2025.", "The next visit is due 03/03/2026.") == []
    assert _flags("It was inspected on 4 March 2025.") == [("unsupported-date", "4 March 2025", 0)]
    # A day the source never gives is an addition, even when the month is right.
    assert _flags("A visit follows on 14 June.") == [("unsupported-date", "14 June", 0)]


def test_a_date_is_not_also_flagged_as_numbers():
    flags = _flags("Work started on 2025-07-21.")
    assert flags == [("unsupported-date", "2025-07-21", 0)]


def test_names_are_multiword_capitalised_runs_not_at_sentence_start():
    assert _flags("The report of the Tollcaster Water Board names Maren Oakhurst.") == []
    assert _flags("The board thanked Halden Prior of Tollcaster Water Board.") == [
        ("unsupported-name", "Halden Prior", 0)
    ]
    # A capitalised sentence opener is grammar, not a name.
    assert _flags("Seepage Rates rose.") == []


def test_flags_carry_the_sentence_index():
    flags = unsupported_facts(["Seepage rose.", "It rose by 9 litres at Harrow Point Station."], SOURCE)
    assert flags == [
        Flag("unsupported-number", "9", 1),
        Flag("unsupported-name", "Harrow Point Station", 1),
    ]


def test_number_and_date_readers():
    assert number_values("1,200.50 and 3.0% and 007") == {"1200.5", "3", "7"}
    readings = [r for _, r in find_dates("due 04/05/2026, done 2025-12-01, seen May 2024")]
    assert readings == [{(2026, 5, 4), (2026, 4, 5)}, {(2025, 12, 1)}, {(2024, 5, None)}]


@pytest.fixture
def document():
    text = SOURCE
    return Document(record_key="r", path="r.txt", text=text, format="txt", sha256="r", size=len(text))


def test_supporting_sources_are_the_most_similar_sentences(document):
    segmentation = split_document(document)
    sentences = segmentation.sentence_texts(document.text)
    vectorizer = TfidfVectorizer(stop_words="english").fit([document.text, "An unrelated archive report."])
    generated = ["Toe drain seepage rose to 1,200 litres per day.", "Oakhurst wants a visit after heavy rainfall."]
    links = supporting_sources(generated, document, segmentation, vectorizer, max_links=2, min_similarity=0.05)
    # Reference: scikit-learn's cosine_similarity of the same vectors.
    expected = cosine_similarity(vectorizer.transform(generated), vectorizer.transform(sentences))
    for row, sentence_links in zip(expected, links):
        best = sorted(range(len(row)), key=lambda i: -row[i])
        assert sentence_links[0].span == segmentation.sentences[best[0]]
        assert sentence_links[0].similarity == pytest.approx(row[best[0]], abs=1e-6)
        assert all(link.similarity >= 0.05 for link in sentence_links) and len(sentence_links) <= 2
        for link in sentence_links:
            assert document.text[link.span.start : link.span.end] in sentences
    assert "1,200 litres" in links[0][0].span.slice(document.text)
    assert "Maren Oakhurst" in links[1][0].span.slice(document.text)


def test_an_unsupported_sentence_keeps_no_link(document):
    segmentation = split_document(document)
    vectorizer = TfidfVectorizer(stop_words="english").fit([document.text])
    assert supporting_sources(["Gulls nest on quays."], document, segmentation, vectorizer) == [()]
