"""Stored documents commit in groups: by count, by time, all or nothing per group;
and the writer's load (busy share, results waiting) as a run reports it."""

from __future__ import annotations

import io
import json
import sqlite3

import pytest
from operations_support import generated_archive

from store.records import Document, Segmentation, Span
from store.store import Store
from summarize.runs import writer_load
from summarize.runs.progress import TerminalProgress
from summarize.runs.runner import run_archive
from summarize.runs.writer_load import WriterLoad


def _document(number: int) -> tuple[Document, Segmentation]:
    text = f"Pump {number} was serviced on Tuesday. The seal was replaced."
    document = Document(record_key=f"pump{number}.txt", path=f"pump{number}.txt", text=text, format="txt",
                        sha256=f"{number:064x}", size=len(text))
    sentences = (Span(0, text.index(".") + 1), Span(text.index(".") + 2, len(text)))
    return document, Segmentation(paragraphs=(Span(0, len(text)),), sentences=sentences,
                                  sentence_paragraph=(0, 0), sentence_is_heading=(False, False))


def _committed(path) -> int:
    """Documents another connection sees: only what is committed."""
    with sqlite3.connect(path) as other:
        return other.execute("select count(*) from documents").fetchone()[0]


def test_a_group_commits_when_it_holds_its_count_and_not_before(tmp_path):
    # External check: SQLite transactions and savepoints (sqlite.org/lang_transaction.html, lang_savepoint.html)
    path = tmp_path / "groups.sqlite"
    store = Store(str(path))
    run_id = store.runs.begin("run", {})
    seen = []
    with store.write_groups(max_documents=3, max_seconds=3600) as groups:
        for number in range(7):
            store.add_document(*_document(number), run_id)
            groups.document_written()
            seen.append(_committed(path))
    assert seen == [0, 0, 3, 3, 3, 6, 6]
    assert _committed(path) == 7  # leaving the block commits the last, partial group
    assert groups.groups_committed == 3


def test_a_group_commits_when_it_is_old_enough(tmp_path):
    path = tmp_path / "groups.sqlite"
    store = Store(str(path))
    run_id = store.runs.begin("run", {})
    with store.write_groups(max_documents=1000, max_seconds=0) as groups:
        for number in range(3):
            store.add_document(*_document(number), run_id)
            groups.document_written()
            assert _committed(path) == number + 1


def test_a_failing_document_is_undone_alone_and_an_error_undoes_the_group(tmp_path):
    # External check: SQLite transactions and savepoints (sqlite.org/lang_transaction.html, lang_savepoint.html)
    path = tmp_path / "groups.sqlite"
    store = Store(str(path))
    run_id = store.runs.begin("run", {})
    with store.write_groups(max_documents=2, max_seconds=3600) as groups:
        store.add_document(*_document(0), run_id)
        store.db.execute(
            "create temp trigger fail_sentences before insert on document_sentences "
            "begin select raise(abort, 'disk went away'); end"
        )
        with pytest.raises(sqlite3.IntegrityError, match="disk went away"):
            store.add_document(*_document(1), run_id)
        store.db.execute("drop trigger fail_sentences")
        store.add_document(*_document(2), run_id)
        groups.document_written()
        groups.document_written()
    rows = store.db.execute("select record_key from documents order by id").fetchall()
    assert rows == [("pump0.txt",), ("pump2.txt",)]
    # The document whose sentences failed left no row without sentences.
    assert store.db.execute("select count(*) from document_sentences").fetchone() == (4,)

    with pytest.raises(RuntimeError), store.write_groups(max_documents=10) as groups:
        store.add_document(*_document(3), run_id)
        groups.document_written()
        raise RuntimeError("the run ended")
    assert _committed(path) == 2



def test_ctrl_c_keeps_the_finished_documents_of_the_open_group(tmp_path):
    # External check: SQLite transactions and savepoints (sqlite.org/lang_transaction.html, lang_savepoint.html)
    path = tmp_path / "groups.sqlite"
    store = Store(str(path))
    run_id = store.runs.begin("run", {})
    with pytest.raises(KeyboardInterrupt), store.write_groups(max_documents=10, max_seconds=3600) as groups:
        for number in range(2):
            store.add_document(*_document(number), run_id)
            groups.document_written()
        raise KeyboardInterrupt
    assert _committed(path) == 2

def test_writer_load_busy_share_waiting_and_the_verdict(monkeypatch):
    clock = iter([0.0, 1.0, 3.0, 3.0, 4.0, 10.0, 10.0, 10.0])
    monkeypatch.setattr(writer_load.time, "monotonic", lambda: next(clock))
    load = WriterLoad(every_seconds=100)
    load.start()  # 0
    with load.writing(results_waiting=2):  # 1 .. 3
        pass
    with load.writing(results_waiting=0):  # 3 .. 4
        pass
    load.stop()  # 10
    assert load.busy_seconds == 3.0 and load.seconds == 10.0
    assert load.busy_share == pytest.approx(0.3)
    assert load.mean_waiting == 1.0 and load.waiting_most == 2
    assert not load.bound
    assert "busy 30% of 10.0 s" in load.line("reading")

    monkeypatch.setattr(writer_load.time, "monotonic", iter([0.0, 0.0, 9.5, 10.0, 10.0, 10.0]).__next__)
    saturated = WriterLoad()
    saturated.start()
    with saturated.writing(results_waiting=3):
        pass
    saturated.stop()
    assert saturated.bound and "writer-bound" in saturated.line("summarizing")
    assert saturated.counts()["writer_bound"] is True


def test_a_run_commits_in_groups_and_records_the_writer_load(tmp_path):
    archive = generated_archive(tmp_path / "archive", 12, seed=5)
    db = tmp_path / "store.sqlite"
    messages = io.StringIO()
    report = run_archive([archive], str(db), group_documents=5, group_seconds=3600,
                         progress=TerminalProgress(stream=messages))
    assert report.exit_status == 0
    with sqlite3.connect(db) as conn:
        config, counts = (json.loads(cell) for cell in conn.execute("select config, counts from runs").fetchone())
    assert config["write_groups"] == {"documents": 5, "seconds": 3600}
    for label in ("reading", "summarizing"):
        writer = counts["writer"][label]
        assert writer["groups"] == 3  # 5 + 5 + 2 documents
        assert 0 < writer["busy_seconds"] <= writer["seconds"]
        # Both times are stored rounded to the millisecond: the share lies within what that allows.
        busy, seconds = writer["busy_seconds"], writer["seconds"]
        assert (busy - 0.0005) / (seconds + 0.0005) - 0.001 <= writer["busy_share"] <= (busy + 0.0005) / (seconds - 0.0005)
        assert f"writer ({label}): busy " in messages.getvalue()
