"""Shared by the overnight-operation tests: running `summarize run` as a separate
process, generated archives, and what a store holds (and whether it is sound)."""

from __future__ import annotations

import json
import os
import shutil
import sqlite3
import subprocess
import sys
import time
from functools import lru_cache
from pathlib import Path

from bench.archives import build_archive, demo_sentences

REPO = Path(__file__).resolve().parents[1]
DEMO_ARCHIVE = REPO / "demo_archive"
RUN_TIMEOUT = 300


def cli_environment() -> dict:
    """The environment of a child `summarize` (or Dask worker) process: it must import
    this checkout, whether or not the project is installed."""
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join(filter(None, [str(REPO), env.get("PYTHONPATH")]))
    env.pop("COLUMNS", None)
    return env


def summarize_command(*args: str) -> list[str]:
    return [sys.executable, "-m", "summarize", *args]


def run_cli(*args: str, timeout: float = RUN_TIMEOUT) -> subprocess.CompletedProcess:
    return subprocess.run(
        summarize_command(*args), cwd=REPO, env=cli_environment(), capture_output=True, text=True, timeout=timeout
    )


def start_cli(*args: str) -> subprocess.Popen:
    return subprocess.Popen(
        summarize_command(*args), cwd=REPO, env=cli_environment(),
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
    )


def run_report(result: subprocess.CompletedProcess) -> dict:
    """The JSON report printed by `summarize run --json`."""
    return json.loads(result.stdout)


@lru_cache(maxsize=1)
def sentence_pool() -> tuple[str, ...]:
    return tuple(demo_sentences(DEMO_ARCHIVE))


def generated_archive(folder: Path, count: int, seed: int = 0, sentences_per_report=(8, 30)) -> Path:
    build_archive(folder, count, list(sentence_pool()), seed=seed, sentences_per_report=sentences_per_report)
    return folder


def copy_demo_archive(folder: Path) -> Path:
    """A private copy, so a test never depends on the shared folder staying still."""
    shutil.copytree(DEMO_ARCHIVE, folder)
    return folder


def summaries(db: Path) -> list[tuple]:
    """Every stored summary as (record key, content hash, method, parameter hash,
    text, source spans), sorted: equal lists mean equal summaries, and a duplicate
    would show up twice."""
    with sqlite3.connect(db) as conn:
        rows = conn.execute(
            "select s.id, d.record_key, d.sha256, s.method, s.param_hash, s.text "
            "from summaries s join documents d on d.id = s.document_id"
        ).fetchall()
        spans = {}
        for summary_id, position, start, end in conn.execute(
            'select summary_id, position, start, "end" from sentence_sources order by summary_id, position, rank'
        ):
            spans.setdefault(summary_id, []).append((position, start, end))
    return sorted((*row[1:], tuple(spans.get(row[0], ()))) for row in rows)


def document_statuses(db: Path) -> list[tuple[str, str, str]]:
    with sqlite3.connect(db) as conn:
        return sorted(conn.execute("select record_key, sha256, status from documents").fetchall())


def assert_store_sound(db: Path) -> None:
    """What must hold after any stop, even kill -9: SQLite's own integrity and
    foreign-key checks pass (sqlite.org/pragma.html#pragma_integrity_check), and no
    row is half-written (every document has its sentences, every summary its
    sentences and source spans, no (document, method, parameters) twice)."""
    with sqlite3.connect(db) as conn:
        assert conn.execute("PRAGMA integrity_check").fetchall() == [("ok",)]
        assert conn.execute("PRAGMA foreign_key_check").fetchall() == []
        assert conn.execute(
            "select count(*) from documents d where not exists "
            "(select 1 from document_sentences s where s.document_id = d.id)"
        ).fetchone() == (0,)
        assert conn.execute(
            "select count(*) from summaries s where not exists "
            "(select 1 from summary_sentences t where t.summary_id = s.id) "
            "or not exists (select 1 from sentence_sources o where o.summary_id = s.id)"
        ).fetchone() == (0,)
        assert conn.execute(
            "select count(*) from (select 1 from summaries group by document_id, method, param_hash having count(*) > 1)"
        ).fetchone() == (0,)


def wait_for(condition, timeout: float, interval: float = 0.02) -> bool:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if condition():
            return True
        time.sleep(interval)
    return condition()


def count_rows(db: Path, table: str) -> int:
    """Rows in ``table`` as another process sees them now (0 while the store is new)."""
    try:
        with sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=5) as conn:
            return conn.execute(f"select count(*) from {table}").fetchone()[0]
    except sqlite3.OperationalError:
        return 0
