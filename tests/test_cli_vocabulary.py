"""What a new user types, and what should happen: one budget grammar for every
command, settings named in words, and one-line errors with the README's exit status.

Common practice, no external source: each test pins a behaviour the README promises.
"""

from __future__ import annotations

import csv
import html
import shutil
import sqlite3
from pathlib import Path

import pytest
from click.testing import CliRunner

from summarize import api
from summarize.cli import main

DEMO = Path(__file__).resolve().parent.parent / "demo_archive"


def invoke(*args: str):
    return CliRunner().invoke(main, [str(arg) for arg in args])


def one_error_line(result, *expected: str) -> None:
    """The run ended with a one-line ``error:`` message (no traceback) holding ``expected``."""
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), result.stderr
    for text in expected:
        assert text in lines[0], lines[0]


@pytest.fixture(scope="module")
def scored(tmp_path_factory) -> tuple[Path, Path]:
    """Two folders of the demo archive, run at 3 sentences and at 10%, then scored."""
    folder = tmp_path_factory.mktemp("vocabulary")
    archive = folder / "archive"
    for part in ("audits", "closeouts"):
        shutil.copytree(DEMO / part, archive / part)
    db = folder / "store.sqlite"
    assert invoke("run", archive, "--db", db, "--quiet").exit_code == 0
    assert invoke("run", archive, "--db", db, "--methods", "textrank", "--mmr", "0.7", "--quiet").exit_code == 0
    assert invoke("run", archive, "--db", db, "--methods", "lead", "--budget", "10%", "--quiet").exit_code == 0
    assert invoke("score", "--db", db).exit_code == 0
    return archive, db


def summary_count(db: Path) -> int:
    with sqlite3.connect(db) as conn:
        return conn.execute("select count(*) from summaries").fetchone()[0]


def test_a_budget_written_as_two_words_is_caught(scored, tmp_path):
    archive, _ = scored
    db = tmp_path / "new.sqlite"
    result = invoke("run", archive, "--db", db, "--budget", "80", "words", "--quiet")
    assert result.exit_code == 2  # the shell split "80 words": refused before any work
    one_error_line(result, "words: no such file or folder", "--budget 80w")
    assert not db.exists()
    db = tmp_path / "other.sqlite"
    spaced = invoke("run", archive, "--db", db, "--budget", "80 words")
    assert spaced.exit_code == 2 and "'80w' (words)" in spaced.stderr and not db.exists()


def test_compare_reads_3_as_sentences_and_accepts_a_share(scored):
    _, db = scored
    three = invoke("compare", "--db", db, "--budget", "3")
    assert three.exit_code == 0, three.output
    assert "Budget: 3 sentences" in three.stdout and "No scored summaries" not in three.stdout
    share = invoke("compare", "--db", db, "--budget", "10%")
    assert share.exit_code == 0, share.output
    assert "Budget: 10% of the document's words" in share.stdout


def test_a_budget_without_scores_is_an_error_not_an_empty_report(scored, tmp_path):
    _, db = scored
    out = tmp_path / "report.html"
    empty = invoke("report", "--db", db, "--budget", "80w", "--out", out)
    assert empty.exit_code == 1
    one_error_line(empty, "no scored summaries at budget '80w'", "3 sentences")
    assert not out.exists()
    written = invoke("report", "--db", db, "--budget", "3", "--out", out)
    assert written.exit_code == 0 and "textrank · MMR 0.7" in out.read_text(encoding="utf-8")
    assert invoke("compare", "--db", db, "--budget", "80w").exit_code == 1


def test_two_settings_of_one_method_are_told_apart_in_words(scored, tmp_path):
    _, db = scored
    table = invoke("compare", "--db", db, "--budget", "3").stdout
    assert "textrank · MMR 0.7" in table and "#" not in table
    shown = invoke("show", "1", "--db", db, "--method", "textrank")
    assert "textrank · 3 sentences · MMR 0.7" in shown.stdout and "parameters" not in shown.stdout
    for fmt in ("md", "html"):
        out = tmp_path / f"summaries.{fmt}"
        assert invoke("export", "--db", db, "--format", fmt, "--out", out, "--every-summary").exit_code == 0
        text = html.unescape(out.read_text(encoding="utf-8"))
        assert "lead · 3 sentences" in text and "lead · 10% of the document's words" in text
        assert "**lead**" not in text and "<p class='method'>lead</p>" not in text


def test_budget_filters_on_show_and_export(scored, tmp_path):
    _, db = scored
    record = api.show(db, "1", budget="10%")
    assert [s["setting"] for s in record["summaries"]] == [
        "lead · 10% of the document's words", "oracle · 10% of the document's words"
    ]
    out = tmp_path / "ten.csv"
    result = invoke("export", "--db", db, "--format", "csv", "--out", out, "--budget", "10%", "--method", "lead")
    assert result.exit_code == 0
    with open(out, encoding="utf-8-sig", newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert rows and {(row["method"], row["budget"]) for row in rows} == {("lead", "10% of the document's words")}
    assert f"wrote {len(rows)} rows" in result.stdout


@pytest.mark.parametrize(
    "args",
    [
        ("run", "{archive}", "--db", "{db}", "--methods", "bogus"),
        ("score", "--db", "{db}", "--methods", "bogus"),
        ("score", "--db", "{db}", "--budget", "lots"),
        ("compare", "--db", "{db}", "--budget", "80 words"),
        ("report", "--db", "{db}", "--budget", "reference-ish", "--out", "{tmp}/r.html"),
        ("export", "--db", "{db}", "--format", "csv", "--out", "{tmp}/x.csv", "--every-summary", "--methods", "bogus"),
        ("export", "--db", "{db}", "--format", "csv", "--out", "{tmp}/x.csv", "--method", "bogus"),
        ("export", "--db", "{db}", "--format", "csv", "--out", "{tmp}/x.csv", "--budget", "80 words"),
        ("show", "1", "--db", "{db}", "--method", "bogus"),
        ("find", "pump", "--db", "{db}", "--method", "bogus"),
        ("run", "{archive}", "--db", "{db}", "--until", "25:99"),
        ("run", "{archive}", "--db", "{db}", "--budget", "reference"),
    ],
)
def test_unknown_methods_budgets_and_times_are_usage_errors(scored, tmp_path, args):
    archive, db = scored
    before = summary_count(db)
    result = invoke(*(arg.format(archive=archive, db=db, tmp=tmp_path) for arg in args))
    assert result.exit_code == 2, result.output
    one_error_line(result)
    assert summary_count(db) == before


def test_a_missing_path_is_named_not_reported_as_all_stored(scored):
    _, db = scored
    result = invoke("run", "archive/nope", "--db", db, "--quiet")
    assert result.exit_code == 3
    one_error_line(result, "archive/nope: no such file or directory")
    assert "every summary is already stored" not in result.output


def test_output_into_a_missing_folder_and_a_foreign_store_are_one_line_errors(scored, tmp_path):
    _, db = scored
    missing = tmp_path / "nonexistent" / "x.html"
    for args in (
        ("export", "--db", db, "--format", "html", "--out", missing),
        ("report", "--db", db, "--out", missing),
    ):
        result = invoke(*args)
        assert result.exit_code == 1
        one_error_line(result, "does not exist")
    pdf = tmp_path / "some.pdf"
    pdf.write_bytes(b"%PDF-1.4 not a store")
    for args in (("show", "1", "--db", pdf), ("compare", "--db", pdf), ("export", "--db", pdf, "--format", "csv",
                                                                         "--out", tmp_path / "y.csv")):
        result = invoke(*args)
        assert result.exit_code == 1
        one_error_line(result, "not a summary store")
    assert pdf.read_bytes() == b"%PDF-1.4 not a store"


def test_an_empty_selection_for_export_is_an_error(scored, tmp_path):
    _, db = scored
    out = tmp_path / "none.csv"
    result = invoke("export", "--db", db, "--format", "csv", "--out", out, "--every-summary", "--methods", "random")
    assert result.exit_code == 1
    one_error_line(result, "no summaries of random")
    assert not out.exists()


def test_a_bug_shows_as_a_bug(scored, monkeypatch):
    _, db = scored

    def broken(*_args, **_kwargs):
        raise KeyError("a programming error")

    monkeypatch.setattr(api, "find", broken)
    result = invoke("find", "pump", "--db", db)
    assert isinstance(result.exception, KeyError)
    assert "error:" not in result.stderr


def test_train_classifier_is_not_run_model(scored):
    _, db = scored
    help_text = invoke("train", "--help").stdout
    assert "--classifier" in help_text and "--model" not in help_text
    assert invoke("train", "--db", db, "--model", "logistic").exit_code == 2
