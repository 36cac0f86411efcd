"""Reading the store for people: search, and one document with everything known
about it."""

from __future__ import annotations

import json
import os
from dataclasses import dataclass, field

import sqlite_utils

from store.references import References
from store.summary_details import load_summary_details


class DocumentNotFound(LookupError):
    pass


@dataclass
class SearchMatch:
    """Where a search matched: a method's summary, or (``method`` None) the title or path."""

    method: str | None
    snippet: str


@dataclass
class SearchHit:
    document_id: int
    record_key: str
    title: str | None
    date: str | None
    matches: list[SearchMatch] = field(default_factory=list)


class Queries:
    """``find`` and ``show``."""

    def __init__(self, db: sqlite_utils.Database, references: References):
        self.db = db
        self.references = references

    def find(self, query: str, limit: int = 20, method: str | None = None) -> list[SearchHit]:
        """Documents whose title, path or summaries match ``query`` (FTS5, Porter
        stemmed), best match first. Each hit names the document, the method whose
        summary matched (None when only the title or path did) and a snippet with
        matches in [brackets]."""
        quoted = self.db.quote_fts(query)
        hits: dict[int, SearchHit] = {}
        summary_sql = """
            select d.id, d.record_key, d.title, d.date, s.method,
                   snippet(summaries_fts, 0, '[', ']', ' … ', 16) as snippet,
                   bm25(summaries_fts) as rank
            from summaries_fts
            join summaries s on s.rowid = summaries_fts.rowid
            join documents d on d.id = s.document_id
            where summaries_fts match ? and d.status != 'replaced'
        """
        params: list = [quoted]
        if method:
            summary_sql += " and s.method = ?"
            params.append(method)
        title_sql = """
            select d.id, d.record_key, d.title, d.date, null as method,
                   snippet(documents_fts, 0, '[', ']', ' … ', 16) as snippet,
                   bm25(documents_fts) as rank
            from documents_fts join documents d on d.id = documents_fts.rowid
            where documents_fts match ? and d.status != 'replaced'
        """
        rows = list(self.db.execute(summary_sql, params).fetchall())
        if not method:
            rows += list(self.db.execute(title_sql, [quoted]).fetchall())
        for doc_id, record_key, title, date, hit_method, snippet, _rank in sorted(rows, key=lambda r: r[6]):
            hit = hits.setdefault(doc_id, SearchHit(doc_id, record_key, title, date))
            hit.matches.append(SearchMatch(hit_method, snippet))
        return list(hits.values())[:limit]

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
            raise DocumentNotFound(f"no document {reference!r} in the store (give an id, record key or path)")
        return self.db["documents"].get(row[0])

    def show(self, reference: str, method: str | None = None) -> dict:
        """Everything stored about one document, as the JSON record ``show`` prints."""
        document = self.resolve(reference)
        stored_reference = self.references.of(document["id"])
        where = "s.document_id = ?"
        params: list = [document["id"]]
        if method:
            where += " and s.method = ?"
            params.append(method)
        summaries = load_summary_details(
            self.db, where, params, lambda _document_id: document["text"], order="s.method, s.id"
        )
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
            "reference_summary": (
                {"text": stored_reference.text, "source": stored_reference.source} if stored_reference else None
            ),
            "summaries": [summary.as_dict() for summary in summaries],
            "versions": versions,
        }
