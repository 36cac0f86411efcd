"""Aspect summaries in the store: written once per (document, aspect, method,
parameter hash), so a rerun adds only what is missing; read back as rows with the
text of each sentence sliced from its document."""

from __future__ import annotations

import json

import sqlite_utils

from store.aspect_records import AnswerSentence, AspectSummary, StoredAnswer
from store.runs import now


class AspectSummaries:
    """The ``aspect_summaries`` and ``aspect_sentences`` tables (``store.aspects``)."""

    def __init__(self, db: sqlite_utils.Database):
        self.db = db

    def done(self, aspect: str, method: str, param_hash: str) -> set[int]:
        """Ids of the documents already answered for this aspect, method and parameters."""
        return {
            row[0]
            for row in self.db.execute(
                "select document_id from aspect_summaries where aspect = ? and method = ? and param_hash = ?",
                [aspect, method, param_hash],
            )
        }

    def add(self, document_id: int, run_id: int, summary: AspectSummary) -> tuple[int, bool]:
        """Store an aspect summary with its spans; returns ``(id, added)`` (an existing one is kept)."""
        with self.db.atomic():
            row = self.db.execute(
                "select id from aspect_summaries where document_id = ? and aspect = ? and method = ? "
                "and param_hash = ?",
                [document_id, summary.aspect, summary.method, summary.param_hash],
            ).fetchone()
            if row:
                return row[0], False
            summary_id = self.db.conn.execute(
                "insert into aspect_summaries (document_id, aspect, method, param_hash, params, addressed, "
                "confidence, details, run_id, created) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                [
                    document_id, summary.aspect, summary.method, summary.param_hash,
                    json.dumps(summary.params, sort_keys=True, default=str), int(summary.addressed),
                    summary.confidence, json.dumps(summary.details, sort_keys=True, default=str), run_id, now(),
                ],
            ).lastrowid
            self.db.conn.executemany(
                'insert into aspect_sentences (aspect_summary_id, position, start, "end", score) '
                "values (?, ?, ?, ?, ?)",
                [
                    (summary_id, position, sentence.sources[0].span.start, sentence.sources[0].span.end,
                     sentence.score)
                    for position, sentence in enumerate(summary.sentences)
                ],
            )
        return summary_id, True

    def rows(
        self,
        document_ids: list[int] | None = None,
        aspects: list[str] | None = None,
        method: str | None = None,
        param_hashes: list[str] | None = None,
        latest: bool = False,
    ) -> list[StoredAnswer]:
        """Stored aspect summaries of current documents, by document then aspect, each
        with its sentences (span, score, the text it slices from the document).
        ``latest``: only the newest answer of each document, aspect and method (older
        ones were made with other settings or guide phrases)."""
        sql = """
            select a.id, a.document_id, d.record_key, d.title, d.date, a.aspect, a.method, a.param_hash,
                   a.addressed, a.confidence, a.details, a.run_id, d.text
            from aspect_summaries a join documents d on d.id = a.document_id
            where d.status != 'replaced'
        """
        params: list = []
        for column, values in (("a.document_id", document_ids), ("a.aspect", aspects), ("a.param_hash", param_hashes)):
            if values:
                sql += f" and {column} in ({', '.join('?' for _ in values)})"
                params += list(values)
        if method:
            sql += " and a.method = ?"
            params.append(method)
        if latest:
            sql += (" and a.id = (select max(b.id) from aspect_summaries b where b.document_id = a.document_id"
                    " and b.aspect = a.aspect and b.method = a.method)")
        found = self.db.execute(sql + " order by d.record_key, a.aspect, a.id", params).fetchall()
        spans: dict[int, list[tuple]] = {}
        if found:
            ids = [row[0] for row in found]
            for summary_id, position, start, end, score in self.db.execute(
                'select aspect_summary_id, position, start, "end", score from aspect_sentences '
                f"where aspect_summary_id in ({', '.join('?' for _ in ids)}) order by aspect_summary_id, position",
                ids,
            ).fetchall():
                spans.setdefault(summary_id, []).append((position, start, end, score))
        rows = []
        for (summary_id, document_id, record_key, title, date, aspect, method_name, p_hash, addressed, confidence,
             details, run_id, text) in found:
            sentences = tuple(
                AnswerSentence(position, start, end, score, text[start:end])
                for position, start, end, score in spans.get(summary_id, [])
            )
            rows.append(
                StoredAnswer(summary_id, document_id, record_key, title, date, aspect, method_name, p_hash,
                             bool(addressed), confidence, json.loads(details or "{}"), run_id, sentences)
            )
        return rows
