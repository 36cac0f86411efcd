"""The command line end to end on the demo archive: run, then find, show and export
each deliver what they claim."""

from __future__ import annotations

import csv
import html
import json
import sqlite3
from pathlib import Path

import pytest
from click.testing import CliRunner

from summarize.cli import main

pytestmark = pytest.mark.slow  # whole archives or real processes

DEMO = Path(__file__).resolve().parent.parent / "demo_archive"
METHODS = ("lead", "tfidf", "textrank")


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory) -> tuple[Path, object]:
    db = tmp_path_factory.mktemp("demo") / "store.sqlite"
    result = CliRunner().invoke(main, ["run", str(DEMO), "--db", str(db), "--json"])
    return db, result


def _rows(db: Path, sql: str, params=()) -> list[tuple]:
    with sqlite3.connect(db) as conn:
        return conn.execute(sql, params).fetchall()


def test_run_stores_every_report_with_each_method(demo_store):
    db, result = demo_store
    # Exit status 3: finished, but the awkward files failed (documented in the README).
    assert result.exit_code == 3, result.output
    report = json.loads(result.stdout)
    assert report["files_failed"] >= 5
    documents = _rows(db, "select count(*) from documents where status = 'active'")[0][0]
    assert documents >= 40
    for method in METHODS:
        count = _rows(db, "select count(*) from summaries s join documents d on d.id = s.document_id "
                          "where d.status = 'active' and s.method = ?", [method])[0][0]
        assert count == documents, method
    assert _rows(db, "select count(*) from reference_summaries")[0][0] >= 40


def test_awkward_files_are_recorded_with_their_own_reasons(demo_store):
    db, _ = demo_store
    problems = dict(_rows(db, "select path, reason from ingest_problems where kind = 'error'"))
    by_name = {Path(path).name: reason for path, reason in problems.items()}
    assert "empty" in by_name["empty_notes.txt"]
    assert "binary" in by_name["pump_telemetry.txt"]
    assert "text layer" in by_name["scanned_permit.pdf"]
    assert "JSON" in by_name["broken_export.json"]
    assert "DOCX" in by_name["corrupt_handover.docx"]
    assert len(set(by_name.values())) == len(by_name)
    # The same content under two names is recognised.
    duplicates = _rows(db, "select d.record_key, t.record_key from documents d join documents t on t.id = d.duplicate_of")
    assert duplicates


def test_every_summary_sentence_span_slices_back_to_that_sentence(demo_store):
    db, _ = demo_store
    rows = _rows(
        db,
        "select d.text, ss.text, src.start, src.end from summary_sentences ss "
        "join summaries s on s.id = ss.summary_id join documents d on d.id = s.document_id "
        "join sentence_sources src on src.summary_id = ss.summary_id and src.position = ss.position "
        "where s.method in ('lead', 'tfidf', 'textrank')",
    )
    assert len(rows) > 100
    for text, sentence, start, end in rows:
        assert text[start:end] == sentence


def test_reference_summaries_are_not_left_in_the_text(demo_store):
    db, _ = demo_store
    for text, reference in _rows(
        db, "select d.text, r.text from documents d join reference_summaries r on r.document_id = d.id"
    ):
        assert reference.strip()[:80] not in text


def test_rerun_adds_nothing(demo_store):
    db, _ = demo_store
    before = _rows(db, "select count(*) from summaries")[0][0]
    result = CliRunner().invoke(main, ["run", str(DEMO), "--db", str(db), "--json"])
    report = json.loads(result.stdout)
    assert report["summaries_added"] == 0 and report["documents_added"] == 0
    assert _rows(db, "select count(*) from summaries")[0][0] == before


def test_find_returns_documents_whose_summaries_match(demo_store):
    db, _ = demo_store
    word = _rows(db, "select text from summaries where method = 'lead' limit 1")[0][0].split()[3].strip(".,;:()")
    result = CliRunner().invoke(main, ["find", word, "--db", str(db), "--json"])
    assert result.exit_code == 0, result.output
    hits = json.loads(result.stdout)["hits"]
    assert hits
    for hit in hits:
        ids = [r[0] for r in _rows(db, "select id from documents where id = ?", [hit["document_id"]])]
        assert ids
    assert any(word.lower() in m["snippet"].lower() for hit in hits for m in hit["summary_matches"])


def test_show_gives_the_document_with_summaries_and_spans(demo_store):
    db, _ = demo_store
    doc_id, key = _rows(db, "select id, record_key from documents where status = 'active' order by id limit 1")[0]
    result = CliRunner().invoke(main, ["show", key, "--db", str(db), "--json"])
    assert result.exit_code == 0, result.output
    record = json.loads(result.stdout)
    assert record["document"]["id"] == doc_id
    assert {s["method"] for s in record["summaries"]} >= set(METHODS)
    for summary in record["summaries"]:
        for sentence in summary["sentences"]:
            source = sentence["sources"][0]
            assert record["text"][source["start"]:source["end"]] == source["text"]
    text = CliRunner().invoke(main, ["show", str(doc_id), "--db", str(db), "--highlight"])
    assert "check the source" in text.output and ">>" in text.output
    missing = CliRunner().invoke(main, ["show", "no-such-document", "--db", str(db)])
    assert missing.exit_code == 1 and "no document" in missing.output


@pytest.mark.parametrize("fmt", ["csv", "jsonl", "md", "html"])
def test_export_writes_every_summary(demo_store, tmp_path, fmt):
    db, _ = demo_store
    out = tmp_path / f"export.{fmt}"
    result = CliRunner().invoke(
        main, ["export", "--db", str(db), "--format", fmt, "--out", str(out), "--every-summary", "--include-missing"]
    )
    assert result.exit_code == 0, result.output
    expected = _rows(db, "select count(*) from summaries s join documents d on d.id = s.document_id where d.status != 'replaced'")[0][0]
    content = out.read_text(encoding="utf-8-sig")
    if fmt == "csv":
        rows = list(csv.DictReader(content.splitlines()))
        assert len(rows) == expected
        assert all("finding aids" in row["caution"] for row in rows)
    elif fmt == "jsonl":
        rows = [json.loads(line) for line in content.splitlines()]
        assert len(rows) == expected
        assert all(row["summary"] and row["source_spans"] for row in rows)
    else:
        assert "finding aids" in content
        first = _rows(db, "select text from summaries where method = 'lead' order by id limit 1")[0][0]
        first_sentence = first.split(". ")[0]
        assert (html.escape(first_sentence) if fmt == "html" else first_sentence.replace("|", "\\|")) in content


def test_html_export_escapes_document_strings(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "planted.txt").write_text(
        "Title: Pump <script>alert(1)</script> review\n\n"
        "The <script>alert('x')</script> tag was found in a form field on 3 May. "
        "Staff removed the field from the intake page. The page was checked again on 4 May.\n",
        encoding="utf-8",
    )
    db = tmp_path / "s.sqlite"
    assert CliRunner().invoke(main, ["run", str(archive), "--db", str(db)]).exit_code == 0
    out = tmp_path / "out.html"
    assert CliRunner().invoke(main, ["export", "--db", str(db), "--format", "html", "--out", str(out)]).exit_code == 0
    content = out.read_text(encoding="utf-8")
    assert "<script>" not in content
    assert "&lt;script&gt;" in content


def test_missing_store_is_a_one_line_error(tmp_path):
    result = CliRunner().invoke(main, ["find", "pump", "--db", str(tmp_path / "none.sqlite")])
    assert result.exit_code == 1
    assert result.output.strip().count("\n") == 0 and "no such store" in result.output
