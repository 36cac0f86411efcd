"""CSV export defaults: one row per document for one method at one budget, status and
budget columns, a byte-order mark, one line per cell, and no cell a spreadsheet would
run as a formula."""

from __future__ import annotations

import codecs
import csv
import io
import sqlite3

import pytest
from click.testing import CliRunner

from store.store import Store
from summarize.cli import main
from summarize.output.export import CSV_COLUMNS, spreadsheet_cell
from summarize.output.summary_choice import SummaryChoiceError, choose_summaries, summary_choices
from tests.review_store import build_review_store


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    path = tmp_path_factory.mktemp("export") / "store.sqlite"
    return path, build_review_store(path)


def _csv(path) -> tuple[bytes, list[dict]]:
    raw = path.read_bytes()
    return raw, list(csv.DictReader(io.StringIO(raw.decode("utf-8-sig"), newline="")))


# External check: OWASP, "CSV Injection"
# (owasp.org/www-community/attacks/CSV_Injection): cells beginning with =, +, -, @, tab or carriage return are prefixed with a single quote.
@pytest.mark.parametrize(
    "value, expected",
    [
        ("=1+2", "'=1+2"),
        ("+44 1632 960000", "'+44 1632 960000"),
        ("-2+3", "'-2+3"),
        ("@SUM(A1:A2)", "'@SUM(A1:A2)"),
        ("\tindented", "'\tindented"),
        ("\r=cmd", "' =cmd"),
        ("Plain text = fine", "Plain text = fine"),
        ("line one\nline two\r\n\r\nline three", "line one line two line three"),
        (42, 42),
    ],
)
def test_cells_are_neutralised_and_flattened(value, expected):
    assert spreadsheet_cell(value) == expected


def test_default_export_is_one_row_per_document(store, tmp_path):
    path, ids = store
    out = tmp_path / "out.csv"
    result = CliRunner().invoke(main, ["export", "--db", str(path), "--format", "csv", "--out", str(out)])
    assert result.exit_code == 0, result.output
    raw, rows = _csv(out)
    assert raw.startswith(codecs.BOM_UTF8)
    assert list(rows[0]) == list(CSV_COLUMNS)
    # The choice covering most documents: lead at 2 sentences (every summarized current document).
    assert {row["method"] for row in rows} == {"lead"} and {row["budget"] for row in rows} == {"2 sentences"}
    document_ids = [int(row["document_id"]) for row in rows]
    assert len(document_ids) == len(set(document_ids))
    assert set(document_ids) == {ids["long"], ids["minutes"], ids["inspection"], ids["current"], ids["payload"]}
    assert {row["status"] for row in rows} == {"active"}
    payload = next(row for row in rows if int(row["document_id"]) == ids["payload"])
    assert payload["title"].startswith("'=HYPERLINK")
    assert all("\n" not in value and "\r" not in value for row in rows for value in row.values())
    assert "lead · 2 sentences" in result.output


def test_chosen_method_and_budget_and_missing_documents(store, tmp_path):
    path, ids = store
    out = tmp_path / "out.csv"
    args = ["export", "--db", str(path), "--format", "csv", "--out", str(out), "--method", "lead", "--budget", "40w"]
    assert CliRunner().invoke(main, args).exit_code == 0
    assert [(row["method"], row["budget"]) for row in _csv(out)[1]] == [("lead", "40 words")]
    args = ["export", "--db", str(path), "--format", "csv", "--out", str(out), "--method", "lead", "--budget", "2",
            "--include-missing"]
    assert CliRunner().invoke(main, args).exit_code == 0
    statuses = {int(row["document_id"]): row["status"] for row in _csv(out)[1]}
    assert statuses[ids["missing"]] == "missing"
    every = ["export", "--db", str(path), "--format", "jsonl", "--out", str(out), "--every-summary"]
    assert CliRunner().invoke(main, every).exit_code == 0
    with sqlite3.connect(path) as connection:
        stored = connection.execute(
            "select count(*) from summaries s join documents d on d.id = s.document_id where d.status = 'active'"
        ).fetchone()[0]
    assert len(out.read_text(encoding="utf-8").splitlines()) == stored


def test_unknown_or_ambiguous_choices_are_one_line_errors(store, tmp_path):
    path, _ = store
    out = tmp_path / "out.csv"
    result = CliRunner().invoke(main, ["export", "--db", str(path), "--format", "csv", "--out", str(out),
                                       "--method", "tfidf"])
    assert result.exit_code == 2 and "no stored summaries fit" in result.output and "Traceback" not in result.output
    store = Store(str(path), read_only=True)
    with pytest.raises(SummaryChoiceError, match="several stored settings fit"):
        choose_summaries(store, method="lead")
    labels = [choice.label for choice in summary_choices(store)]
    assert any(label.startswith("seq2seq · the method's own length: 0 to 40 generated tokens") for label in labels)
    assert not any(label.startswith("oracle") for label in labels)
    store.close()
