"""The rows every export is made of: one per stored summary of a document of the
chosen statuses (by default current and not gone from disk), built with joins in a
fixed number of queries; and the summary settings a store holds, to choose from."""

from __future__ import annotations

import json
from dataclasses import dataclass, field

import sqlite_utils

from store.aspect_records import StoredAnswer
from store.aspect_summaries import AspectSummaries
from store.references import References
from store.summary_details import SentenceRead, load_summary_details

EXPORTED_STATUSES = ("active", "duplicate")


def _marks(values) -> str:
    return ", ".join("?" for _ in values)


@dataclass
class ExportRow:
    """One stored summary with its document, reference and scores."""

    document_id: int
    record_key: str
    path: str
    title: str | None
    date: str | None
    date_source: str | None
    format: str
    status: str
    method: str
    param_hash: str
    params: dict
    summary: str
    source_spans: list[list[int]]
    flags: list[str]
    rouge_f1: dict[str, float]
    reference_summary: str | None
    reference_source: str | None
    summary_sentences: list[SentenceRead] = field(default_factory=list)
    aspect_answers: list[StoredAnswer] = field(default_factory=list)


class ExportReads:
    """Reads for ``export``."""

    def __init__(self, db: sqlite_utils.Database, references: References):
        self.db = db
        self.references = references

    def settings(self, statuses=EXPORTED_STATUSES) -> list[dict]:
        """Each stored (method, parameters) pair with how many documents of the given
        statuses it summarized, most documents first."""
        rows = self.db.execute(
            "select s.method, s.param_hash, min(s.params), count(distinct s.document_id) as documents "
            "from summaries s join documents d on d.id = s.document_id "
            f"where d.status in ({_marks(statuses)}) group by s.method, s.param_hash "
            "order by documents desc, s.method, s.param_hash",
            list(statuses),
        ).fetchall()
        return [
            {"method": method, "param_hash": p_hash, "params": json.loads(params), "documents": count}
            for method, p_hash, params, count in rows
        ]

    def rows(
        self,
        methods: list[str] | None = None,
        param_hashes: list[str] | None = None,
        document_ids: list[int] | None = None,
        statuses=EXPORTED_STATUSES,
    ) -> list[ExportRow]:
        """Every stored summary of a document with one of ``statuses``; only the given
        methods, parameter hashes and documents when those are given; ordered by
        record key, method and summary id. Each row carries its document's newest
        answer to each aspect by each aspect method."""
        where = f"d.status in ({_marks(statuses)})"
        params: list = list(statuses)
        if methods:
            where += f" and s.method in ({_marks(methods)})"
            params += methods
        if param_hashes:
            where += " and s.param_hash in (select value from json_each(?))"
            params.append(json.dumps(param_hashes))
        if document_ids is not None:
            where += " and d.id in (select value from json_each(?))"
            params.append(json.dumps(document_ids))
        documents = {
            row[0]: row
            for row in self.db.execute(
                "select id, record_key, path, title, date, date_source, format, status, text from documents "
                "where id in (select s.document_id from summaries s join documents d on d.id = s.document_id "
                f"where {where})",
                params,
            )
        }
        references = self.references.of_documents(status_not="replaced")
        details = load_summary_details(
            self.db, where, params, lambda document_id: documents[document_id][8], order="d.record_key, s.method, s.id"
        )
        answers: dict[int, list[StoredAnswer]] = {}
        if documents:
            for answer in AspectSummaries(self.db).rows(list(documents), latest=True):
                answers.setdefault(answer.document_id, []).append(answer)
        rows = []
        for detail in details:
            document_id, record_key, path, title, date, date_source, fmt, status, _text = documents[detail.document_id]
            reference = references.get(document_id)
            rows.append(
                ExportRow(
                    document_id=document_id,
                    record_key=record_key,
                    path=path,
                    title=title,
                    date=date,
                    date_source=date_source,
                    format=fmt,
                    status=status,
                    method=detail.method,
                    param_hash=detail.param_hash,
                    params=detail.params,
                    summary=detail.text,
                    source_spans=[[src.start, src.end] for s in detail.sentences for src in s.sources[:1]],
                    flags=[f"{flag.kind}: {flag.detail}" for flag in detail.flags],
                    rouge_f1={metric: round(v["f1"], 4) for metric, v in detail.scores.items()},
                    reference_summary=reference.text if reference else None,
                    reference_source=reference.source if reference else None,
                    summary_sentences=detail.sentences,
                    aspect_answers=answers.get(document_id, []),
                )
            )
        return rows
