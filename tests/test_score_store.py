"""Stored scores against the reference library: every score that ``score_store``
writes must equal what ``rouge_score.rouge_scorer.RougeScorer`` (Google's
implementation of Lin 2004, stemming on) computes directly from the same texts.
The documents are seeded random word sequences, generated for the check."""

from __future__ import annotations

import random

import pytest
from rouge_score import rouge_scorer

from store.records import Document, SourceLink, Span, Summary, SummarySentence
from store.store import Store
from summarize.evaluation.scoring import score_store
from summarize.reading.split import sentence_spans, split_document

WORDS = (
    "valve valves inspected inspecting inspection pump pumps pumped gauge gauges reading readings "
    "crew crews repaired repairing leak leaking leaks pipe pipes main mains pressure pressures "
    "station stations flow flows flowed night nights shift shifts report reported reporting the a of and"
).split()


def random_sentence(rng: random.Random) -> str:
    words = [rng.choice(WORDS) for _ in range(rng.randint(4, 14))]
    return " ".join(words).capitalize() + "."


def build_store(path, rng: random.Random, documents: int = 12) -> None:
    store = Store(str(path))
    run_id = store.runs.begin("test", {})
    for number in range(documents):
        text = " ".join(random_sentence(rng) for _ in range(rng.randint(3, 12)))
        reference = " ".join(random_sentence(rng) for _ in range(rng.randint(1, 4)))
        document = Document(
            record_key=f"doc{number}", path=f"doc{number}.txt", text=text, format="txt",
            sha256=f"{number:064x}", size=len(text), reference_summary=reference, reference_source="test",
        )
        segmentation = split_document(document)
        document_id = store.add_document(document, segmentation, run_id)[0]
        for variant in range(3):
            if variant < 2:  # extractive: a random subset of the document's sentences
                spans = sorted(rng.sample(segmentation.sentences, rng.randint(1, len(segmentation.sentences))))
                sentences = [SummarySentence(s.slice(text), 1.0, (SourceLink(s, 1.0),)) for s in spans]
            else:  # abstractive-like: new sentences, weakly linked to the first sentence
                sentences = [
                    SummarySentence(random_sentence(rng), 0.5, (SourceLink(segmentation.sentences[0], 0.3),))
                    for _ in range(rng.randint(1, 3))
                ]
            store.add_summary(document_id, run_id, Summary(method=f"m{variant}", params={"v": variant}, sentences=sentences))
    store.close()


def test_stored_scores_equal_a_direct_rouge_score_computation(tmp_path):
    # External check: the rouge-score package (RougeScorer)
    rng = random.Random(8128)
    db = tmp_path / "scores.sqlite"
    build_store(db, rng)
    assert score_store(str(db)) == 36
    direct = rouge_scorer.RougeScorer(["rouge1", "rouge2", "rougeL", "rougeLsum"], use_stemmer=True)
    store = Store(str(db))
    rows = store.db.execute(
        "select s.id, r.text, c.metric, c.precision, c.recall, c.f1 from scores c "
        "join summaries s on s.id = c.summary_id join reference_summaries r on r.document_id = s.document_id"
    ).fetchall()
    assert len(rows) == 36 * 4
    for summary_id, reference, metric, precision, recall, f1 in rows:
        sentences = [r[0] for r in store.db.execute(
            "select text from summary_sentences where summary_id = ? order by position", [summary_id])]
        reference_lines = "\n".join(span.slice(reference) for span in sentence_spans(reference))
        expected = direct.score(reference_lines, "\n".join(sentences))[metric]
        assert (precision, recall, f1) == pytest.approx(
            (expected.precision, expected.recall, expected.fmeasure), abs=1e-12
        )
    store.close()


def test_rerun_scores_only_new_summaries(tmp_path):
    rng = random.Random(3)
    db = tmp_path / "rerun.sqlite"
    build_store(db, rng, documents=3)
    assert score_store(str(db)) == 9
    first = Store(str(db)).db.execute("select summary_id, metric, created from scores").fetchall()
    assert score_store(str(db)) == 0
    store = Store(str(db))
    run_id = store.runs.begin("test", {})
    document_id = store.db.execute("select min(id) from documents").fetchone()[0]
    span = Span(0, 5)
    store.add_summary(document_id, run_id, Summary("late", {}, [SummarySentence("late", 1.0, (SourceLink(span, 1.0),))]))
    store.close()
    assert score_store(str(db)) == 1
    after = Store(str(db)).db.execute("select summary_id, metric, created from scores").fetchall()
    assert set(first) <= set(after) and len(after) == len(first) + 4


def test_documents_without_reference_are_not_scored(tmp_path):
    db = tmp_path / "noref.sqlite"
    store = Store(str(db))
    run_id = store.runs.begin("test", {})
    text = "The night shift reported a leak. The crew repaired the main."
    document = Document("x", "x.txt", text, "txt", "f" * 64, len(text))
    segmentation = split_document(document)
    document_id = store.add_document(document, segmentation, run_id)[0]
    span = segmentation.sentences[0]
    store.add_summary(document_id, run_id, Summary("lead", {}, [SummarySentence(span.slice(text), 1.0, (SourceLink(span, 1.0),))]))
    store.close()
    assert score_store(str(db)) == 0
