"""The store handle: every read and write goes through ``store.Store``, a run is
recorded by one context manager, and exports cost a fixed number of queries.

The source-tree checks and the query bound are common practice for keeping a data
layer in one place (no outside source); the run states are the ones the README and
the ``runs`` table document.
"""

from __future__ import annotations

import json
import re
import sqlite3
from pathlib import Path

import pytest

from store.lock import StoreLock, StoreLocked
from store.records import Document, Flag, Segmentation, SourceLink, Span, Summary, SummarySentence
from store.runs import recorded_run
from store.store import Store

ROOT = Path(__file__).resolve().parent.parent
SQL_CALL = re.compile(r"\.(execute|executemany|executescript|query)\(|\bdb\[|^\s*(import|from) sqlite")


def _python_files(*folders: str) -> list[Path]:
    return sorted(path for folder in folders for path in (ROOT / folder).rglob("*.py"))


def test_no_sql_outside_the_store_package():
    # Common practice: one data layer; every other module asks the store handle.
    offenders = [
        f"{path.relative_to(ROOT)}:{number}: {line.strip()}"
        for path in _python_files("summarize", "bench", "scripts")
        for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1)
        if SQL_CALL.search(line)
    ]
    assert offenders == []


def test_the_source_tree_check_finds_sql_where_it_is():
    # The pattern above is not vacuous: it finds the store's own SQL.
    assert any(SQL_CALL.search(line) for line in (ROOT / "store" / "writes.py").read_text().splitlines())


def test_reference_summaries_are_read_in_one_module():
    # Common practice: one reader per table that several concerns need.
    readers = {
        path.name
        for path in _python_files("store", "summarize", "bench")
        if re.search(r"(from|join)\s+reference_summaries", path.read_text(encoding="utf-8"))
    }
    assert readers == {"references.py"}


def _document(number: int, sentences: int = 3) -> tuple[Document, Segmentation]:
    parts = [f"Pump station {number} reading {k} was taken at dawn." for k in range(sentences)]
    text = " ".join(parts)
    spans, cursor = [], 0
    for part in parts:
        spans.append(Span(cursor, cursor + len(part)))
        cursor += len(part) + 1
    document = Document(
        record_key=f"notes/{number:03d}.txt", path=f"notes/{number:03d}.txt", text=text, format="txt",
        sha256=f"{number:064x}", size=len(text), title=f"Station {number}",
        reference_summary=f"Station {number} was read at dawn.", reference_source="sidecar:test",
    )
    segmentation = Segmentation(
        paragraphs=(Span(0, len(text)),), sentences=tuple(spans),
        sentence_paragraph=(0,) * sentences, sentence_is_heading=(False,) * sentences,
    )
    return document, segmentation


class _F1:
    def __init__(self, value: float):
        self.precision = self.recall = self.f1 = value


def _filled_store(path: Path, documents: int) -> Store:
    store = Store(str(path))
    run_id = store.runs.begin("test", {})
    for number in range(documents):
        document, segmentation = _document(number)
        document_id, _, _ = store.add_document(document, segmentation, run_id)
        for method, picks in (("lead", (0, 1)), ("tfidf", (2, 0))):
            summary = Summary(
                method=method, params={"sentences": 2},
                sentences=[
                    SummarySentence(
                        text=segmentation.sentences[k].slice(document.text), score=1.0 - k / 10,
                        sources=(SourceLink(segmentation.sentences[k], 1.0), SourceLink(segmentation.sentences[1], 0.4)),
                    )
                    for k in picks
                ],
                flags=[Flag(kind="number", detail=f"{number} not in source", position=0)] if method == "tfidf" else [],
            )
            summary_id = store.add_summary(document_id, run_id, summary)
            store.evaluation.write_scores(summary_id, {"rouge1": _F1(0.5), "rouge2": _F1(0.25)})
    store.runs.finish(run_id, "completed", {})
    return store


def _statements(store: Store, action) -> tuple[object, list[str]]:
    seen: list[str] = []
    store.db.conn.set_trace_callback(seen.append)
    try:
        result = action()
    finally:
        store.db.conn.set_trace_callback(None)
    return result, [s for s in seen if s.lstrip().lower().startswith("select")]


def test_export_rows_take_the_same_few_queries_for_3_or_40_documents(tmp_path):
    small, large = _filled_store(tmp_path / "small.sqlite", 3), _filled_store(tmp_path / "large.sqlite", 40)
    small_rows, small_queries = _statements(small, small.exports.rows)
    large_rows, large_queries = _statements(large, large.exports.rows)
    assert (len(small_rows), len(large_rows)) == (6, 80)
    assert len(large_queries) == len(small_queries) <= 8
    _, filtered = _statements(large, lambda: large.exports.rows(["tfidf"]))
    assert len(filtered) == len(large_queries)


def test_export_rows_carry_what_is_stored(tmp_path):
    store = _filled_store(tmp_path / "store.sqlite", 4)
    rows = store.exports.rows(["tfidf"])
    assert [row.record_key for row in rows] == [f"notes/{n:03d}.txt" for n in range(4)]
    for number, row in enumerate(rows):
        text, _ = _document(number)
        text = text.text
        assert row.summary_sentences[0].text == text[row.source_spans[0][0] : row.source_spans[0][1]]
        assert [source.text for source in row.summary_sentences[0].sources] == [
            text[source.start : source.end] for source in row.summary_sentences[0].sources
        ]
        assert len(row.summary_sentences[0].sources) == 2 and len(row.source_spans) == 2
        assert row.flags == [f"number: {number} not in source"]
        assert row.rouge_f1 == {"rouge1": 0.5, "rouge2": 0.25}
        assert row.reference_summary == f"Station {number} was read at dawn."
        assert row.reference_source == "sidecar:test"


def test_show_reads_a_document_in_the_same_queries_however_many_summaries_it_has(tmp_path):
    store = _filled_store(tmp_path / "store.sqlite", 5)
    record, queries = _statements(store, lambda: store.queries.show("notes/002.txt"))
    assert [summary["method"] for summary in record["summaries"]] == ["lead", "tfidf"]
    assert record["reference_summary"]["source"] == "sidecar:test"
    document, segmentation = _document(2)
    for sentences in (1, 2, 3):
        store.add_summary(3, None, Summary(method="random", params={"seed": sentences}, sentences=[
            SummarySentence(text=span.slice(document.text), score=0.0, sources=(SourceLink(span, 1.0),))
            for span in segmentation.sentences[:sentences]
        ]))
    record, more_queries = _statements(store, lambda: store.queries.show("notes/002.txt"))
    assert len(record["summaries"]) == 5
    assert len(more_queries) == len(queries)


def _runs(path: Path) -> list[tuple[str, str, dict]]:
    with sqlite3.connect(path) as conn:
        return [(command, status, json.loads(counts or "{}"))
                for command, status, counts in conn.execute("select command, status, counts from runs order by id")]


def _lock_is_free(path: Path) -> bool:
    try:
        with StoreLock(str(path)):
            return True
    except StoreLocked:
        return False


def test_a_recorded_run_completes_with_its_counts(tmp_path):
    path = tmp_path / "store.sqlite"
    with recorded_run(str(path), "score", {"budget": "reference"}) as run:
        assert not _lock_is_free(path)
        run.counts = {"summaries_scored": 3}
    assert _runs(path) == [("score", "completed", {"summaries_scored": 3})]
    assert _lock_is_free(path)


@pytest.mark.parametrize(("raised", "status"), [(KeyboardInterrupt, "interrupted"), (ValueError, "failed")])
def test_a_recorded_run_that_raises_is_finished_and_releases_the_lock(tmp_path, raised, status):
    path = tmp_path / "store.sqlite"
    with pytest.raises(raised):
        with recorded_run(str(path), "train", {}) as run:
            run.counts = {"documents": 2}
            raise raised("stop here")
    assert _runs(path) == [("train", status, {"documents": 2})]
    assert _lock_is_free(path)
    with pytest.raises(sqlite3.ProgrammingError):
        run.store.documents.count()  # the handle was closed


def test_a_recorded_run_marks_a_killed_run_interrupted_before_it_begins(tmp_path):
    path = tmp_path / "store.sqlite"
    store = Store(str(path))
    store.runs.begin("run", {})  # never finished: its process was killed
    store.close()
    with recorded_run(str(path), "choose", {}) as run:
        assert run.earlier_interrupted == 1
    assert [status for _, status, _ in _runs(path)] == ["interrupted", "completed"]


def test_a_recorded_run_refused_by_the_lock_writes_nothing(tmp_path):
    path = tmp_path / "store.sqlite"
    Store(str(path)).close()
    with StoreLock(str(path)):
        # Record locks do not exclude within one process: this process's own hold
        # is what refuses the second run here.
        with pytest.raises(StoreLocked):
            with recorded_run(str(path), "score", {}):
                pass
    assert _runs(path) == []


def test_a_read_only_handle_reads_and_cannot_write(tmp_path):
    path = tmp_path / "store.sqlite"
    _filled_store(path, 2).close()
    reader = Store(str(path), read_only=True)
    assert len(reader.exports.rows()) == 4
    with pytest.raises(sqlite3.OperationalError, match="readonly"):
        reader.runs.begin("run", {})
