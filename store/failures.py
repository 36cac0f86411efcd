"""Failures remembered across runs: a file (or a document's summary) that failed
before with the same content is a *known* failure, not a new one.

Every failure is kept in ``ingest_problems`` with a fingerprint of what failed
(``sha256:HEX`` of its content; ``stat:…`` of its type, size and modification time
when its content cannot be read) and the method that failed on it (none for reading
and splitting). A failure is known when an earlier run recorded an error for the same
path, the same fingerprint and the same method, and no run since has stored that
path; ``known_since`` keeps the first run of that streak. A path with no fingerprint
(it does not exist) is never known: nothing says it is unchanged.
"""

from __future__ import annotations

import sqlite_utils

from store.runs import now


class FailureHistory:
    """Errors recorded with their content hash, and whether each was seen before."""

    def __init__(self, db: sqlite_utils.Database):
        self.db = db

    def first_run_failed(self, path: str, fingerprint: str | None, method: str | None, before_run: int) -> int | None:
        """The first run of the latest unbroken streak before ``before_run`` in which
        this content failed this way, or None when this failure is new. A streak is
        broken by a run that stored the path (or record) successfully: content that
        was fixed and then broke again, even back to the same bytes, fails anew."""
        if fingerprint is None:
            return None
        (last_read,) = self.db.execute(
            "select max(last_run) from documents where (record_key = ? or path = ?) and last_run < ?",
            [path, path, before_run],
        ).fetchone()
        (first,) = self.db.execute(
            "select min(run_id) from ingest_problems "
            "where path = ? and fingerprint = ? and method is ? and kind = 'error' and run_id > ? and run_id < ?",
            [path, fingerprint, method, last_read or 0, before_run],
        ).fetchone()
        return first

    def failed_files(self) -> set[str]:
        """Every path an earlier run failed to read (a record's path without its '#id')."""
        return {
            path.split("#", 1)[0]
            for (path,) in self.db.execute("select distinct path from ingest_problems where kind = 'error'")
        }

    def record(self, run_id: int, path: str, reason: str, fingerprint: str | None, method: str | None = None) -> int | None:
        """Record an error of this run; returns the run it has been failing since
        when it is a known failure, else None."""
        known_since = self.first_run_failed(path, fingerprint, method, run_id)
        with self.db.atomic():
            self.db["ingest_problems"].insert(
                {
                    "run_id": run_id,
                    "path": path,
                    "kind": "error",
                    "reason": reason,
                    "created": now(),
                    "fingerprint": fingerprint,
                    "method": method,
                    "known_since": known_since,
                }
            )
        return known_since
