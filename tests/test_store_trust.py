"""Stores from elsewhere and unlucky stores: damaged, foreign, newer, read-only, full;
models that could run code; outputs pointed at the store.

Each command must end with one line naming the store and the problem (exit 1), and
leave the store file exactly as it was. Read-only and full file systems are small
tmpfs mounts (skipped with the reason where mounting is not allowed).
"""

from __future__ import annotations

import hashlib
import json
import os
import pickle
import shutil
import sqlite3
import subprocess
from pathlib import Path

import pytest
from forked_cli import run_cli

from store.learned_models import UnusableModel
from store.store import Store
from summarize.methods.learned.house_style import TRUSTED_TYPES
from summarize.methods.learned.sentence_features import FEATURE_NAMES

TEXTS = {
    "north.txt": "The north reservoir was inspected in March. Two valves were replaced. Water quality stayed within limits.",
    "depot.txt": "The tram depot roof was repaired in April. Work finished on time. The budget held for the year.",
}


def make_store(folder: Path) -> tuple[Path, Path]:
    archive = folder / "archive"
    archive.mkdir(parents=True)
    for name, text in TEXTS.items():
        (archive / name).write_text(text, encoding="utf-8")
    db = folder / "store.sqlite"
    result = run_cli(["run", str(archive), "--db", str(db), "--quiet"])
    assert result.exit_status == 0, result.stderr
    return archive, db


def digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def commands(db: Path, archive: Path, out: Path) -> dict[str, list[str]]:
    return {
        "find": ["find", "reservoir", "--db", str(db)],
        "show": ["show", "1", "--db", str(db)],
        "export": ["export", "--db", str(db), "--format", "csv", "--out", str(out / "x.csv")],
        "compare": ["compare", "--db", str(db)],
        "report": ["report", "--db", str(db), "--out", str(out / "r.html")],
        "score": ["score", "--db", str(db)],
        "train": ["train", "--db", str(db)],
        "choose": ["choose", "--db", str(db)],
        "run": ["run", str(archive), "--db", str(db)],
    }


def _sql(db: Path, *statements: str, parameters: list | None = None) -> None:
    """Run statements on the store and close it (closing checkpoints the WAL into the file)."""
    connection = sqlite3.connect(db)
    try:
        for statement in statements:
            connection.execute(statement, parameters or [])
        connection.commit()
    finally:
        connection.close()


def _random_bytes(db: Path) -> None:
    db.write_bytes(os.urandom(8192))


def _truncated(db: Path) -> None:
    _sql(db, "PRAGMA wal_checkpoint(TRUNCATE)", "PRAGMA journal_mode = DELETE")
    size = db.stat().st_size
    with open(db, "r+b") as handle:
        handle.truncate(size // 3)


def _corrupt_pages(db: Path) -> None:
    """The schema page intact, every other page random: the store opens, then reads fail."""
    _sql(db, "PRAGMA wal_checkpoint(TRUNCATE)", "PRAGMA journal_mode = DELETE")
    page_size = 4096
    size = db.stat().st_size
    with open(db, "r+b") as handle:
        handle.seek(page_size)
        handle.write(os.urandom(size - page_size))


def _newer(db: Path) -> None:
    _sql(db, "PRAGMA user_version = 999")


def _foreign(db: Path) -> None:
    db.unlink()
    _sql(db, "create table invoices (id integer primary key, total real)", "insert into invoices (total) values (12.5)")


@pytest.mark.parametrize(
    ("damage", "problem"),
    [(_random_bytes, "not a summary store"), (_truncated, "damaged"), (_corrupt_pages, "damaged"),
     (_newer, "newer than this program"), (_foreign, "not a summary store")],
    ids=["random-bytes", "truncated", "corrupt-pages", "newer-schema", "foreign-database"],
)
def test_every_command_gives_one_line_for_an_unusable_store(tmp_path, damage, problem):
    archive, db = make_store(tmp_path)
    damage(db)
    for suffix in ("-wal", "-shm"):
        Path(f"{db}{suffix}").unlink(missing_ok=True)
    before = digest(db)
    for name, args in commands(db, archive, tmp_path).items():
        result = run_cli(args)
        assert result.exit_status == 1, (name, result.stderr)
        assert len(result.stderr.splitlines()) == 1, (name, result.stderr)
        assert result.stderr.startswith(f"error: {db}") and problem in result.stderr, (name, result.stderr)
        assert digest(db) == before, name


def test_an_empty_store_file_is_named_by_readers_and_filled_by_a_run(tmp_path):
    """A run killed while creating the schema leaves an empty file (the creation is one
    transaction): readers say so in one line, the next run creates the store in it."""
    archive, db = make_store(tmp_path)
    empty = tmp_path / "empty.sqlite"
    empty.write_bytes(b"")
    result = run_cli(["find", "reservoir", "--db", str(empty)])
    assert result.exit_status == 1 and result.stderr == f"error: {empty}: an empty store (no run has stored anything yet)\n"
    assert run_cli(["run", str(archive), "--db", str(empty), "--quiet"]).exit_status == 0
    assert run_cli(["find", "reservoir", "--db", str(empty)]).exit_status == 0


def test_find_with_odd_queries_is_one_line_at_most(tmp_path):
    _, db = make_store(tmp_path)
    assert run_cli(["find", "", "--db", str(db)]).exit_status == 0
    for query in ('"', "  *  ", 'reservoir"'):
        result = run_cli(["find", query, "--db", str(db)])
        assert result.exit_status == 2 and len(result.stderr.splitlines()) == 1, result.stderr
        assert result.stderr.startswith("error: query")


# outputs ----------------------------------------------------------------------------


def test_outputs_pointed_at_the_store_are_refused(tmp_path):
    _, db = make_store(tmp_path)
    os.symlink(db, tmp_path / "alias.csv")
    before = digest(db)
    for target in (db, Path(f"{db}-wal"), Path(f"{db}-shm"), Path(f"{db}.lock"), tmp_path / "alias.csv"):
        for args in (["export", "--db", str(db), "--format", "csv", "--out", str(target)],
                     ["report", "--db", str(db), "--out", str(target)]):
            result = run_cli(args)
            assert result.exit_status == 1 and "refusing to overwrite it" in result.stderr, result.stderr
            assert len(result.stderr.splitlines()) == 1
    assert digest(db) == before
    with sqlite3.connect(db) as connection:
        assert connection.execute("PRAGMA integrity_check").fetchone()[0] == "ok"


def test_an_export_that_fails_leaves_the_old_file_and_no_partial_file(tmp_path, monkeypatch):
    from summarize.output import export as export_module

    _, db = make_store(tmp_path)
    out = tmp_path / "summaries.csv"
    out.write_text("yesterday's export\n", encoding="utf-8")

    def failing_writer(rows, handle):
        handle.write("half a file")
        raise OSError(28, "No space left on device")

    monkeypatch.setitem(export_module._WRITERS, "csv", failing_writer)
    with pytest.raises(Exception, match="no space left to write"):
        export_module.export(str(db), "csv", out)
    assert out.read_text(encoding="utf-8") == "yesterday's export\n"
    assert sorted(path.name for path in tmp_path.iterdir() if "partial" in path.name) == []


def test_export_to_a_missing_folder_is_one_line(tmp_path):
    _, db = make_store(tmp_path)
    result = run_cli(["export", "--db", str(db), "--format", "md", "--out", str(tmp_path / "no" / "such.md")])
    assert result.exit_status == 1 and "does not exist" in result.stderr and len(result.stderr.splitlines()) == 1


# interrupted runs ---------------------------------------------------------------------


def test_score_closes_runs_left_running_by_a_killed_process(tmp_path):
    _, db = make_store(tmp_path)
    _sql(db, "insert into runs (started, status, command, pid) values ('2026-01-01', 'running', 'train', 999999)")
    assert run_cli(["score", "--db", str(db)]).exit_status == 0
    with sqlite3.connect(db) as connection:
        statuses = [row[0] for row in connection.execute("select status from runs where command = 'train'")]
    assert statuses == ["interrupted"]


# learned models -----------------------------------------------------------------------


class _CreatesFile:
    """Unpickling this calls open(path, 'w'): a file appears if the pickle is executed."""

    def __init__(self, path: str) -> None:
        self.path = path

    def __reduce__(self):
        return (open, (self.path, "w"))


def _store_model_blob(db: Path, blob: bytes) -> None:
    _sql(
        db,
        "insert into learned_models (name, created, params, features, training_documents, metrics, versions, model) "
        "values ('house-style', '2026-01-01', '{}', ?, '[1]', '{}', '{}', ?)",
        parameters=[json.dumps(list(FEATURE_NAMES)), blob],
    )


def test_a_crafted_pickle_in_the_store_is_never_executed(tmp_path):
    archive, db = make_store(tmp_path)
    marker = tmp_path / "pickle-was-executed"
    _store_model_blob(db, pickle.dumps(_CreatesFile(str(marker))))
    result = run_cli(["run", str(archive), "--db", str(db), "--methods", "house-style"])
    assert result.exit_status == 1, result.stderr
    assert "pickle format of earlier versions" in result.stderr and "summarize train" in result.stderr
    assert len(result.error_lines) == 1
    for args in (["run", str(archive), "--db", str(db), "--methods", "auto"], ["train", "--db", str(db)],
                 ["choose", "--db", str(db)]):
        run_cli(args)
    store = Store(str(db))
    stored = store.models.latest("house-style")
    with pytest.raises(UnusableModel, match="summarize train"):
        stored.load(TRUSTED_TYPES)
    store.close()
    assert not marker.exists()


def test_a_model_naming_an_untrusted_type_is_refused(tmp_path):
    import skops.io

    _, db = make_store(tmp_path)
    _store_model_blob(db, skops.io.dumps(_CreatesFile(str(tmp_path / "never"))))
    store = Store(str(db))
    stored = store.models.latest("house-style")
    store.close()
    assert stored.format == "skops"
    with pytest.raises(UnusableModel, match="_CreatesFile"):
        stored.load(TRUSTED_TYPES)
    assert not (tmp_path / "never").exists()


def test_a_damaged_model_blob_is_one_line(tmp_path):
    _, db = make_store(tmp_path)
    _store_model_blob(db, b"PK\x03\x04" + os.urandom(200))
    store = Store(str(db))
    stored = store.models.latest("house-style")
    store.close()
    with pytest.raises(UnusableModel, match="is damaged"):
        stored.load(TRUSTED_TYPES)


# read-only and full file systems ------------------------------------------------------


def _mount_tmpfs(folder: Path, size: str) -> None:
    folder.mkdir()
    try:
        subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(folder)], check=True,
                       capture_output=True)
    except (subprocess.CalledProcessError, FileNotFoundError, PermissionError) as error:
        pytest.skip(f"cannot mount a small tmpfs here ({error}); needs root and mount permission")


def _remount(folder: Path, options: str) -> None:
    subprocess.run(["mount", "-o", f"remount,{options}", str(folder)], check=True, capture_output=True)


@pytest.fixture
def small_mount(tmp_path):
    folder = tmp_path / "mnt"
    yield folder
    if folder.is_mount():
        subprocess.run(["umount", "-l", str(folder)], check=False)


def test_read_only_store_serves_every_read_only_command(tmp_path, small_mount):
    _mount_tmpfs(small_mount, "16m")
    archive, db = make_store(small_mount)
    assert not Path(f"{db}-shm").exists()  # the run closed cleanly: no companion files to lean on
    _remount(small_mount, "ro")
    out = tmp_path / "out"
    out.mkdir()
    for name, args in commands(db, archive, out).items():
        result = run_cli(args)
        if name in ("find", "show", "export", "compare", "report"):
            assert result.exit_status == 0, (name, result.stderr)
        else:
            assert result.exit_status == 1, (name, result.stderr)
            assert len(result.stderr.splitlines()) == 1 and "read-only" in result.stderr, (name, result.stderr)
    assert (out / "x.csv").exists() and (out / "r.html").exists()


def test_disk_full_is_one_line_and_the_rerun_finishes(tmp_path, small_mount):
    _mount_tmpfs(small_mount, "512k")
    archive = tmp_path / "archive"
    archive.mkdir()
    for number in range(30):
        sentences = " ".join(f"Report {number} notes that section {k} of the main was flushed on day {k}." for k in range(60))
        (archive / f"report_{number:02d}.txt").write_text(sentences, encoding="utf-8")
    db = small_mount / "store.sqlite"
    full = run_cli(["run", str(archive), "--db", str(db), "--quiet", "--methods", "lead"], timeout=60)
    assert full.exit_status == 1, full.stderr
    assert full.stderr.splitlines() == [f"error: no space left for the store at {db}"]
    _remount(small_mount, "size=64m")
    with sqlite3.connect(db) as connection:
        assert connection.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    rerun = run_cli(["run", str(archive), "--db", str(db), "--quiet", "--methods", "lead"], timeout=60)
    assert rerun.exit_status == 0, rerun.stderr
    with sqlite3.connect(db) as connection:
        assert connection.execute("select count(*) from documents where status = 'active'").fetchone()[0] == 30
        assert connection.execute("PRAGMA integrity_check").fetchone()[0] == "ok"


def test_copying_a_store_keeps_it_usable(tmp_path):
    """The store is one file: a copy (after a clean run) opens read-only elsewhere."""
    _, db = make_store(tmp_path / "a")
    copy = tmp_path / "copy.sqlite"
    shutil.copy(db, copy)
    assert run_cli(["find", "reservoir", "--db", str(copy)]).exit_status == 0
