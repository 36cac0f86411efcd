"""Store reads and writes for evaluation: documents with references, summaries still
to be scored, and the scores themselves."""

from __future__ import annotations

import json
from collections import defaultdict

import sqlite_utils

from store.writes import now


def active_texts(db: sqlite_utils.Database) -> list[str]:
    """Texts of every active document: what archive-wide statistics are fitted on."""
    return [row[0] for row in db.execute("select text from documents where status = 'active' order by id")]


def referenced_document_ids(db: sqlite_utils.Database) -> list[int]:
    """Active documents that have a reference summary."""
    return [
        row[0]
        for row in db.execute(
            "select d.id from documents d join reference_summaries r on r.document_id = d.id "
            "where d.status = 'active' order by d.id"
        )
    ]


def stored_summary_budgets(db: sqlite_utils.Database, exclude_methods: tuple[str, ...] = ()) -> list[tuple[int, dict]]:
    """``(document_id, params)`` of every summary of an active document with a
    reference, one per distinct parameter set and document."""
    placeholders = ",".join("?" for _ in exclude_methods) or "''"
    rows = db.execute(
        "select distinct s.document_id, s.params from summaries s "
        "join documents d on d.id = s.document_id "
        "join reference_summaries r on r.document_id = s.document_id "
        f"where d.status = 'active' and s.method not in ({placeholders}) order by s.document_id",
        list(exclude_methods),
    ).fetchall()
    return [(row[0], json.loads(row[1])) for row in rows]


def unscored_summaries(db: sqlite_utils.Database) -> list[dict]:
    """Summaries of documents with a reference that have no score yet, with their
    sentences in order and the reference text."""
    rows = db.execute(
        "select s.id, s.document_id, r.text from summaries s "
        "join reference_summaries r on r.document_id = s.document_id "
        "where not exists (select 1 from scores c where c.summary_id = s.id) order by s.id"
    ).fetchall()
    sentences = summary_sentences(db, [row[0] for row in rows])
    return [
        {"summary_id": row[0], "document_id": row[1], "reference": row[2], "sentences": sentences.get(row[0], [])}
        for row in rows
    ]


def summary_sentences(db: sqlite_utils.Database, summary_ids: list[int]) -> dict[int, list[str]]:
    """Sentence texts of each summary, in order."""
    found: dict[int, list[str]] = defaultdict(list)
    for start in range(0, len(summary_ids), 500):
        chunk = summary_ids[start : start + 500]
        marks = ",".join("?" for _ in chunk)
        for summary_id, text in db.execute(
            f"select summary_id, text from summary_sentences where summary_id in ({marks}) "
            "order by summary_id, position",
            chunk,
        ):
            found[summary_id].append(text)
    return found


def summary_spans(db: sqlite_utils.Database, summary_id: int) -> list[tuple[int, int]]:
    """Source spans behind a summary's sentences (every rank), in source order."""
    return [
        (row[0], row[1])
        for row in db.execute(
            "select start, \"end\" from sentence_sources where summary_id = ? order by start", [summary_id]
        )
    ]


def write_scores(db: sqlite_utils.Database, summary_id: int, values: dict) -> None:
    """Store one summary's scores: ``values`` maps a metric name to an object with
    ``precision``, ``recall`` and ``f1``. Existing scores of the same metric are kept."""
    created = now()
    with db.atomic():
        for metric, value in values.items():
            db.execute(
                "insert or ignore into scores (summary_id, metric, precision, recall, f1, created) "
                "values (?, ?, ?, ?, ?, ?)",
                [summary_id, metric, value.precision, value.recall, value.f1, created],
            )


def scored_summaries(db: sqlite_utils.Database) -> list[dict]:
    """Every scored summary of an active document: method, parameters, text, and its
    scores as ``{metric: {"precision", "recall", "f1"}}``."""
    summaries: dict[int, dict] = {}
    for row in db.execute(
        "select s.id, s.document_id, s.method, s.param_hash, s.params, s.text, "
        "c.metric, c.precision, c.recall, c.f1 from summaries s "
        "join documents d on d.id = s.document_id join scores c on c.summary_id = s.id "
        "where d.status = 'active' order by s.id, c.metric"
    ):
        summary_id = row[0]
        if summary_id not in summaries:
            summaries[summary_id] = {
                "summary_id": summary_id,
                "document_id": row[1],
                "method": row[2],
                "param_hash": row[3],
                "params": json.loads(row[4]),
                "text": row[5],
                "scores": {},
            }
        summaries[summary_id]["scores"][row[6]] = {"precision": row[7], "recall": row[8], "f1": row[9]}
    return list(summaries.values())


def documents_by_id(db: sqlite_utils.Database, document_ids: list[int]) -> dict[int, dict]:
    """id, title, record key, text and reference of the given documents."""
    found: dict[int, dict] = {}
    for start in range(0, len(document_ids), 500):
        chunk = document_ids[start : start + 500]
        marks = ",".join("?" for _ in chunk)
        for row in db.execute(
            "select d.id, d.title, d.record_key, d.text, r.text from documents d "
            f"left join reference_summaries r on r.document_id = d.id where d.id in ({marks})",
            chunk,
        ):
            found[row[0]] = {"id": row[0], "title": row[1], "record_key": row[2], "text": row[3], "reference": row[4]}
    return found
