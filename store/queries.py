"""Reading the store for people: search (the grammar in store/search.py, run by
store/search_queries.py), and one document with everything known about it."""

from __future__ import annotations

import json
import os

import sqlite_utils

from store.aspect_summaries import AspectSummaries
from store.errors import SummarizerError
from store.reference_history import reference_history
from store.references import References
from store.search import ParsedQuery
from store.search_queries import (
    DocumentHeading,
    SearchPage,
    document_formats,
    document_heading,
    search_documents,
    summary_methods,
)
from store.summary_details import load_summary_details


class DocumentNotFound(SummarizerError, LookupError):
    pass


class Queries:
    """Search (``find`` and the review site) and ``show``."""

    def __init__(self, db: sqlite_utils.Database, references: References):
        self.db = db
        self.references = references

    def search(self, query: ParsedQuery, offset: int = 0, limit: int = 20, snippets: bool = True) -> SearchPage:
        """One page of documents matching a parsed query (store/search.py), best
        first, with the total count; see store/search_queries.py."""
        return search_documents(self.db, query, offset=offset, limit=limit, snippets=snippets)

    def heading(self, document_id: int) -> DocumentHeading | None:
        """Id, title and record key of one document (for links to it)."""
        return document_heading(self.db, document_id)

    def formats(self) -> list[str]:
        """Every document format in the store."""
        return document_formats(self.db)

    def methods(self) -> list[str]:
        """Every method with a stored summary."""
        return summary_methods(self.db)

    def resolve(self, reference: str) -> dict:
        """A document row by id, record key or path; the current version when a
        record has several."""
        if reference.isdigit():
            row = self.db.execute("select id from documents where id = ?", [int(reference)]).fetchone()
            if row:
                return self.db["documents"].get(row[0])
        absolute = os.path.abspath(reference)
        row = self.db.execute(
            "select id from documents where record_key in (?, ?) or path in (?, ?) "
            "order by status = 'replaced', id desc limit 1",
            [reference, absolute, reference, absolute],
        ).fetchone()
        if not row:
            row = self._by_record_id(reference)
        if not row:
            raise DocumentNotFound(
                f"no document {reference!r} in the store (give an id, record key, path or JSON record id)"
            )
        return self.db["documents"].get(row[0])

    def _by_record_id(self, record_id: str) -> tuple | None:
        """The current version of the JSON/JSONL record whose id (the part of its
        record key after '#') is ``record_id``; an id found in several files is
        ambiguous."""
        rows = self.db.execute(
            "select id, record_key from documents where substr(record_key, -length(?) - 1) = '#' || ? "
            "order by status = 'replaced', id desc",
            [record_id, record_id],
        ).fetchall()
        keys = sorted({key for _, key in rows})
        if len(keys) > 1:
            raise DocumentNotFound(
                f"record id {record_id!r} is in several files: {', '.join(keys)}; give the record key"
            )
        return rows[0] if rows else None

    def file_records(self, path: str) -> list[dict]:
        """The records stored from one JSON/JSONL file (current versions), in file
        order; empty when ``path`` is not such a file."""
        absolute = os.path.abspath(path)
        rows = self.db.execute(
            "select id, record_key, title, date, status from documents "
            "where path in (?, ?) and record_key != path and status != 'replaced' order by id",
            [path, absolute],
        ).fetchall()
        return [
            {"id": row[0], "record_key": row[1], "record_id": row[1].rsplit("#", 1)[-1], "title": row[2],
             "date": row[3], "status": row[4]}
            for row in rows
        ]

    def show(self, reference: str, method: str | None = None) -> dict:
        """Everything stored about one document, as the JSON record ``show`` prints."""
        document = self.resolve(reference)
        # A duplicate is not summarized: its canonical copy's summaries stand for it.
        canonical = self.db["documents"].get(document["duplicate_of"]) if document["duplicate_of"] else None
        summarized = canonical or document
        where = "s.document_id = ?"
        params: list = [summarized["id"]]
        if method:
            where += " and s.method = ?"
            params.append(method)
        summaries = load_summary_details(
            self.db, where, params, lambda _document_id: summarized["text"], order="s.method, s.id"
        )
        answers = AspectSummaries(self.db).rows([summarized["id"]], method=method, latest=True)
        versions = [
            {"id": row[0], "sha256": row[1], "status": row[2], "first_run": row[3]}
            for row in self.db.execute(
                "select id, sha256, status, first_run from documents where record_key = ? order by id",
                [document["record_key"]],
            ).fetchall()
        ]
        return {
            "document": {k: v for k, v in document.items() if k not in ("text", "metadata")}
            | {"metadata": json.loads(document["metadata"] or "{}"), "characters": len(document["text"])},
            "text": document["text"],
            "reference_summary": self.references.current(summarized["id"]),
            "reference_history": reference_history(self.db, summarized["id"]),
            "canonical_copy": (
                {"id": canonical["id"], "record_key": canonical["record_key"], "title": canonical["title"]}
                if canonical else None
            ),
            "summaries": [summary.as_dict() for summary in summaries],
            "aspect_answers": [answer.as_dict() for answer in answers],
            "versions": versions,
        }
