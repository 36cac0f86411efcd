"""Writing to the store: idempotent, one small transaction per document.

A rerun finds what is already there by natural keys (record key + content hash for
documents; document + method + parameter hash for summaries) and adds only what is
missing, so an interrupted run loses at most the document in flight.

Every write goes through :meth:`Store.transaction`, which is sqlite-utils'
``atomic()``: an explicit BEGIN/COMMIT, with savepoints when nested. (A plain
``with db.conn:`` is not enough: sqlite-utils commits each write made outside an
explicit transaction on its own, so a kill between two of them would leave, say, a
document without its sentences.)
"""

from __future__ import annotations

import json
import os
import platform
import socket
from contextlib import contextmanager
from datetime import UTC, datetime
from importlib import metadata

import sqlite_utils

from store.records import Document, Segmentation, Summary
from store.schema import open_database

VERSIONED_PACKAGES = (
    "archive-summarizer",
    "pysbd",
    "scikit-learn",
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


class Store:
    """A summary store in one SQLite file."""

    def __init__(self, path: str):
        self.path = path
        self.db: sqlite_utils.Database = open_database(path)

    def close(self) -> None:
        self.db.close()

    @contextmanager
    def transaction(self):
        """All writes inside are committed together or not at all; nests."""
        with self.db.atomic():
            yield

    def _insert_row(self, table: str, row: dict) -> int:
        """Insert one row of plain values; returns its rowid. (Plain SQL for the rows
        written per document: sqlite-utils' insert inspects the schema on every call.)"""
        columns = ", ".join(f'"{column}"' for column in row)
        marks = ", ".join("?" for _ in row)
        cursor = self.db.conn.execute(f'insert into "{table}" ({columns}) values ({marks})', list(row.values()))
        return cursor.lastrowid

    # runs -------------------------------------------------------------------------

    def begin_run(self, command: str, config: dict) -> int:
        with self.transaction():
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

    def finish_run(self, run_id: int, status: str, counts: dict) -> None:
        with self.transaction():
            self.db["runs"].update(
                run_id, {"finished": now(), "status": status, "counts": json.dumps(counts, sort_keys=True)}
            )

    def close_interrupted_runs(self) -> int:
        """Runs still marked ``running`` were killed (the caller holds the store's
        writer lock, so none is alive): mark them ``interrupted``; returns how many."""
        with self.transaction():
            return self.db.execute(
                "update runs set status = 'interrupted' where status = 'running'"
            ).rowcount

    def update_run_config(self, run_id: int, config: dict) -> None:
        with self.transaction():
            self.db["runs"].update(run_id, {"config": json.dumps(config, sort_keys=True, default=str)})

    # documents --------------------------------------------------------------------

    def find_document(self, record_key: str, sha256: str) -> dict | None:
        rows = list(self.db["documents"].rows_where("record_key = ? and sha256 = ?", [record_key, sha256]))
        return rows[0] if rows else None

    def add_document(
        self, document: Document, segmentation: Segmentation | None, run_id: int
    ) -> tuple[int, bool, str]:
        """Store a document unless the same record with the same content is there.

        Returns ``(document_id, added, status)``. A record whose content changed gets a new row;
        the earlier version stays, marked ``replaced``, with its summaries. Content
        already stored under another record key is marked ``duplicate`` of it. The
        stored version matching the file becomes (or stays) the record's current one:
        a record seen again after being marked ``missing`` is ``active`` again, and a
        file changed back to an earlier content revives that earlier version.
        ``segmentation`` may be None only when the document is already stored.
        """
        with self.transaction():
            existing = self.find_document(document.record_key, document.sha256)
            if existing is not None:
                changes = {"last_run": run_id}
                if existing["status"] in ("missing", "replaced"):
                    self._retire_versions(document.record_key)
                    changes["status"] = "active"
                self.db["documents"].update(existing["id"], changes)
                return existing["id"], False, changes.get("status", existing["status"])
            if segmentation is None:
                raise ValueError(f"{document.record_key}: a new document needs its segmentation")
            twin = self.db.execute(
                "select id from documents where sha256 = ? and record_key != ? and status = 'active' "
                "order by id limit 1",
                [document.sha256, document.record_key],
            ).fetchone()
            self._retire_versions(document.record_key)
            status = "duplicate" if twin else "active"
            document_id = self._insert_row(
                "documents",
                {
                    "record_key": document.record_key,
                    "path": document.path,
                    "sha256": document.sha256,
                    "format": document.format,
                    "title": document.title,
                    "date": document.date,
                    "size": document.size,
                    "encoding": document.encoding,
                    "text": document.text,
                    "metadata": json.dumps(document.metadata, sort_keys=True, default=str),
                    "status": status,
                    "duplicate_of": twin[0] if twin else None,
                    "first_run": run_id,
                    "last_run": run_id,
                }
            )
            # Plain executemany: sqlite-utils' insert_all inspects the schema on every call.
            self.db.conn.executemany(
                'insert into document_sentences (document_id, position, start, "end", paragraph, is_heading) '
                "values (?, ?, ?, ?, ?, ?)",
                [
                    (document_id, position, span.start, span.end, paragraph, int(heading))
                    for position, (span, paragraph, heading) in enumerate(
                        zip(segmentation.sentences, segmentation.sentence_paragraph, segmentation.sentence_is_heading)
                    )
                ],
            )
            if document.reference_summary:
                self.db["reference_summaries"].insert(
                    {"document_id": document_id, "text": document.reference_summary, "source": document.reference_source}
                )
                # Identical content: a reference found under the second name serves the
                # first, which is the one summarized and scored.
                if twin and not self.db.execute(
                    "select 1 from reference_summaries where document_id = ?", [twin[0]]
                ).fetchone():
                    self.db["reference_summaries"].insert(
                        {
                            "document_id": twin[0],
                            "text": document.reference_summary,
                            "source": f"{document.reference_source} (found with {document.record_key})",
                        }
                    )
        return document_id, True, status

    def _retire_versions(self, record_key: str) -> None:
        """The record's current version (active, or missing from disk) is superseded."""
        self.db.execute(
            "update documents set status = 'replaced' where record_key = ? and status in ('active', 'missing')",
            [record_key],
        )

    def mark_missing(self, document_id: int) -> None:
        """The file behind a stored document is gone: keep everything, say so."""
        with self.transaction():
            self.db["documents"].update(document_id, {"status": "missing"})

    def record_problem(self, run_id: int, path: str, kind: str, reason: str) -> None:
        with self.transaction():
            self.db["ingest_problems"].insert(
                {"run_id": run_id, "path": path, "kind": kind, "reason": reason, "created": now()}
            )

    # summaries --------------------------------------------------------------------

    def has_summary(self, document_id: int, method: str, param_hash: str) -> bool:
        return bool(
            self.db.execute(
                "select 1 from summaries where document_id = ? and method = ? and param_hash = ?",
                [document_id, method, param_hash],
            ).fetchone()
        )

    def documents_with_summary(self, method: str, param_hash: str) -> set[int]:
        """Ids of the documents that have a summary by ``method`` with these parameters
        (one query per method, instead of one per document)."""
        return {
            row[0]
            for row in self.db.execute(
                "select document_id from summaries where method = ? and param_hash = ?", [method, param_hash]
            )
        }

    def add_summary(self, document_id: int, run_id: int, summary: Summary) -> int:
        """Store a summary with its sentences, sources and flags; a summary already
        stored for the same document, method and parameters is kept as it is."""
        with self.transaction():
            row = self.db.execute(
                "select id from summaries where document_id = ? and method = ? and param_hash = ?",
                [document_id, summary.method, summary.param_hash],
            ).fetchone()
            if row:
                return row[0]
            summary_id = self._insert_row(
                "summaries",
                {
                    "document_id": document_id,
                    "method": summary.method,
                    "param_hash": summary.param_hash,
                    "params": json.dumps(summary.params, sort_keys=True, default=str),
                    "text": summary.text,
                    "seconds": summary.seconds,
                    "details": json.dumps(summary.details, sort_keys=True, default=str),
                    "run_id": run_id,
                    "created": now(),
                }
            )
            self.db.conn.executemany(
                "insert into summary_sentences (summary_id, position, text, score) values (?, ?, ?, ?)",
                [(summary_id, position, sentence.text, sentence.score) for position, sentence in enumerate(summary.sentences)],
            )
            self.db.conn.executemany(
                'insert into sentence_sources (summary_id, position, rank, start, "end", similarity) '
                "values (?, ?, ?, ?, ?, ?)",
                [
                    (summary_id, position, rank, link.span.start, link.span.end, link.similarity)
                    for position, sentence in enumerate(summary.sentences)
                    for rank, link in enumerate(sentence.sources)
                ],
            )
            if summary.flags:
                self.db["flags"].insert_all(
                    {"summary_id": summary_id, "position": flag.position, "kind": flag.kind, "detail": flag.detail}
                    for flag in summary.flags
                )
        return summary_id
