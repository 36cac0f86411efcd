"""Known and new failures of a run, so that the exit status a scheduler reads says
whether anything *new* went wrong.

A file that failed in an earlier run and whose content has not changed since (same
SHA-256; for a file that cannot be opened, same size and modification time) fails
the same way again: it is a *known* failure. It is still recorded in
``ingest_problems`` and listed in the run's summary, but it does not make the exit
status 3 unless the run is strict (``--strict-exit``). A changed file, a new file,
and a path that is not there at all are new failures.
"""

from __future__ import annotations

import hashlib
import os
import stat

from store.printable import printable
from store.store import Store
from summarize.runs.progress import ProgressTracker

_CHUNK = 1024 * 1024


def fingerprint(path: str) -> str | None:
    """What a failed path is, to tell next time whether it changed: ``sha256:HEX`` of
    a regular file's bytes; ``stat:MODE:SIZE:MTIME_NS`` of anything else there (a
    folder, a special file, a file that cannot be opened); None when nothing is
    there. Opened without blocking, and checked after opening, so a FIFO put in the
    file's place never stalls the run."""
    try:
        status = os.stat(path)
    except OSError:
        return None
    described = f"stat:{status.st_mode:o}:{status.st_size}:{status.st_mtime_ns}"
    if not stat.S_ISREG(status.st_mode):
        return described
    try:
        descriptor = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError:
        return described
    with open(descriptor, "rb") as handle:
        try:
            if not stat.S_ISREG(os.fstat(descriptor).st_mode):
                return described
            digest = hashlib.sha256()
            while chunk := handle.read(_CHUNK):
                digest.update(chunk)
        except OSError:
            return described
    return f"sha256:{digest.hexdigest()}"


class FailureSorter:
    """Records each failure of a run and sorts it into the report's new ``errors``
    (or ``failed_summaries``) and its ``known_failures``."""

    def __init__(self, store: Store, run_id: int, report, progress: ProgressTracker):
        self.store = store
        self.run_id = run_id
        self.report = report
        self.progress = progress

    def file_failed(self, path: str, reason: str) -> None:
        """A file (or a record, ``file#id``, judged by its file's content) that gave
        no document."""
        self._sort(path, reason, fingerprint(path.split("#", 1)[0]), None, self.report.errors)

    def document_failed(self, record_key: str, sha256: str, reason: str, method: str | None = None) -> None:
        """A document read but not split (``method`` None) or not summarized by ``method``."""
        new = self.report.errors if method is None else self.report.failed_summaries
        self._sort(record_key, reason, f"sha256:{sha256}", method, new)

    def _sort(self, path: str, reason: str, what: str | None, method: str | None, new: list[str]) -> None:
        # One line whatever the path holds (a newline or an escape in a file name).
        line = printable(f"{path}: {reason}")
        since = self.store.failures.record(self.run_id, path, reason, what, method)
        if since is None:
            new.append(line)
            self.progress.error(line)
        else:
            self.report.known_failures.append(f"{line} (unchanged, failing since run {since})")
            self.progress.message(f"known failure: {line}")
