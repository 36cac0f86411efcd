"""One writer per store: a lock file beside the SQLite file.

The lock file ``STORE.lock`` carries a POSIX record lock (``fcntl.lockf``) for as
long as a run writes, and names its holder (process id, host, start time) as JSON so
that a refused run can say who holds the store. The kernel drops the record lock
when its process ends, however it ends (``kill -9`` included), so a lock file left
behind by a dead process holds no lock: it is recognised as stale and taken over.
Record locks belong to a process, not to its forked children, so worker processes
never keep a store locked after the run that started them has died.

A clean release deletes the file; a lock file that exists but can be locked is
therefore always the remains of a killed run.
"""

from __future__ import annotations

import errno
import fcntl
import json
import os
import socket
import time
from collections.abc import Callable
from datetime import UTC, datetime

import psutil

from store.errors import StoreReadOnly, SummarizerError

# Record locks do not exclude within one process, so the paths this process holds
# are remembered here.
_HELD_HERE: set[str] = set()


class StoreLocked(SummarizerError, RuntimeError):
    """Another process holds the store's lock."""


def describe_holder(holder: dict | None) -> str:
    if not holder:
        return "another process (its lock file names no holder yet)"
    return f"process {holder.get('pid')} on host {holder.get('host')}, started {holder.get('started')}"


class StoreLock:
    """Exclusive writer lock for the store at ``db_path``.

    ``wait_seconds`` > 0 waits (polling every ``poll_seconds``) for a live holder to
    finish instead of failing at once; ``on_wait`` is told once whom it waits for.
    After :meth:`acquire`, ``stale_holder`` names the dead run whose lock was taken
    over, if any.
    """

    def __init__(
        self,
        db_path: str,
        wait_seconds: float = 0.0,
        poll_seconds: float = 0.5,
        on_wait: Callable[[str], None] | None = None,
    ):
        self.db_path = db_path
        self.wait_seconds = wait_seconds
        self.poll_seconds = poll_seconds
        self.on_wait = on_wait
        self.stale_holder: dict | None = None
        self._descriptor: int | None = None

    @property
    def lock_path(self) -> str:
        return f"{self.db_path}.lock"

    def holder(self) -> dict | None:
        """Who holds (or last held) the lock, as written in the lock file."""
        for _ in range(5):
            try:
                with open(self.lock_path, encoding="utf-8") as handle:
                    content = handle.read()
            except FileNotFoundError:
                return None
            if not content:
                return None
            try:
                return json.loads(content)
            except ValueError:  # caught between truncate and write: read again
                time.sleep(0.05)
        return None

    @staticmethod
    def _own_record() -> dict:
        return {"pid": os.getpid(), "host": socket.gethostname(), "started": "earlier in this process"}

    def _lock_once(self) -> bool:
        """One attempt; True when this process now holds the lock."""
        try:
            descriptor = os.open(self.lock_path, os.O_RDWR | os.O_CREAT, 0o644)
        except OSError as error:
            if error.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
                raise StoreReadOnly(
                    f"{self.db_path}: cannot write beside the store to take its lock ({error.strerror}); "
                    "read-only commands (find, show, export, compare, report) still work"
                ) from None
            raise
        try:
            fcntl.lockf(descriptor, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError as error:
            os.close(descriptor)
            if error.errno in (errno.EACCES, errno.EAGAIN):
                return False
            raise
        # The previous holder may have deleted the file between our open and lock:
        # then we locked an orphaned inode and must start again on the new file.
        try:
            current = os.stat(self.lock_path).st_ino
        except FileNotFoundError:
            current = None
        if current != os.fstat(descriptor).st_ino:
            os.close(descriptor)
            return self._lock_once()
        # Plain reads and writes on this one descriptor: closing any other descriptor of
        # the file (even a dup) would drop this process's record lock.
        left = b""
        while chunk := os.read(descriptor, 65536):
            left += chunk
        try:
            self.stale_holder = json.loads(left) if left else None
        except ValueError:
            self.stale_holder = {"pid": None, "host": None, "started": None}
        record = {
            "pid": os.getpid(),
            "host": socket.gethostname(),
            "started": datetime.now(UTC).isoformat(timespec="seconds"),
            "process_created": psutil.Process().create_time(),
        }
        os.ftruncate(descriptor, 0)
        os.pwrite(descriptor, json.dumps(record).encode("utf-8"), 0)
        self._descriptor = descriptor
        return True

    def acquire(self) -> StoreLock:
        key = os.path.realpath(self.lock_path)
        deadline = time.monotonic() + self.wait_seconds
        told = False
        while True:
            if key not in _HELD_HERE and self._lock_once():
                _HELD_HERE.add(key)
                return self
            # Reading the file here would drop a lock this process holds (see above).
            holder = self._own_record() if key in _HELD_HERE else self.holder()
            if time.monotonic() >= deadline:
                waited = f" (waited {self.wait_seconds:g} s)" if self.wait_seconds else ""
                raise StoreLocked(
                    f"{self.db_path} is being written by {describe_holder(holder)}{waited}; "
                    "only one run may write a store at a time (use --wait-lock SECONDS to wait for it)"
                )
            if self.on_wait and not told:
                self.on_wait(f"waiting for {describe_holder(holder)} to finish writing {self.db_path}")
                told = True
            time.sleep(self.poll_seconds)

    def release(self) -> None:
        if self._descriptor is None:
            return
        # Delete while still locked, so no one can lock the old file in between.
        try:
            os.remove(self.lock_path)
        except FileNotFoundError:
            pass
        os.close(self._descriptor)
        self._descriptor = None
        _HELD_HERE.discard(os.path.realpath(self.lock_path))

    def __enter__(self) -> StoreLock:
        return self.acquire()

    def __exit__(self, *exc) -> None:
        self.release()
