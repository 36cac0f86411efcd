"""References that stay current on rerun, forgiving front matter, date sources,
order-independent duplicates and JSON record ids in `show`.

The scores are checked against the rouge-score package (External check: rouge-score,
ROUGE-L F1 computed directly on the same pair). Everything else is structural: the
archives below are invented for these tests (common practice).
"""

from __future__ import annotations

import json
import os
import sqlite3

import pytest
from click.testing import CliRunner
from rouge_score import rouge_scorer

from store import Store
from store.duplicates import has_copy_marker
from store.queries import DocumentNotFound
from store.schema import SCHEMA_VERSION, open_database
from summarize.cli import main
from summarize.evaluation.scoring import score
from summarize.reading.ingest import IngestProblem, iter_archive, read_file
from summarize.reading.readers.dates import iso_date
from summarize.runs.runner import run_archive

REPORT = (
    "Quay wall survey\n\n"
    "The survey of the quay wall found a scour hollow below Berth 5. The hollow is approx. 1.8 m deep. "
    "Crane loads at Berth 5 are restricted until the hollow is filled. Divers will survey it again in April.\n"
)
FIRST_REFERENCE = "A scour hollow was found below Berth 5 and crane loads are restricted."
SECOND_REFERENCE = "Divers will survey Berth 5 again in April after the scour hollow was found."


def _run(archive, db):
    return run_archive([archive], str(db), methods=["lead"])


def _rouge_l(reference: str, summary: str) -> float:
    return rouge_scorer.RougeScorer(["rougeL"], use_stemmer=True).score(reference, summary)["rougeL"].fmeasure


# ------------------------------------------------------------ references stay current


def test_an_edited_sidecar_becomes_the_current_reference_and_the_old_scores_are_kept(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "survey.txt").write_text(REPORT)
    sidecar = archive / "survey.summary.txt"
    sidecar.write_text(FIRST_REFERENCE)
    db = tmp_path / "s.sqlite"
    _run(archive, db)
    score(str(db), methods=["lead"], progress=None)
    sidecar.write_text(SECOND_REFERENCE)
    report = _run(archive, db)
    assert report.references_changed == [f"{archive / 'survey.txt'}: reference summary edited"]
    store = Store(str(db))
    record = store.queries.show(str(archive / "survey.txt"))
    assert record["reference_summary"]["text"] == SECOND_REFERENCE
    assert record["reference_summary"]["since"]
    (earlier,) = record["reference_history"]
    assert earlier["text"] == FIRST_REFERENCE and earlier["scores"] > 0 and earlier["until"]
    # Nothing is scored against the current reference until `score` runs again ...
    assert all(not summary["scores"] for summary in record["summaries"])
    store.close()
    score(str(db), methods=["lead"], progress=None)
    store = Store(str(db))
    record = store.queries.show(str(archive / "survey.txt"))
    lead = next(s for s in record["summaries"] if s["method"] == "lead")
    # ... and then against it: the stored value equals a direct computation.
    assert lead["scores"]["rougeL"]["f1"] == pytest.approx(_rouge_l(SECOND_REFERENCE, lead["text"]), abs=1e-9)
    old = store.db.execute("select f1 from superseded_scores where metric = 'rougeL' and summary_id = ?",
                           [lead["summary_id"]]).fetchone()
    assert old[0] == pytest.approx(_rouge_l(FIRST_REFERENCE, lead["text"]), abs=1e-9)


def test_new_and_removed_sidecars_are_noticed(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "survey.txt").write_text(REPORT)
    db = tmp_path / "s.sqlite"
    _run(archive, db)
    (archive / "survey.summary.txt").write_text(FIRST_REFERENCE)
    assert _run(archive, db).references_changed == [f"{archive / 'survey.txt'}: reference summary new"]
    (archive / "survey.summary.txt").unlink()
    assert _run(archive, db).references_changed == [f"{archive / 'survey.txt'}: reference summary removed"]
    store = Store(str(db))
    record = store.queries.show(str(archive / "survey.txt"))
    assert record["reference_summary"] is None
    assert [h["text"] for h in record["reference_history"]] == [FIRST_REFERENCE]
    assert _run(archive, db).references_changed == []


def test_an_edited_front_matter_summary_gives_a_current_reference(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    path = archive / "survey.md"
    path.write_text(f"---\nsummary: {FIRST_REFERENCE}\n---\n{REPORT}")
    db = tmp_path / "s.sqlite"
    _run(archive, db)
    path.write_text(f"---\nsummary: {SECOND_REFERENCE}\n---\n{REPORT}")
    _run(archive, db)
    store = Store(str(db))
    assert store.queries.show(str(path))["reference_summary"]["text"] == SECOND_REFERENCE


def test_a_store_of_the_previous_version_is_migrated_with_its_references_current_since_their_first_run(tmp_path):
    db_path = tmp_path / "old.sqlite"
    db = open_database(str(db_path))
    db.close()
    # Rebuild the file as the previous version would have left it, then reopen it.
    connection = sqlite3.connect(db_path)
    connection.executescript(
        "drop table superseded_scores; drop table reference_history;"
        "alter table reference_summaries drop column since; alter table documents drop column date_source;"
        f"alter table documents drop column modified; pragma user_version = {SCHEMA_VERSION - 1};"
    )
    connection.execute("insert into runs (id, started, status) values (1, '2025-01-01T00:00:00+00:00', 'completed')")
    connection.execute("insert into documents (id, record_key, sha256, text, status, first_run) "
                       "values (1, 'k', 'h', 'Text.', 'active', 1)")
    connection.execute("insert into reference_summaries (document_id, text, source) values (1, 'Ref.', 'sidecar:x')")
    connection.commit()
    connection.close()
    store = Store(str(db_path))
    assert store.db.execute("pragma user_version").fetchone()[0] == SCHEMA_VERSION
    assert store.queries.show("1")["reference_summary"]["since"] == "2025-01-01T00:00:00+00:00"


# ------------------------------------------------------------ forgiving metadata


def test_invalid_front_matter_is_a_warning_and_the_document_is_read(tmp_path):
    path = tmp_path / "lift.md"
    path.write_text("---\ntitle: Inspection INS-2025-114: Harbour Office Lift\n---\nThe lift failed its load test.\n")
    items = list(iter_archive([path]))
    warnings = [item for item in items if isinstance(item, IngestProblem)]
    documents = [item for item in items if not isinstance(item, IngestProblem)]
    assert len(documents) == 1 and documents[0].text == "The lift failed its load test."
    assert [w.kind for w in warnings] == ["warning"]
    assert "front matter is not valid YAML" in warnings[0].reason and "\n" not in str(warnings[0])


def test_a_date_line_in_the_text_wins_over_the_docx_file_property(tmp_path):
    import datetime as dt

    import docx

    path = tmp_path / "audit.docx"
    document = docx.Document()
    document.core_properties.created = dt.datetime(2026, 1, 5)
    document.add_paragraph("Date: 14 March 2019")
    document.add_paragraph("The audit found two gaps in the permit log.")
    document.save(path)
    (read,) = read_file(path)
    assert (read.date, read.date_source) == ("2019-03-14", "document text")
    bare = tmp_path / "bare.docx"
    document = docx.Document()
    document.core_properties.created = dt.datetime(2026, 1, 5)
    document.add_paragraph("The audit found two gaps in the permit log.")
    document.save(bare)
    (read,) = read_file(bare)
    assert (read.date, read.date_source) == ("2026-01-05", "file metadata")


def test_show_and_export_mark_a_file_metadata_date(tmp_path):
    import datetime as dt

    import docx

    archive = tmp_path / "archive"
    archive.mkdir()
    document = docx.Document()
    document.core_properties.created = dt.datetime(2026, 1, 5)
    document.add_paragraph("The audit found two gaps in the permit log. Both were closed in a week.")
    document.save(archive / "audit.docx")
    db = tmp_path / "s.sqlite"
    _run(archive, db)
    runner = CliRunner()
    shown = runner.invoke(main, ["show", str(archive / "audit.docx"), "--db", str(db)])
    assert "date 2026-01-05 (from file metadata)" in shown.output
    out = tmp_path / "out.md"
    assert runner.invoke(main, ["export", "--db", str(db), "--format", "md", "--out", str(out)]).exit_code == 0
    assert "2026-01-05 (file metadata)" in out.read_text()


def test_day_first_numeric_dates_are_read_when_unambiguous_and_reported_when_not(tmp_path):
    assert iso_date("14/03/2019") == "2019-03-14"
    assert iso_date("03/04/2019") is None
    path = tmp_path / "notes.json"
    path.write_text(json.dumps([
        {"id": "N1", "text": "Fender replaced at Berth 5.", "date": "14/03/2019"},
        {"id": "N2", "text": "Ladder repaired at Berth 6.", "date": "03/04/2019"},
    ]))
    items = list(iter_archive([path]))
    documents = {item.record_key.rsplit("#", 1)[1]: item for item in items if not isinstance(item, IngestProblem)}
    assert documents["N1"].date == "2019-03-14" and documents["N1"].date_source == "record field"
    assert documents["N2"].date is None
    (warning,) = [item for item in items if isinstance(item, IngestProblem)]
    assert warning.kind == "warning" and "03/04/2019" in warning.reason and warning.path.endswith("#2")


# ------------------------------------------------------------ duplicates


@pytest.mark.parametrize("copy_name", ["Copy of quay wall report (2).txt", "quay wall report - Copy.txt",
                                       "a (2).txt", "copy_of_report.txt"])
def test_the_original_is_canonical_whatever_the_walk_order(tmp_path, copy_name):
    for order in ("copy first", "original first"):
        archive = tmp_path / order
        archive.mkdir()
        original, copy = archive / "quay wall report.txt", archive / copy_name
        original.write_text(REPORT)
        copy.write_text(REPORT)
        db = tmp_path / f"{order}.sqlite"
        paths = [copy, original] if order == "copy first" else [original, copy]
        for path in paths:  # one run per file: the walk meets them in this order
            run_archive([path], str(db), methods=["lead"])
        store = Store(str(db))
        statuses = dict(store.db.execute("select path, status from documents").fetchall())
        assert statuses == {str(original): "active", str(copy): "duplicate"}, order
        record = store.queries.show(str(copy))
        assert record["canonical_copy"]["record_key"] == str(original)
        assert record["summaries"] and record["summaries"][0]["method"] == "lead"
        shown = CliRunner().invoke(main, ["show", str(copy), "--db", str(db)])
        assert f"duplicate of #{record['canonical_copy']['id']}" in shown.output
        store.close()


def test_copy_markers_and_then_path_length_then_modification_time(tmp_path):
    assert has_copy_marker("/a/Copy of quay wall report (2).txt")
    assert has_copy_marker("/a/report - Copy.docx")
    assert has_copy_marker("/a/copy_of_wendle.pdf")
    assert not has_copy_marker("/a/copyright notes.txt")
    assert not has_copy_marker("/a/report 2025.txt")
    archive = tmp_path / "archive"
    (archive / "deeper").mkdir(parents=True)
    short, longer = archive / "report.txt", archive / "deeper" / "report.txt"
    longer.write_text(REPORT)
    short.write_text(REPORT)
    db = tmp_path / "s.sqlite"
    run_archive([archive], str(db), methods=["lead"])
    store = Store(str(db))
    assert dict(store.db.execute("select path, status from documents").fetchall())[str(short)] == "active"
    store.close()
    same_length = tmp_path / "same"
    same_length.mkdir()
    older, newer = same_length / "b.txt", same_length / "a.txt"
    older.write_text(REPORT)
    newer.write_text(REPORT)
    os.utime(older, (1_600_000_000, 1_600_000_000))
    os.utime(newer, (1_700_000_000, 1_700_000_000))
    db = tmp_path / "t.sqlite"
    run_archive([same_length], str(db), methods=["lead"])
    store = Store(str(db))
    assert dict(store.db.execute("select path, status from documents").fetchall())[str(older)] == "active"


# ------------------------------------------------------------ JSON records in show


def test_show_accepts_a_record_id_and_lists_a_jsonl_files_records(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    path = archive / "incidents.jsonl"
    path.write_text("\n".join(json.dumps(r) for r in [
        {"id": "INC-J01", "title": "Fender strike", "text": "A vessel struck the Berth 5 fender at 03:10."},
        {"id": "INC-J02", "title": "Oil sheen", "text": "An oil sheen was seen near Berth 6 at dawn."},
    ]) + "\n")
    db = tmp_path / "s.sqlite"
    _run(archive, db)
    store = Store(str(db))
    assert store.queries.show("INC-J02")["document"]["title"] == "Oil sheen"
    assert [r["record_id"] for r in store.queries.file_records(str(path))] == ["INC-J01", "INC-J02"]
    with pytest.raises(DocumentNotFound):
        store.queries.show("INC-J99")
    runner = CliRunner()
    listing = runner.invoke(main, ["show", str(path), "--db", str(db)])
    assert listing.exit_code == 0 and "INC-J01" in listing.output and "INC-J02" in listing.output
    one = runner.invoke(main, ["show", "INC-J01", "--db", str(db)])
    assert one.exit_code == 0 and "Fender strike" in one.output
    as_json = json.loads(runner.invoke(main, ["show", str(path), "--db", str(db), "--json"]).output)
    assert [r["record_id"] for r in as_json["records"]] == ["INC-J01", "INC-J02"]


def test_a_reference_found_beside_a_copy_survives_reruns_of_the_original(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "Copy of survey.txt").write_text(REPORT)
    (archive / "Copy of survey.summary.txt").write_text(FIRST_REFERENCE)
    (archive / "survey.txt").write_text(REPORT)
    db = tmp_path / "s.sqlite"
    _run(archive, db)
    assert _run(archive, db).references_changed == []
    store = Store(str(db))
    record = store.queries.show(str(archive / "survey.txt"))
    assert record["document"]["status"] == "active"
    assert record["reference_summary"]["text"] == FIRST_REFERENCE
    assert "found with" in record["reference_summary"]["source"]
