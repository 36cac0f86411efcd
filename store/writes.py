"""Writing to the store: idempotent, one nested transaction per document.

A rerun finds what is already there by natural keys (record key + content hash for
documents; document + method + parameter hash for summaries) and adds only what is
missing. A run commits documents in groups (:meth:`StoreWrites.write_groups`), so an
interrupted run loses at most the group in flight.

Every write goes through :meth:`Store.transaction <store.store.Store.transaction>`.
"""

from __future__ import annotations

import json
from array import array
from collections.abc import Iterable

import sqlite_utils

from store.duplicates import canonical_rank, make_canonical, still_active, stored_rank
from store.id_sets import IdSet
from store.records import Document, Segmentation, Summary
from store.reference_history import replace_reference
from store.references import References
from store.runs import now
from store.write_groups import DEFAULT_GROUP_DOCUMENTS, DEFAULT_GROUP_SECONDS, WriteGroups


class StoreWrites:
    """The writes of :class:`~store.store.Store` (which supplies ``db``,
    ``references`` and ``transaction``)."""

    db: sqlite_utils.Database
    references: References

    def _insert_row(self, table: str, row: dict) -> int:
        """Insert one row of plain values; returns its rowid. (Plain SQL for the rows
        written per document: sqlite-utils' insert inspects the schema on every call.)"""
        columns = ", ".join(f'"{column}"' for column in row)
        marks = ", ".join("?" for _ in row)
        cursor = self.db.conn.execute(f'insert into "{table}" ({columns}) values ({marks})', list(row.values()))
        return cursor.lastrowid

    def write_groups(
        self, max_documents: int = DEFAULT_GROUP_DOCUMENTS, max_seconds: float = DEFAULT_GROUP_SECONDS
    ) -> WriteGroups:
        """Documents written inside commit together, many at a time (``store/write_groups.py``)."""
        return WriteGroups(self, max_documents, max_seconds)

    # documents --------------------------------------------------------------------

    def find_document(self, record_key: str, sha256: str) -> dict | None:
        """The stored version of this record with this content (id and status), if any."""
        row = self.db.execute(
            "select id, status from documents where record_key = ? and sha256 = ?", [record_key, sha256]
        ).fetchone()
        return {"id": row[0], "status": row[1]} if row else None

    def add_document(
        self, document: Document, segmentation: Segmentation | None, run_id: int
    ) -> tuple[int, bool, str]:
        """Store a document unless the same record with the same content is there.

        Returns ``(document_id, added, status)``. A record whose content changed gets a new row;
        the earlier version stays, marked ``replaced``, with its summaries. Content
        already stored under another record key is a ``duplicate``: of the stored
        copy, or the stored copy becomes a duplicate of this one when this one ranks
        first (``store/duplicates.py``). The
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
                assignments = ", ".join(f"{column} = ?" for column in changes)
                self.db.execute(f"update documents set {assignments} where id = ?", [*changes.values(), existing["id"]])
                return existing["id"], False, changes.get("status", existing["status"])
            if segmentation is None:
                raise ValueError(f"{document.record_key}: a new document needs its segmentation")
            # "+status": without statistics SQLite would pick the status index and read
            # every active document on each insert; the hash index finds the few twins.
            twin = self.db.execute(
                "select id from documents where sha256 = ? and record_key != ? and +status = 'active' "
                "order by id limit 1",
                [document.sha256, document.record_key],
            ).fetchone()
            self._retire_versions(document.record_key)
            # The canonical copy does not depend on which copy the walk met first.
            replaces_twin = bool(twin) and canonical_rank(
                document.record_key, document.path, document.modified
            ) < stored_rank(self.db, twin[0])
            status = "duplicate" if twin and not replaces_twin else "active"
            document_id = self._insert_row(
                "documents",
                {
                    "record_key": document.record_key,
                    "path": document.path,
                    "sha256": document.sha256,
                    "format": document.format,
                    "title": document.title,
                    "date": document.date,
                    "date_source": document.date_source,
                    "modified": document.modified,
                    "size": document.size,
                    "encoding": document.encoding,
                    "text": document.text,
                    "metadata": json.dumps(document.metadata, sort_keys=True, default=str),
                    "status": status,
                    "duplicate_of": twin[0] if twin and not replaces_twin else None,
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
                    {
                        "document_id": document_id,
                        "text": document.reference_summary,
                        "source": document.reference_source,
                        "since": now(),
                    }
                )
                # Identical content: a reference found under the second name serves the
                # first, which is the one summarized and scored.
                if twin and not replaces_twin and not self.references.exists(twin[0]):
                    self.db["reference_summaries"].insert(
                        {
                            "document_id": twin[0],
                            "text": document.reference_summary,
                            "source": f"{document.reference_source} (found with {document.record_key})",
                            "since": now(),
                        }
                    )
            if replaces_twin:
                make_canonical(self.db, self.references, document_id, twin[0])
        return document_id, True, status

    def still_active(self, document_ids: Iterable[int]) -> array:
        return still_active(self.db, document_ids)

    def refresh_reference(self, document_id: int, document: Document, run_id: int) -> str | None:
        """Bring a stored document's current reference summary in line with what was
        found on this read (a sidecar added, edited or removed beside an unchanged
        file); the old one and its scores are kept as history (``store/reference_history.py``).
        Returns 'new', 'edited', 'removed' or None (unchanged)."""
        with self.transaction():
            return replace_reference(
                self.db,
                self.references,
                document_id,
                document.reference_summary,
                document.reference_source,
                run_id,
                now(),
            )

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

    # summaries --------------------------------------------------------------------

    def has_summary(self, document_id: int, method: str, param_hash: str) -> bool:
        return bool(
            self.db.execute(
                "select 1 from summaries where document_id = ? and method = ? and param_hash = ?",
                [document_id, method, param_hash],
            ).fetchone()
        )

    def documents_with_summary(self, method: str, param_hash: str) -> IdSet:
        """Ids of the documents that have a summary by ``method`` with these parameters
        (one query per method, instead of one per document; a bitmap, so that a
        rerun over a large archive does not hold every id as a Python object)."""
        return IdSet().update(
            row[0]
            for row in self.db.execute(
                "select document_id from summaries where method = ? and param_hash = ?", [method, param_hash]
            )
        )

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
