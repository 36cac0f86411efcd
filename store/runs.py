"""Run bookkeeping: every command that writes the store is recorded as a run.

    with recorded_run("archive.sqlite", "score", {"budget": "reference"}) as run:
        ...                         # run.store, run.run_id
        run.counts = {...}          # kept in runs.counts when the run ends

:func:`recorded_run` takes the store's writer lock, opens the store, marks runs a
killed process left ``running`` as ``interrupted``, begins the run's row, and at the
end finishes it — ``completed`` (or the ``status`` the body set), ``interrupted``
when the body was stopped by Ctrl-C, ``failed`` when it raised — then closes the
store and releases the lock.
"""

from __future__ import annotations

import json
import os
import platform
import socket
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import UTC, datetime
from importlib import metadata
from typing import TYPE_CHECKING

import sqlite_utils

from store.lock import StoreLock

if TYPE_CHECKING:
    from store.store import Store

VERSIONED_PACKAGES = (
    "archive-summarizer",
    "pysbd",
    "scikit-learn",
    "skops",
    "numpy",
    "scipy",
    "rouge-score",
    "sqlite-utils",
    "transformers",
    "torch",
    "tokenizers",
    "pypdf",
    "python-docx",
    "beautifulsoup4",
)


def now() -> str:
    return datetime.now(UTC).isoformat(timespec="seconds")


def library_versions() -> dict:
    versions = {"python": platform.python_version()}
    for name in VERSIONED_PACKAGES:
        try:
            versions[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            versions[name] = None
    return versions


class RunLog:
    """The ``runs`` and ``ingest_problems`` tables."""

    def __init__(self, db: sqlite_utils.Database):
        self.db = db

    def begin(self, command: str, config: dict) -> int:
        with self.db.atomic():
            return self.db["runs"].insert(
                {
                    "started": now(),
                    "status": "running",
                    "command": command,
                    "config": json.dumps(config, sort_keys=True, default=str),
                    "versions": json.dumps(library_versions(), sort_keys=True),
                    "host": socket.gethostname(),
                    "pid": os.getpid(),
                }
            ).last_pk

    def finish(self, run_id: int, status: str, counts: dict) -> None:
        with self.db.atomic():
            self.db["runs"].update(
                run_id, {"finished": now(), "status": status, "counts": json.dumps(counts, sort_keys=True)}
            )

    def close_interrupted(self) -> int:
        """Runs still marked ``running`` were killed (the caller holds the store's
        writer lock, so none is alive): mark them ``interrupted``; returns how many."""
        with self.db.atomic():
            return self.db.execute("update runs set status = 'interrupted' where status = 'running'").rowcount

    def update_config(self, run_id: int, config: dict) -> None:
        with self.db.atomic():
            self.db["runs"].update(run_id, {"config": json.dumps(config, sort_keys=True, default=str)})

    def record_problem(self, run_id: int, path: str, kind: str, reason: str) -> None:
        with self.db.atomic():
            self.db["ingest_problems"].insert(
                {"run_id": run_id, "path": path, "kind": kind, "reason": reason, "created": now()}
            )


@dataclass
class RecordedRun:
    """The open store and run row a :func:`recorded_run` body works in. The body
    sets ``counts`` (and may set ``status``) before it ends."""

    store: Store
    run_id: int
    lock: StoreLock
    earlier_interrupted: int
    counts: dict = field(default_factory=dict)
    status: str = "completed"


@contextmanager
def recorded_run(
    db_path: str,
    command: str,
    config: dict,
    wait_seconds: float = 0.0,
    on_wait: Callable[[str], None] | None = None,
) -> Iterator[RecordedRun]:
    """Lock, open, begin a run; finish it however the body ends; close, release.

    Raises :class:`~store.lock.StoreLocked` (before anything is written) when
    another process holds the store.
    """
    with writable_store(db_path, wait_seconds, on_wait) as (store, lock):
        earlier = store.runs.close_interrupted()
        run = RecordedRun(store, store.runs.begin(command, config), lock, earlier)
        try:
            yield run
        except KeyboardInterrupt:
            store.runs.finish(run.run_id, "interrupted", run.counts)
            raise
        except BaseException:
            store.runs.finish(run.run_id, "failed", run.counts)
            raise
        store.runs.finish(run.run_id, run.status, run.counts)


@contextmanager
def writable_store(
    db_path: str, wait_seconds: float = 0.0, on_wait: Callable[[str], None] | None = None
) -> Iterator[tuple[Store, StoreLock]]:
    """The store at ``db_path`` opened under its writer lock; closed, then
    released, however the body ends."""
    from store.store import Store

    with StoreLock(db_path, wait_seconds=wait_seconds, on_wait=on_wait) as lock:
        store = Store(db_path)
        try:
            yield store, lock
        finally:
            store.close()
