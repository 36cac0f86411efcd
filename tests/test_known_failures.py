"""Known failures: a file that failed before with unchanged content is listed and
recorded, but only new failures set exit status 3 (unless the run is strict).

The exit statuses are this project's own (README); telling a scheduler "nothing new
went wrong" with 0 is common practice for batch jobs, with no outside source. The
bad inputs are the demo archive's awkward files, each failing for its own reason.
"""

from __future__ import annotations

import hashlib
import io
import json
import os
import shutil
import sqlite3
from dataclasses import dataclass, field
from pathlib import Path

import pytest
from click.testing import CliRunner
from operations_support import DEMO_ARCHIVE, generated_archive

from store.records import Document
from summarize.cli import main
from summarize.methods.extractive import LeadSummarizer
from summarize.runs.progress import TerminalProgress
from summarize.runs.runner import EXIT_OK, EXIT_SOME_FILES_FAILED, run_archive

AWKWARD = sorted(path.name for path in (DEMO_ARCHIVE / "awkward").iterdir())


@pytest.fixture
def archive(tmp_path) -> Path:
    """A few good reports and two of the demo's files that cannot be read."""
    folder = generated_archive(tmp_path / "archive", 3, seed=2)
    shutil.copy(DEMO_ARCHIVE / "awkward" / "empty_notes.txt", folder / "empty_notes.txt")
    shutil.copy(DEMO_ARCHIVE / "awkward" / "scanned_permit.pdf", folder / "scanned_permit.pdf")
    return folder


def run(archive: Path, db: Path, **options):
    return run_archive([archive], str(db), methods=["lead"], progress=TerminalProgress(stream=io.StringIO()), **options)


def problems(db: Path) -> list[tuple]:
    """Errors kept in the store: run, file name, content hashed, known since."""
    with sqlite3.connect(db) as conn:
        rows = conn.execute(
            "select run_id, path, fingerprint like 'sha256:%', known_since from ingest_problems "
            "where kind = 'error' order by run_id, path"
        ).fetchall()
    return [(run_id, Path(path).name, hashed, since) for run_id, path, hashed, since in rows]


def test_an_unchanged_bad_file_is_known_on_the_rerun_and_exits_0(archive, tmp_path):
    db = tmp_path / "store.sqlite"
    first = run(archive, db)
    assert first.exit_status == EXIT_SOME_FILES_FAILED
    assert len(first.errors) == 2 and first.known_failures == []

    second = run(archive, db)
    assert second.exit_status == EXIT_OK
    assert second.errors == []
    assert sorted(line.split(": ")[0].rsplit("/", 1)[1] for line in second.known_failures) == [
        "empty_notes.txt", "scanned_permit.pdf"
    ]
    assert all(line.endswith("(unchanged, failing since run 1)") for line in second.known_failures)
    assert second.counts()["known_failures"] == 2 and second.counts()["files_failed"] == 0
    # Kept in ingest_problems every run, with the content hash and since when it is known.
    assert problems(db) == [
        (1, "empty_notes.txt", 1, None),
        (1, "scanned_permit.pdf", 1, None),
        (2, "empty_notes.txt", 1, 1),
        (2, "scanned_permit.pdf", 1, 1),
    ]

    third = run(archive, db)
    assert third.exit_status == EXIT_OK
    assert [row[3] for row in problems(db) if row[0] == 3] == [1, 1]


def test_a_changed_bad_file_or_a_new_one_exits_3_then_is_known(archive, tmp_path):
    db = tmp_path / "store.sqlite"
    run(archive, db)
    # Still not readable, but different content: a new failure.
    (archive / "scanned_permit.pdf").write_bytes((archive / "scanned_permit.pdf").read_bytes() + b"\n% resaved\n")
    changed = run(archive, db)
    assert changed.exit_status == EXIT_SOME_FILES_FAILED
    assert [line.split(": ")[0].rsplit("/", 1)[1] for line in changed.errors] == ["scanned_permit.pdf"]
    assert len(changed.known_failures) == 1

    shutil.copy(DEMO_ARCHIVE / "awkward" / "corrupt_handover.docx", archive / "corrupt_handover.docx")
    added = run(archive, db)
    assert added.exit_status == EXIT_SOME_FILES_FAILED
    assert [line.split(": ")[0].rsplit("/", 1)[1] for line in added.errors] == ["corrupt_handover.docx"]
    assert len(added.known_failures) == 2

    settled = run(archive, db)
    assert settled.exit_status == EXIT_OK and len(settled.known_failures) == 3
    # The resaved file has failed since run 2, with its new content.
    assert any("scanned_permit.pdf" in line and "since run 2" in line for line in settled.known_failures)


def test_a_file_that_breaks_again_after_a_fix_fails_anew(archive, tmp_path):
    db = tmp_path / "store.sqlite"
    bad = archive / "empty_notes.txt"
    run(archive, db)
    bad.write_text("The notes were written up after all. The valve was replaced.", encoding="utf-8")
    assert run(archive, db).exit_status == EXIT_OK
    # Back to the very bytes that failed in run 1: still a new failure, since run 2 read it.
    bad.write_bytes(b"")
    broken = run(archive, db)
    assert broken.exit_status == EXIT_SOME_FILES_FAILED
    assert [Path(line.split(": ")[0]).name for line in broken.errors] == ["empty_notes.txt"]
    settled = run(archive, db)
    assert settled.exit_status == EXIT_OK
    assert any("empty_notes.txt" in line and "since run 3" in line for line in settled.known_failures)


def test_a_bad_record_in_a_file_of_good_ones_is_known_on_the_rerun(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    lines = [
        json.dumps({"id": "a", "text": "The depot roof was repaired. The work took two days."}),
        json.dumps({"id": "b", "text": ""}),
        json.dumps({"id": "c", "text": "The pump was serviced. It runs well again."}),
    ]
    (archive / "log.jsonl").write_text("\n".join(lines) + "\n", encoding="utf-8")
    db = tmp_path / "store.sqlite"
    first = run(archive, db)
    assert first.exit_status == EXIT_SOME_FILES_FAILED and len(first.errors) == 1
    assert first.errors[0].startswith(f"{archive / 'log.jsonl'}#")
    again = run(archive, db)
    assert again.exit_status == EXIT_OK and len(again.known_failures) == 1


def test_a_strict_run_exits_3_on_every_failure(archive, tmp_path):
    db = tmp_path / "store.sqlite"
    for _ in range(3):
        report = run(archive, db, strict_exit=True)
        assert report.exit_status == EXIT_SOME_FILES_FAILED
    assert len(report.known_failures) == 2 and report.errors == []
    assert run(archive, db).exit_status == EXIT_OK


@dataclass
class PickyLead(LeadSummarizer):
    """The lead baseline, failing on documents that mention a given word."""

    refuse: str = "tram"
    name: str = field(default="picky-lead", init=False)

    def summarize(self, document: Document, segmentation):
        if self.refuse in document.text.lower():
            raise ValueError(f"refuses documents about {self.refuse}s")
        return super().summarize(document, segmentation)


def test_a_method_failing_on_an_unchanged_document_is_known(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "depot.txt").write_text("The tram depot was inspected. Two doors were repaired.", encoding="utf-8")
    (archive / "pumps.txt").write_text("The pump station was inspected. One valve was replaced.", encoding="utf-8")
    db = tmp_path / "store.sqlite"

    def picky_run():
        return run_archive([archive], str(db), summarizers=[PickyLead()], progress=TerminalProgress(stream=io.StringIO()))

    first = picky_run()
    assert first.exit_status == EXIT_SOME_FILES_FAILED and len(first.failed_summaries) == 1
    again = picky_run()
    assert again.exit_status == EXIT_OK and again.failed_summaries == []
    assert again.known_failures == [
        f"{archive / 'depot.txt'}: picky-lead failed: ValueError: refuses documents about trams "
        "(unchanged, failing since run 1)"
    ]
    (archive / "depot.txt").write_text("The tram depot was inspected again. No doors needed work.", encoding="utf-8")
    assert picky_run().exit_status == EXIT_SOME_FILES_FAILED


def test_the_command_line_lists_known_failures_and_honours_strict_exit(tmp_path):
    archive = shutil.copytree(DEMO_ARCHIVE / "awkward", tmp_path / "archive")
    (archive / "fine.txt").write_text("The reservoir level was normal. No action was needed.", encoding="utf-8")
    db = tmp_path / "store.sqlite"
    runner = CliRunner()
    first = runner.invoke(main, ["run", str(archive), "--db", str(db), "--methods", "lead"])
    assert first.exit_code == 3, first.output
    second = runner.invoke(main, ["run", str(archive), "--db", str(db), "--methods", "lead"])
    assert second.exit_code == 0, second.output
    assert f"{len(AWKWARD)} known failures" in second.stdout
    listed = [line for line in second.stdout.splitlines() if line.startswith("  known failure: ")]
    assert sorted(Path(line.split(": ")[1]).name for line in listed) == AWKWARD
    assert "error:" not in second.stderr

    strict = runner.invoke(main, ["run", str(archive), "--db", str(db), "--methods", "lead", "--strict-exit", "--json"])
    assert strict.exit_code == 3
    report = json.loads(strict.stdout)
    assert report["known_failures"] == len(AWKWARD) == len(report["known_errors"]) and report["errors"] == []

    job = tmp_path / "night.toml"
    job.write_text(f'paths = ["archive"]\ndb = "{db.name}"\nmethods = ["lead"]\nstrict_exit = true\n', encoding="utf-8")
    assert runner.invoke(main, ["run", "--job", str(job)]).exit_code == 3
    job.write_text(f'paths = ["archive"]\ndb = "{db.name}"\nmethods = ["lead"]\n', encoding="utf-8")
    assert runner.invoke(main, ["run", "--job", str(job)]).exit_code == 0


def test_fingerprints_of_what_failed(tmp_path):
    from summarize.runs.known_failures import fingerprint

    report = tmp_path / "report.txt"
    report.write_bytes(b"caf\xc3\xa9 minutes")
    # External check: the SHA-256 of the same bytes by hashlib (Python standard library).
    assert fingerprint(str(report)) == "sha256:" + hashlib.sha256(b"caf\xc3\xa9 minutes").hexdigest()
    # A FIFO is described, never opened for reading (which would wait for a writer).
    pipe = tmp_path / "pipe.txt"
    os.mkfifo(pipe)
    described = fingerprint(str(pipe))
    assert described.startswith("stat:") and described == fingerprint(str(pipe))
    folder = tmp_path / "folder"
    folder.mkdir()
    before = fingerprint(str(folder))
    assert before.startswith("stat:")
    (folder / "new.txt").write_text("x", encoding="utf-8")
    os.utime(folder, ns=(0, 10**9))
    assert fingerprint(str(folder)) != before
    assert fingerprint(str(tmp_path / "absent.txt")) is None
