"""Digests in the store: which documents a selection names, versions of a named
digest with their selection, settings and citations, and reading them back.

:meth:`Digests.select` is the one place a digest's selection becomes documents.
Its search step matches the full-text index of titles, paths and summaries with the
query quoted as one phrase, as ``find`` does.
"""

from __future__ import annotations

import hashlib
import json
import os

import sqlite_utils

from store.aspect_records import (
    CitedSpan,
    Digest,
    DigestLine,
    DigestListing,
    DigestVersion,
    DocumentSelection,
    StoredDigest,
)
from store.runs import now
from store.search import parse_query
from store.search_queries import search_documents


class DigestNotFound(LookupError):
    pass


def digest_fingerprint(documents: list[tuple[int, str]], selection: dict, settings: dict) -> str:
    """What decides whether a digest must be made again: the documents (id and content
    hash), the selection and the settings."""
    canonical = json.dumps({"documents": documents, "selection": selection, "settings": settings}, sort_keys=True)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()


class Digests:
    """The ``digests``, ``digest_sentences`` and ``digest_citations`` tables (``store.digests``)."""

    def __init__(self, db: sqlite_utils.Database):
        self.db = db

    def select(self, selection: DocumentSelection) -> list[tuple[int, str]]:
        """``(id, sha256)`` of the documents the selection names, by id."""
        conditions: list[str] = []
        params: list = []
        if selection.status == "any":
            conditions.append("d.status != 'replaced'")
        else:
            conditions.append("d.status = ?")
            params.append(selection.status)
        if selection.query:
            hits = search_documents(self.db, parse_query(selection.query), limit=-1, snippets=False).hits
            conditions.append("d.id in (select value from json_each(?))")
            params.append(json.dumps([hit.document_id for hit in hits]))
        if selection.folder:
            folder = selection.folder.rstrip("/\\")
            prefixes = {os.path.abspath(folder), folder}
            alternatives = []
            for prefix in sorted(prefixes):
                escaped = prefix.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_")
                alternatives.append("d.path like ? escape '\\' or d.record_key like ? escape '\\'")
                params += [escaped + "/%", escaped + "/%"]
            conditions.append("(" + " or ".join(alternatives) + ")")
        if selection.since:
            conditions.append("d.date is not null and substr(d.date, 1, length(?)) >= ?")
            params += [selection.since, selection.since]
        if selection.until:
            conditions.append("d.date is not null and substr(d.date, 1, length(?)) <= ?")
            params += [selection.until, selection.until]
        sql = "select d.id, d.sha256 from documents d where " + " and ".join(conditions) + " order by d.id"
        return [(row[0], row[1]) for row in self.db.execute(sql, params).fetchall()]


    def latest(self, name: str) -> DigestVersion | None:
        """The newest version of a named digest (id, version, selection, settings, fingerprint)."""
        row = self.db.execute(
            "select id, version, selection, settings, fingerprint from digests where name = ? order by version desc limit 1",
            [name],
        ).fetchone()
        if row is None:
            return None
        return DigestVersion(row[0], row[1], json.loads(row[2]), json.loads(row[3]), row[4])


    def add(self, digest: Digest, run_id: int) -> tuple[int, int, bool]:
        """Store a digest as the next version of its name; returns ``(id, version, added)``.
        When the newest version has the same fingerprint nothing is written."""
        fingerprint = digest_fingerprint(digest.documents, digest.selection, digest.settings)
        with self.db.atomic():
            latest = self.latest(digest.name)
            if latest and latest.fingerprint == fingerprint:
                return latest.id, latest.version, False
            version = latest.version + 1 if latest else 1
            digest_id = self.db.conn.execute(
                "insert into digests (name, version, selection, settings, documents, fingerprint, details, run_id, created) "
                "values (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                [
                    digest.name, version, json.dumps(digest.selection, sort_keys=True),
                    json.dumps(digest.settings, sort_keys=True, default=str), json.dumps(digest.documents),
                    fingerprint, json.dumps(digest.details, sort_keys=True, default=str), run_id, now(),
                ],
            ).lastrowid
            self.db.conn.executemany(
                "insert into digest_sentences (digest_id, position, score) values (?, ?, ?)",
                [(digest_id, position, sentence.score) for position, sentence in enumerate(digest.sentences)],
            )
            self.db.conn.executemany(
                'insert into digest_citations (digest_id, position, rank, document_id, start, "end", similarity) '
                "values (?, ?, ?, ?, ?, ?, ?)",
                [
                    (digest_id, position, rank, citation.document_id, citation.span.start, citation.span.end,
                     citation.similarity)
                    for position, sentence in enumerate(digest.sentences)
                    for rank, citation in enumerate(sentence.citations)
                ],
            )
        return digest_id, version, True


    def record(self, name: str, version: int | None = None) -> StoredDigest:
        """A stored digest with its sentences; each sentence's text is its first
        citation's span, and every citation carries its own span text and document."""
        sql = "select id, name, version, selection, settings, documents, details, run_id, created from digests where name = ?"
        params: list = [name]
        if version is not None:
            sql += " and version = ?"
            params.append(version)
        row = self.db.execute(sql + " order by version desc limit 1", params).fetchone()
        if row is None:
            known = [r[0] for r in self.db.execute("select distinct name from digests order by name")]
            raise DigestNotFound(
                f"no digest {name!r}{f' version {version}' if version else ''} in the store"
                + (f" (stored: {', '.join(known)})" if known else " (none stored yet)")
            )
        digest_id = row[0]
        citations: dict[int, list[CitedSpan]] = {}
        # One query for every citation, with its document's identity and text.
        for position, document_id, start, end, similarity, record_key, title, date, text in self.db.execute(
            'select c.position, c.document_id, c.start, c."end", c.similarity, d.record_key, d.title, d.date, d.text '
            "from digest_citations c join documents d on d.id = c.document_id "
            "where c.digest_id = ? order by c.position, c.rank",
            [digest_id],
        ).fetchall():
            citations.setdefault(position, []).append(
                CitedSpan(document_id, record_key, title, date, start, end, similarity, text[start:end])
            )
        sentences = tuple(
            DigestLine(position, score, citations[position][0].text if citations.get(position) else "",
                       tuple(citations.get(position, [])))
            for position, score in self.db.execute(
                "select position, score from digest_sentences where digest_id = ? order by position", [digest_id]
            ).fetchall()
        )
        return StoredDigest(
            digest_id=digest_id,
            name=row[1],
            version=row[2],
            selection=json.loads(row[3]),
            settings=json.loads(row[4]),
            documents=[document_id for document_id, _ in json.loads(row[5])],
            details=json.loads(row[6] or "{}"),
            run_id=row[7],
            created=row[8],
            sentences=sentences,
        )

    def newest(self) -> list[DigestListing]:
        """The newest version of every named digest."""
        rows = self.db.execute(
            "select g.name, g.version, g.created, g.selection, json_array_length(g.documents), "
            "(select count(*) from digest_sentences s where s.digest_id = g.id) "
            "from digests g where g.version = (select max(version) from digests h where h.name = g.name) order by g.name"
        ).fetchall()
        return [
            DigestListing(name, version, created, json.loads(selection), documents, sentences)
            for name, version, created, selection, documents, sentences in rows
        ]
