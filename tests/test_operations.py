"""Overnight operation of `summarize run`: kill -9 at random moments, time budgets,
SIGTERM, worker processes, changed and vanished files, job files, progress output.

The reference for every interrupted run is the same command run once without
interruption: the store it leaves is what any mix of kills, stops and reruns must
end in (common practice for crash-recovery tests; no outside source)."""

from __future__ import annotations

import io
import json
import random
import signal
import sqlite3
import time
from datetime import datetime, timedelta
from pathlib import Path

import psutil
import pytest
from click.testing import CliRunner
from operations_support import (
    assert_store_sound,
    count_rows,
    document_statuses,
    generated_archive,
    run_cli,
    run_report,
    start_cli,
    summaries,
    wait_for,
)

from store.records import Document, Segmentation, SourceLink, Span, Summary, SummarySentence
from store.store import Store
from summarize.cli import main
from summarize.runs.progress import TerminalProgress
from summarize.runs.runner import run_archive
from summarize.runs.stopping import StopConditions, parse_until

ARCHIVE_SIZE = 50
KILL_ROUNDS = 10
KILL_SEED = 20250611
# Small groups, committed by count only, so a run holds many groups and every kill
# lands inside one (the reference run keeps the default grouping).
GROUP_DOCUMENTS = 4


@pytest.fixture(scope="module")
def archive_and_reference(tmp_path_factory):
    """A generated archive big enough to be interrupted, its uninterrupted store, and
    how long that run held the store (from taking the lock to exiting)."""
    folder = tmp_path_factory.mktemp("operations")
    archive = generated_archive(folder / "archive", ARCHIVE_SIZE, seed=3)
    reference = folder / "reference.sqlite"
    process = start_cli("run", str(archive), "--db", str(reference), "--json")
    assert wait_for(lambda: Path(f"{reference}.lock").exists() or process.poll() is not None, 120)
    locked_at = time.monotonic()
    out, err = process.communicate(timeout=300)
    busy_seconds = time.monotonic() - locked_at
    assert process.returncode == 0, err
    assert json.loads(out)["documents_summarized"] == ARCHIVE_SIZE
    assert_store_sound(reference)
    return archive, reference, busy_seconds


def _killed_run(archive: Path, db: Path, delay: float) -> int | None:
    """Start a run that commits documents in groups of ``GROUP_DOCUMENTS``, kill -9 it
    ``delay`` seconds after it took the store's lock; returns its pid, or None when
    it had already finished."""
    process = start_cli("run", str(archive), "--db", str(db), "--quiet",
                        "--group-documents", str(GROUP_DOCUMENTS), "--group-seconds", "600")
    assert wait_for(lambda: Path(f"{db}.lock").exists() or process.poll() is not None, 120)
    time.sleep(delay)
    killed = process.poll() is None
    if killed:
        process.send_signal(signal.SIGKILL)
    process.communicate(timeout=60)
    return process.pid if killed else None


@pytest.mark.slow
def test_kill_9_at_random_moments_then_rerun_ends_as_an_uninterrupted_run(archive_and_reference, tmp_path):
    # External check: SQLite, PRAGMA integrity_check
    archive, reference, busy_seconds = archive_and_reference
    expected = summaries(reference)
    rng = random.Random(KILL_SEED)
    for round_number in range(KILL_ROUNDS):
        db = tmp_path / f"killed_{round_number}.sqlite"
        # One moment in each tenth of the reference run's busy time, so the kills
        # cover creating the store, reading, fitting and summarizing.
        delay = 0.9 * busy_seconds * (round_number + rng.random()) / KILL_ROUNDS
        while (pid := _killed_run(archive, db, delay)) is None:
            delay /= 2  # this run was quicker than the reference: kill earlier
            for leftover in tmp_path.glob(f"{db.name}*"):
                leftover.unlink()
        if db.exists():
            assert_store_sound(db)
            _assert_whole_groups(db)
        lock_left = Path(f"{db}.lock").exists()  # not when killed after releasing it
        messages = io.StringIO()
        rerun = run_archive([archive], str(db), progress=TerminalProgress(stream=messages))
        assert rerun.exit_status == 0, messages.getvalue()
        assert (f"took over the lock left by process {pid}" in messages.getvalue()) == lock_left
        assert_store_sound(db)
        assert summaries(db) == expected, f"round {round_number}: killed {delay:.2f}s after locking"
        with sqlite3.connect(db) as conn:
            statuses = [status for (status,) in conn.execute("select status from runs where pid = ?", [pid])]
        # The killed run is marked interrupted by the rerun, unless it was killed
        # after recording its own end (or before recording its start).
        assert statuses in ([], ["interrupted"], ["completed"])
        assert not Path(f"{db}.lock").exists()


def _assert_whole_groups(db: Path) -> None:
    """A killed run left whole groups only: the documents stored, and the documents
    summarized, are a multiple of the group size (or all of them)."""
    with sqlite3.connect(db) as conn:
        tables = {name for (name,) in conn.execute("select name from sqlite_master where type = 'table'")}
        if "documents" not in tables:
            return
        stored = conn.execute("select count(*) from documents").fetchone()[0]
        summarized = conn.execute("select count(distinct document_id) from summaries").fetchone()[0]
    for count in (stored, summarized):
        assert count % GROUP_DOCUMENTS == 0 or count == ARCHIVE_SIZE, (stored, summarized)


@pytest.mark.slow
def test_kill_9_of_a_run_with_workers_leaves_no_worker_behind(archive_and_reference, tmp_path):
    archive, reference, _ = archive_and_reference
    db = tmp_path / "workers_killed.sqlite"
    process = start_cli("run", str(archive), "--db", str(db), "--workers", "2", "--quiet")
    try:
        assert wait_for(lambda: len(psutil.Process(process.pid).children()) == 2 or process.poll() is not None, 120)
        workers = psutil.Process(process.pid).children()
        assert len(workers) == 2, "the run ended before it could be killed"
    finally:
        process.send_signal(signal.SIGKILL)
        process.communicate(timeout=60)
    _, alive = psutil.wait_procs(workers, timeout=30)
    assert alive == []
    assert_store_sound(db)
    assert run_archive([archive], str(db), progress=TerminalProgress(stream=io.StringIO())).exit_status == 0
    assert summaries(db) == summaries(reference)


@pytest.mark.slow
def test_time_budget_stops_cleanly_reports_what_remains_and_a_rerun_finishes(archive_and_reference, tmp_path):
    archive, reference, _ = archive_and_reference
    db = tmp_path / "budget.sqlite"
    # 0.1 s: far less than reading and splitting the archive takes on any machine.
    stopped = run_cli("run", str(archive), "--db", str(db), "--max-minutes", "0.002", "--json")
    assert stopped.returncode == 4, stopped.stderr
    report = run_report(stopped)
    assert report["stop_reason"] == "time budget of 0.002 minutes used"
    assert report["documents_remaining"] > 0
    assert report["documents_remaining"] + report["documents_summarized"] == ARCHIVE_SIZE
    assert "rerun the same command to finish" in stopped.stderr
    assert_store_sound(db)
    finished = run_cli("run", str(archive), "--db", str(db), "--json")
    assert finished.returncode == 0, finished.stderr
    assert run_report(finished)["documents_remaining"] == 0
    assert summaries(db) == summaries(reference)


@pytest.mark.slow
def test_sigterm_stops_after_the_document_in_flight(archive_and_reference, tmp_path):
    archive, reference, _ = archive_and_reference
    db = tmp_path / "sigterm.sqlite"
    # Groups of one: the first committed summary shows the summarizing pass under way.
    process = start_cli("run", str(archive), "--db", str(db), "--json", "--group-documents", "1")
    assert wait_for(lambda: count_rows(db, "summaries") > 0 or process.poll() is not None, 120, interval=0.01)
    process.send_signal(signal.SIGTERM)
    out, err = process.communicate(timeout=60)
    assert process.returncode == 4, err
    report = json.loads(out)
    assert report["stop_reason"] == "stopped by SIGTERM"
    assert report["documents_remaining"] > 0
    assert report["documents_remaining"] + report["documents_summarized"] == ARCHIVE_SIZE
    assert_store_sound(db)
    with sqlite3.connect(db) as conn:
        per_document = {n for (n,) in conn.execute("select count(*) from summaries group by document_id")}
        assert conn.execute("select status from runs").fetchall() == [("stopped",)]
    assert per_document == {3}, "a document was left with only some of its summaries"
    assert run_cli("run", str(archive), "--db", str(db)).returncode == 0
    assert summaries(db) == summaries(reference)


@pytest.mark.slow
def test_two_worker_processes_give_the_same_summaries_as_one(archive_and_reference, tmp_path):
    archive, reference, _ = archive_and_reference
    db = tmp_path / "two_workers.sqlite"
    result = run_cli("run", str(archive), "--db", str(db), "--workers", "2", "--json")
    assert result.returncode == 0, result.stderr
    assert summaries(db) == summaries(reference)
    with sqlite3.connect(db) as conn:
        (run_id, config), = conn.execute("select id, config from runs").fetchall()
        assert json.loads(config)["workers"] == 2
        assert conn.execute("select distinct run_id from summaries").fetchall() == [(run_id,)]


def _statuses_by_key(db: Path) -> dict[str, list[str]]:
    found: dict[str, list[str]] = {}
    for record_key, _sha, status in document_statuses(db):
        found.setdefault(record_key, []).append(status)
    return {key: sorted(value) for key, value in found.items()}


def _run_here(archive: Path, db: Path) -> tuple[int, dict, list[str]]:
    """An in-process run: exit status, counts, errors."""
    report = run_archive([archive], str(db), progress=TerminalProgress(stream=io.StringIO()))
    return report.exit_status, report.counts(), report.errors


@pytest.mark.slow
def test_changed_removed_restored_and_reverted_files(tmp_path):
    archive = generated_archive(tmp_path / "archive", 4, seed=5)
    db = tmp_path / "versions.sqlite"
    changed, removed = sorted(archive.rglob("*.txt"))[:2]
    original = changed.read_text(encoding="utf-8")
    kept = removed.read_text(encoding="utf-8")

    assert _run_here(archive, db)[1]["summaries_added"] == 12

    changed.write_text(original + "\nA late note: the inspection was repeated in March and found no new defects.\n",
                       encoding="utf-8")
    status, counts, _ = _run_here(archive, db)
    assert status == 0
    assert (counts["documents_added"], counts["summaries_added"], counts["summaries_skipped"]) == (1, 3, 9)
    assert _statuses_by_key(db)[str(changed)] == ["active", "replaced"]
    with sqlite3.connect(db) as conn:
        per_version = conn.execute(
            "select d.status, count(s.id) from documents d join summaries s on s.document_id = d.id "
            "where d.record_key = ? group by d.id order by d.id", [str(changed)]
        ).fetchall()
    assert per_version == [("replaced", 3), ("active", 3)]

    removed.unlink()
    status, counts, _ = _run_here(archive, db)
    assert (status, counts["missing"]) == (0, 1)
    assert _statuses_by_key(db)[str(removed)] == ["missing"]
    assert count_rows(db, "summaries") == 15  # nothing deleted

    removed.write_text(kept, encoding="utf-8")
    changed.write_text(original, encoding="utf-8")
    status, counts, _ = _run_here(archive, db)
    assert (status, counts["documents_added"], counts["summaries_added"]) == (0, 0, 0)
    assert _statuses_by_key(db)[str(removed)] == ["active"]
    with sqlite3.connect(db) as conn:
        versions = conn.execute("select status from documents where record_key = ? order by id", [str(changed)]).fetchall()
    assert versions == [("active",), ("replaced",)]  # the first version is current again

    changed.write_bytes(b"")  # present but unreadable: keeps its stored version
    status, counts, errors = _run_here(archive, db)
    assert (status, counts["missing"]) == (3, 0)
    assert errors == [f"{changed}: empty file"]
    assert _statuses_by_key(db)[str(changed)] == ["active", "replaced"]
    assert_store_sound(db)


def test_job_file_settings_are_used_and_flags_override_them(tmp_path):
    archive = generated_archive(tmp_path / "nightly" / "archive", 3, seed=9)
    job = tmp_path / "nightly" / "night.toml"
    # Paths in a job file are relative to the job file's folder.
    job.write_text('paths = ["archive"]\ndb = "night.sqlite"\nmethods = ["lead"]\nbudget = "2"\nlog = "night.log"\n',
                   encoding="utf-8")
    db = job.parent / "night.sqlite"
    runner = CliRunner()
    first = runner.invoke(main, ["run", "--job", str(job)])
    assert first.exit_code == 0, first.output
    with sqlite3.connect(db) as conn:
        assert conn.execute("select distinct method from summaries").fetchall() == [("lead",)]
        assert {n for (n,) in conn.execute("select count(*) from summary_sentences group by summary_id")} == {2}
    assert "3 documents summarized" in (job.parent / "night.log").read_text(encoding="utf-8")

    overridden = runner.invoke(main, ["run", "--job", str(job), "--methods", "tfidf", "--budget", "1", "--json"])
    assert overridden.exit_code == 0, overridden.output
    with sqlite3.connect(db) as conn:
        rows = conn.execute(
            "select method, count(*) from summary_sentences t join summaries s on s.id = t.summary_id group by s.id"
        ).fetchall()
    assert sorted(set(rows)) == [("lead", 2), ("tfidf", 1)]
    assert json.loads(overridden.stdout)["documents_seen"] == len(list(archive.rglob("*.txt")))

    job.write_text('paths = ["archive"]\ndb = "night.sqlite"\nworkrs = 2\n', encoding="utf-8")
    refused = runner.invoke(main, ["run", "--job", str(job)])
    assert refused.exit_code == 2
    assert "unknown setting 'workrs'" in refused.output and "night.toml" in refused.output


def test_until_in_the_past_stops_before_any_work(tmp_path):
    archive = generated_archive(tmp_path / "archive", 3, seed=1)
    db = tmp_path / "until.sqlite"
    stop = StopConditions(until=datetime.now() - timedelta(minutes=1))
    report = run_archive([archive], str(db), stop=stop, progress=TerminalProgress(stream=io.StringIO()))
    assert report.stop_reason.startswith("reached --until")
    assert report.exit_status == 4
    assert report.documents_remaining == 3
    assert count_rows(db, "summaries") == 0


def test_until_means_the_next_such_time_of_day():
    evening = datetime(2025, 3, 4, 22, 15)
    assert parse_until("06:30", now=evening) == datetime(2025, 3, 5, 6, 30)
    assert parse_until("23:00", now=evening) == datetime(2025, 3, 4, 23, 0)
    with pytest.raises(ValueError, match="HH:MM"):
        parse_until("6.30pm", now=evening)


def _fail_inserts_into(store: Store, table: str) -> None:
    """Make every insert into ``table`` fail, as a crash between two statements of a
    transaction would (a temporary trigger: SQLite's RAISE(ABORT))."""
    store.db.execute(
        f"create temp trigger fail_{table} before insert on {table} begin select raise(abort, 'disk went away'); end"
    )


def _one_document() -> tuple[Document, Segmentation]:
    text = "The gate was inspected on Monday. Two hinges were replaced."
    document = Document(record_key="gate.txt", path="gate.txt", text=text, format="txt", sha256="ab" * 32, size=len(text))
    sentences = (Span(0, 33), Span(34, len(text)))
    return document, Segmentation(paragraphs=(Span(0, len(text)),), sentences=sentences,
                                  sentence_paragraph=(0, 0), sentence_is_heading=(False, False))


def test_a_document_is_written_whole_or_not_at_all(tmp_path):
    store = Store(str(tmp_path / "atomic.sqlite"))
    run_id = store.runs.begin("run", {})
    document, segmentation = _one_document()
    _fail_inserts_into(store, "document_sentences")
    with pytest.raises(sqlite3.IntegrityError, match="disk went away"):
        store.add_document(document, segmentation, run_id)
    assert store.db.execute("select count(*) from documents").fetchone() == (0,)


def test_a_summary_is_written_whole_or_not_at_all(tmp_path):
    store = Store(str(tmp_path / "atomic.sqlite"))
    run_id = store.runs.begin("run", {})
    document, segmentation = _one_document()
    document_id, added, _ = store.add_document(document, segmentation, run_id)
    summary = Summary(method="lead", params={}, sentences=[
        SummarySentence(text="The gate was inspected on Monday.", score=1.0, sources=(SourceLink(Span(0, 33), 1.0),))
    ])
    _fail_inserts_into(store, "summary_sentences")
    with pytest.raises(sqlite3.IntegrityError, match="disk went away"):
        store.add_summary(document_id, run_id, summary)
    assert store.db.execute("select count(*) from summaries").fetchone() == (0,)


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_bar_on_a_terminal_and_plain_lines_otherwise():
    terminal = _Terminal()
    bar = TerminalProgress(stream=terminal)
    bar.start(10, "documents summarized")
    for _ in range(4):
        bar.advance()
    bar.close()
    drawn = terminal.getvalue()
    assert "4/10" in drawn and "doc/s" in drawn and "<" in drawn  # tqdm's rate and time left

    log = io.StringIO()
    plain = TerminalProgress(stream=log, every_seconds=0)
    plain.start(4, "documents summarized")
    for _ in range(4):
        plain.advance()
    lines = log.getvalue().splitlines()
    assert lines[0].startswith("1/4 documents summarized, ") and "min left" in lines[0]
    assert lines[-1].startswith("4/4 documents summarized, ") and lines[-1].endswith("/s")
    assert "\r" not in log.getvalue()
