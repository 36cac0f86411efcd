"""Reference summaries: the one place the ``reference_summaries`` table is read.

Every other read that needs a document's reference (loading a document, scoring,
comparing, exporting, training) asks this object, so a change to how references are
kept touches this module alone. (The write sits with the document it belongs to, in
:mod:`store.writes`.)
"""

from __future__ import annotations

from dataclasses import dataclass

import sqlite_utils


@dataclass(frozen=True)
class Reference:
    """The human summary found for a document, and where it was found
    (``sidecar:…``, ``front-matter``, ``field:summary``, ``section:…``)."""

    document_id: int
    text: str
    source: str | None


class References:
    """Reads of the stored reference summaries."""

    def __init__(self, db: sqlite_utils.Database):
        self.db = db

    def of(self, document_id: int) -> Reference | None:
        row = self.db.execute(
            "select document_id, text, source from reference_summaries where document_id = ?", [document_id]
        ).fetchone()
        return Reference(*row) if row else None

    def current(self, document_id: int) -> dict | None:
        """The current reference as ``show`` prints it: text, source and since when it
        is current (its history is in :mod:`store.reference_history`)."""
        row = self.db.execute(
            "select text, source, since from reference_summaries where document_id = ?", [document_id]
        ).fetchone()
        return {"text": row[0], "source": row[1], "since": row[2]} if row else None

    def exists(self, document_id: int) -> bool:
        return self.of(document_id) is not None

    def of_documents(self, status_not: str | None = None) -> dict[int, Reference]:
        """Every reference, by document id (one query); ``status_not`` leaves out the
        documents with that status."""
        sql = "select r.document_id, r.text, r.source from reference_summaries r"
        params: list = []
        if status_not:
            sql += " join documents d on d.id = r.document_id where d.status != ?"
            params.append(status_not)
        return {row[0]: Reference(*row) for row in self.db.execute(sql, params)}

    def of_ids(self, document_ids: list[int]) -> dict[int, Reference]:
        """The references of the given documents, by document id."""
        found: dict[int, Reference] = {}
        for start in range(0, len(document_ids), 500):
            chunk = document_ids[start : start + 500]
            marks = ",".join("?" for _ in chunk)
            for row in self.db.execute(
                f"select document_id, text, source from reference_summaries where document_id in ({marks})", chunk
            ):
                found[row[0]] = Reference(*row)
        return found

    def referenced_document_ids(self) -> list[int]:
        """Active documents that have a reference summary, in id order."""
        return [
            row[0]
            for row in self.db.execute(
                "select d.id from documents d join reference_summaries r on r.document_id = d.id "
                "where d.status = 'active' order by d.id"
            )
        ]


def has_reference_condition(document_alias: str = "d") -> str:
    """A SQL condition, true when the document ``document_alias`` has a reference
    summary (for search filters: this module stays the one reader of the table)."""
    return f"exists (select 1 from reference_summaries r where r.document_id = {document_alias}.id)"
