"""Counts a time-boxed run reports when it stops: files not read yet and documents
remaining, at many points of a run (in the reading pass, between the passes, in the
summarizing pass).

Time is driven by a clock of our own passed to ``StopConditions``: it moves one
second each time the run asks it, so ``max_minutes = k / 60`` stops the run at its
k-th look at the clock, the same way on every machine. The truth each count is held
to comes from outside the run's own bookkeeping: the files are listed by the test,
what the stopped run read is read back from the store, and the documents remaining
are what a run finishing the work (on a copy of the store) actually summarizes.
(Common practice for checking progress counts; no outside source.)
"""

from __future__ import annotations

import io
import json
import sqlite3
from pathlib import Path

import pytest
from operations_support import generated_archive

from summarize.runs.progress import TerminalProgress
from summarize.runs.runner import run_archive
from summarize.runs.stopping import StopConditions

METHODS = ("lead", "tfidf")


class TickingClock:
    """A clock that moves one second every time it is read."""

    def __init__(self):
        self.now = 0.0
        self.reads = 0

    def __call__(self) -> float:
        self.reads += 1
        self.now += 1.0
        return self.now


def budget_at(reads: int) -> StopConditions:
    """Stops the run at its ``reads``-th look at the clock (the constructor takes one)."""
    return StopConditions(max_minutes=reads / 60, clock=TickingClock())


def quiet() -> TerminalProgress:
    return TerminalProgress(stream=io.StringIO())


def build_archive(folder: Path, reports: int = 7) -> Path:
    """Single-document files in two folders, a byte-for-byte copy, a file that cannot
    be read, an excluded folder and a stray file type."""
    archive = generated_archive(folder, reports, seed=11)
    reports = sorted(archive.rglob("*.txt"))
    (archive / "copies").mkdir()
    (archive / "copies" / "again.txt").write_bytes(reports[0].read_bytes())
    (archive / "copies" / "empty.txt").write_bytes(b"")
    (archive / "copies" / "notes.bin").write_bytes(b"\x00\x01")
    (archive / "scratch").mkdir()
    (archive / "scratch" / "draft.txt").write_text(reports[1].read_text(encoding="utf-8") + " Draft.", encoding="utf-8")
    return archive


def document_files(archive: Path) -> set[str]:
    """The files a run reads, listed here independently of the walk: supported
    suffix, no hidden part, not in the excluded folder."""
    return {
        str(path.resolve())
        for path in archive.rglob("*")
        if path.is_file() and path.suffix == ".txt" and "scratch" not in path.parts and ".summary." not in path.name
    }


def files_read_in(db: Path, run_id: int) -> set[str]:
    """What the store shows the run read: documents it stored or saw again, and
    files it recorded a problem for."""
    with sqlite3.connect(db) as conn:
        stored = {path for (path,) in conn.execute(
            "select path from documents where first_run = ? or last_run = ?", [run_id, run_id]
        )}
        failed = {path.split("#")[0] for (path,) in conn.execute(
            "select path from ingest_problems where run_id = ?", [run_id]
        )}
    return stored | failed


def copy_store(db: Path, to: Path) -> Path:
    with sqlite3.connect(db) as source, sqlite3.connect(to) as target:
        source.backup(target)
    return to


def clock_reads_of_a_whole_run(archive: str, db: Path) -> int:
    clock = TickingClock()
    report = run_archive([archive], str(db), methods=METHODS, exclude=["scratch"], progress=quiet(),
                         stop=StopConditions(max_minutes=10_000, clock=clock))
    assert report.stop_reason is None
    return clock.reads


def test_counts_are_right_wherever_a_time_budget_stops_the_run(tmp_path, monkeypatch):
    build_archive(tmp_path / "archive")
    # A relative archive path, as an operator types it in a crontab.
    monkeypatch.chdir(tmp_path)
    archive = "archive"
    files = document_files(tmp_path / "archive")
    total_reads = clock_reads_of_a_whole_run(archive, tmp_path / "whole.sqlite")

    seen_phases = set()
    for reads in range(1, total_reads, max(1, total_reads // 14)):
        db = tmp_path / f"stopped_{reads}.sqlite"
        stopped = run_archive([archive], str(db), methods=METHODS, exclude=["scratch"], progress=quiet(),
                              stop=budget_at(reads))
        assert stopped.exit_status == 4 and stopped.stop_reason.startswith("time budget")

        read = files_read_in(db, stopped.run_id) & files
        assert stopped.files_unread == len(files - read), f"stopped at clock read {reads}"
        assert set(stopped.unread) == files - read

        finishing = run_archive([archive], str(copy_store(db, tmp_path / f"finished_{reads}.sqlite")),
                                methods=METHODS, exclude=["scratch"], progress=quiet())
        assert finishing.stop_reason is None
        # A file the store has never seen counts as one document until it is read;
        # here two such files turn out to hold none that needs summarizing.
        never_seen_without_work = {str(tmp_path / "archive" / "copies" / name) for name in ("again.txt", "empty.txt")}
        expected = finishing.documents_summarized + len(never_seen_without_work & set(stopped.unread))
        assert stopped.documents_remaining == expected, f"stopped at clock read {reads}"
        seen_phases.add("reading" if stopped.files_unread else
                        "summarizing" if stopped.documents_summarized else "between")
    assert seen_phases == {"reading", "between", "summarizing"}


def test_reruns_with_growing_budgets_never_count_up(tmp_path, monkeypatch):
    build_archive(tmp_path / "archive")
    monkeypatch.chdir(tmp_path)
    db = tmp_path / "nightly.sqlite"
    total_reads = clock_reads_of_a_whole_run("archive", tmp_path / "whole.sqlite")

    unread, remaining = [], []
    for reads in range(3, total_reads, max(1, total_reads // 8)):
        night = run_archive(["archive"], str(db), methods=METHODS, exclude=["scratch"], progress=quiet(),
                            stop=budget_at(reads))
        if night.stop_reason is None:
            # A night with less left to do than a whole run may finish within its budget.
            finished_by = night
            break
        unread.append(night.files_unread)
        remaining.append(night.documents_remaining)
    else:
        finished_by = run_archive(["archive"], str(db), methods=METHODS, exclude=["scratch"], progress=quiet())
    assert len(remaining) >= 3
    assert remaining == sorted(remaining, reverse=True) and remaining[0] > remaining[-1]
    assert unread == sorted(unread, reverse=True) and unread[0] > 0
    assert finished_by.documents_summarized == remaining[-1]
    assert (finished_by.files_unread, finished_by.documents_remaining) == (0, 0)
    last = run_archive(["archive"], str(db), methods=METHODS, exclude=["scratch"], progress=quiet())
    assert (last.documents_summarized, last.files_unread, last.documents_remaining) == (0, 0, 0)


def test_a_file_of_many_records_not_read_yet_counts_as_at_least_one(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    records = [{"id": n, "title": f"Depot log {n}", "text": f"Entry {n} was logged at the depot. "
                "The tram returned to service the same evening. Nothing else was noted."} for n in range(5)]
    (archive / "a_log.jsonl").write_text("\n".join(json.dumps(r) for r in records) + "\n", encoding="utf-8")
    (archive / "b_note.txt").write_text("The pump was serviced. It runs well again.", encoding="utf-8")
    db = tmp_path / "records.sqlite"
    stopped = run_archive([archive], str(db), methods=METHODS, progress=quiet(), stop=budget_at(1))
    assert (stopped.files_unread, stopped.documents_remaining) == (2, 2)
    finishing = run_archive([archive], str(db), methods=METHODS, progress=quiet())
    assert finishing.documents_summarized == 6


@pytest.mark.parametrize("reads", [4, 7])
def test_documents_in_flight_in_worker_processes_count_as_not_read(tmp_path, monkeypatch, reads):
    # More files than two workers hold in flight (two batches each), so a stop leaves some unread.
    build_archive(tmp_path / "archive", reports=60)
    monkeypatch.chdir(tmp_path)
    files = document_files(tmp_path / "archive")
    db = tmp_path / "workers.sqlite"
    stopped = run_archive(["archive"], str(db), methods=METHODS, exclude=["scratch"], progress=quiet(),
                          workers=2, stop=budget_at(reads))
    assert stopped.stop_reason
    read = files_read_in(db, stopped.run_id) & files
    assert stopped.files_unread == len(files - read) > 0
    finishing = run_archive(["archive"], str(copy_store(db, tmp_path / "finished.sqlite")), methods=METHODS,
                            exclude=["scratch"], progress=quiet())
    never_seen_without_work = {str(tmp_path / "archive" / "copies" / name) for name in ("again.txt", "empty.txt")}
    expected = finishing.documents_summarized + len(never_seen_without_work & set(stopped.unread))
    assert stopped.documents_remaining == expected


@pytest.mark.parametrize("reads", [3, 5])
def test_a_run_stopped_with_new_files_in_flight_marks_nothing_missing(tmp_path, reads):
    archive = build_archive(tmp_path / "archive", reports=60)
    db = tmp_path / "store.sqlite"
    assert run_archive([archive], str(db), methods=METHODS, exclude=["scratch"], progress=quiet()).stop_reason is None
    # New files first in walk order: the stopped run sends them out and never walks the rest.
    (archive / "000_new").mkdir()
    for number, source in enumerate(sorted(archive.rglob("report_*.txt"))[:4]):
        (archive / "000_new" / f"late_{number}.txt").write_text(
            source.read_text(encoding="utf-8") + f" Late note {number}.", encoding="utf-8")
    stopped = run_archive([archive], str(db), methods=METHODS, exclude=["scratch"], progress=quiet(),
                          workers=2, stop=budget_at(reads))
    assert stopped.stop_reason and stopped.files_unread > 0
    with sqlite3.connect(db) as conn:
        assert conn.execute("select count(*) from documents where status = 'missing'").fetchone() == (0,)
