"""Reading the store: search, one document with everything known about it, and the
rows that exports are made of."""

from __future__ import annotations

import json
import os

import sqlite_utils


class DocumentNotFound(LookupError):
    pass


def find(db: sqlite_utils.Database, query: str, limit: int = 20, method: str | None = None) -> list[dict]:
    """Documents whose title, path or summaries match ``query`` (FTS5, Porter stemmed),
    best match first. Each hit names the document, the method whose summary matched
    (None when only the title or path did) and a snippet with matches in [brackets]."""
    quoted = db.quote_fts(query)
    hits: dict[int, dict] = {}
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
    rows = list(db.execute(summary_sql, params).fetchall())
    if not method:
        rows += list(db.execute(title_sql, [quoted]).fetchall())
    for doc_id, record_key, title, date, hit_method, snippet, _rank in sorted(rows, key=lambda r: r[6]):
        hit = hits.setdefault(
            doc_id,
            {"document_id": doc_id, "record_key": record_key, "title": title, "date": date, "matches": []},
        )
        hit["matches"].append({"method": hit_method, "snippet": snippet})
    return list(hits.values())[:limit]


def resolve_document(db: sqlite_utils.Database, reference: str) -> dict:
    """A document by id, record key or path; the current version when a record has
    several."""
    if reference.isdigit():
        row = db.execute("select id from documents where id = ?", [int(reference)]).fetchone()
        if row:
            return db["documents"].get(row[0])
    absolute = os.path.abspath(reference)
    row = db.execute(
        "select id from documents where record_key in (?, ?) or path in (?, ?) "
        "order by status = 'replaced', id desc limit 1",
        [reference, absolute, reference, absolute],
    ).fetchone()
    if not row:
        raise DocumentNotFound(f"no document {reference!r} in the store (give an id, record key or path)")
    return db["documents"].get(row[0])


def summary_records(db: sqlite_utils.Database, summary_ids: list[int], text: str) -> list[dict]:
    """Sentences, source spans, flags and scores of the given summaries."""
    records = []
    for summary_id in summary_ids:
        summary = db["summaries"].get(summary_id)
        sentences = []
        for position, sentence_text, score in db.execute(
            "select position, text, score from summary_sentences where summary_id = ? order by position",
            [summary_id],
        ).fetchall():
            sources = [
                {"start": start, "end": end, "similarity": similarity, "text": text[start:end]}
                for start, end, similarity in db.execute(
                    "select start, end, similarity from sentence_sources "
                    "where summary_id = ? and position = ? order by rank",
                    [summary_id, position],
                ).fetchall()
            ]
            sentences.append({"position": position, "text": sentence_text, "score": score, "sources": sources})
        flags = [
            {"position": position, "kind": kind, "detail": detail}
            for position, kind, detail in db.execute(
                "select position, kind, detail from flags where summary_id = ? order by id", [summary_id]
            ).fetchall()
        ]
        scores = {
            metric: {"precision": p, "recall": r, "f1": f}
            for metric, p, r, f in db.execute(
                "select metric, precision, recall, f1 from scores where summary_id = ? order by metric",
                [summary_id],
            ).fetchall()
        }
        records.append(
            {
                "summary_id": summary_id,
                "method": summary["method"],
                "param_hash": summary["param_hash"],
                "params": json.loads(summary["params"]),
                "text": summary["text"],
                "details": json.loads(summary["details"] or "{}"),
                "run_id": summary["run_id"],
                "sentences": sentences,
                "flags": flags,
                "scores": scores,
            }
        )
    return records


def show(db: sqlite_utils.Database, reference: str, method: str | None = None) -> dict:
    """Everything stored about one document."""
    document = resolve_document(db, reference)
    reference_row = db.execute(
        "select text, source from reference_summaries where document_id = ?", [document["id"]]
    ).fetchone()
    sql = "select id from summaries where document_id = ?"
    params: list = [document["id"]]
    if method:
        sql += " and method = ?"
        params.append(method)
    summary_ids = [row[0] for row in db.execute(sql + " order by method, id", params).fetchall()]
    versions = [
        {"id": row[0], "sha256": row[1], "status": row[2], "first_run": row[3]}
        for row in db.execute(
            "select id, sha256, status, first_run from documents where record_key = ? order by id",
            [document["record_key"]],
        ).fetchall()
    ]
    return {
        "document": {k: v for k, v in document.items() if k not in ("text", "metadata")}
        | {"metadata": json.loads(document["metadata"] or "{}"), "characters": len(document["text"])},
        "text": document["text"],
        "reference_summary": (
            {"text": reference_row[0], "source": reference_row[1]} if reference_row else None
        ),
        "summaries": summary_records(db, summary_ids, document["text"]),
        "versions": versions,
    }


def export_rows(db: sqlite_utils.Database, methods: list[str] | None = None, include_text: bool = False) -> list[dict]:
    """One row per stored summary of a current (not replaced) document."""
    sql = """
        select s.id, d.id, d.record_key, d.path, d.title, d.date, d.format, d.status,
               s.method, s.param_hash, s.text, r.text, r.source, d.text
        from summaries s
        join documents d on d.id = s.document_id
        left join reference_summaries r on r.document_id = d.id
        where d.status != 'replaced'
    """
    params: list = []
    if methods:
        sql += f" and s.method in ({', '.join('?' for _ in methods)})"
        params += methods
    rows = []
    for (
        summary_id, doc_id, record_key, path, title, date, fmt, status,
        method, p_hash, text, ref_text, ref_source, doc_text,
    ) in db.execute(sql + " order by d.record_key, s.method, s.id", params).fetchall():
        detail = summary_records(db, [summary_id], doc_text)[0]
        row = {
            "document_id": doc_id,
            "record_key": record_key,
            "path": path,
            "title": title,
            "date": date,
            "format": fmt,
            "status": status,
            "method": method,
            "param_hash": p_hash,
            "summary": text,
            "source_spans": [[src["start"], src["end"]] for s in detail["sentences"] for src in s["sources"][:1]],
            "flags": [f"{f['kind']}: {f['detail']}" for f in detail["flags"]],
            "rouge_f1": {metric: round(v["f1"], 4) for metric, v in detail["scores"].items()},
            "reference_summary": ref_text,
            "reference_source": ref_source,
            "summary_sentences": detail["sentences"],
        }
        if include_text:
            row["document_text"] = doc_text
        rows.append(row)
    return rows
