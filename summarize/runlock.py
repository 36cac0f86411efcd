"""One writer per store: a lock file beside the SQLite file.

The lock file ``STORE.lock`` is created atomically (``O_CREAT | O_EXCL``) and holds
the holder's process id, host and start time as JSON. A lock whose holder is a
process on this host that no longer runs is stale and is taken over; a lock held from
another host is never taken over automatically (its process cannot be checked).
"""

from __future__ import annotations

import json
import os
import socket
import time
from datetime import datetime, timezone

import psutil


class StoreLocked(RuntimeError):
    """Another process holds the store's lock."""


def _describe(holder: dict) -> str:
    return f"process {holder.get('pid')} on {holder.get('host')}, started {holder.get('started')}"


class StoreLock:
    """Exclusive writer lock for the store at ``db_path``.

    ``wait_seconds`` > 0 waits (polling every ``poll_seconds``) for a live holder to
    finish instead of failing at once.
    """

    def __init__(self, db_path: str, wait_seconds: float = 0.0, poll_seconds: float = 1.0):
        self.db_path = db_path
        self.wait_seconds = wait_seconds
        self.poll_seconds = poll_seconds

    @property
    def lock_path(self) -> str:
        return f"{self.db_path}.lock"

    def holder(self) -> dict | None:
        try:
            with open(self.lock_path, encoding="utf-8") as handle:
                return json.load(handle)
        except FileNotFoundError:
            return None
        except (OSError, ValueError):
            # Half-written by a process killed mid-write: treat as unknown holder.
            return {"pid": None, "host": socket.gethostname(), "started": None}

    def _is_stale(self, holder: dict) -> bool:
        if holder.get("host") != socket.gethostname():
            return False
        pid = holder.get("pid")
        if not pid:
            return True
        try:
            process = psutil.Process(pid)
        except psutil.NoSuchProcess:
            return True
        # A recycled pid belongs to a process that started after the lock was written.
        created = holder.get("process_created")
        return process.status() == psutil.STATUS_ZOMBIE or (
            created is not None and abs(process.create_time() - created) > 1.0
        )

    def _try_create(self) -> bool:
        try:
            descriptor = os.open(self.lock_path, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
        except FileExistsError:
            return False
        record = {
            "pid": os.getpid(),
            "host": socket.gethostname(),
            "started": datetime.now(timezone.utc).isoformat(timespec="seconds"),
            "process_created": psutil.Process().create_time(),
        }
        with os.fdopen(descriptor, "w", encoding="utf-8") as handle:
            json.dump(record, handle)
        return True

    def acquire(self) -> StoreLock:
        deadline = time.monotonic() + self.wait_seconds
        while True:
            if self._try_create():
                return self
            holder = self.holder()
            if holder is None:
                continue
            if self._is_stale(holder):
                try:
                    os.remove(self.lock_path)
                except FileNotFoundError:
                    pass
                continue
            if time.monotonic() >= deadline:
                raise StoreLocked(f"{self.db_path} is being written by {_describe(holder)}")
            time.sleep(self.poll_seconds)

    def release(self) -> None:
        holder = self.holder()
        if holder and holder.get("pid") == os.getpid() and holder.get("host") == socket.gethostname():
            os.remove(self.lock_path)

    def __enter__(self) -> StoreLock:
        return self.acquire()

    def __exit__(self, *exc) -> None:
        self.release()
