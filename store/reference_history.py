"""Reference summaries over time: the current one per document, and the ones before.

``reference_summaries`` holds the current reference of each document and ``since``
when it is current (read through :class:`store.references.References`). When a rerun finds a new, edited or removed reference (a sidecar
written, changed or deleted beside an unchanged file), the old one moves to
``reference_history`` with the run that replaced it, and the scores computed against
it move to ``superseded_scores`` under that history row: they stay readable, marked as
belonging to the old reference, and ``score`` scores the summaries again against the
current one.
"""

from __future__ import annotations

import sqlite_utils

from store.references import References

NEW, EDITED, REMOVED = "new", "edited", "removed"
# The source of a reference found with an identical copy of the document ends with
# "(found with RECORD_KEY)".
FOUND_WITH = "(found with "


def reference_history(db: sqlite_utils.Database, document_id: int) -> list[dict]:
    """Earlier references of a document, oldest first, each with how many scores were
    computed against it."""
    return [
        {"id": row[0], "text": row[1], "source": row[2], "since": row[3], "until": row[4], "scores": row[5]}
        for row in db.execute(
            "select h.id, h.text, h.source, h.since, h.until, "
            "(select count(*) from superseded_scores s where s.history_id = h.id) "
            "from reference_history h where h.document_id = ? order by h.id",
            [document_id],
        )
    ]


def replace_reference(
    db: sqlite_utils.Database,
    references: References,
    document_id: int,
    text: str | None,
    source: str | None,
    run_id: int,
    when: str,
) -> str | None:
    """Make ``text`` (None: no reference) the document's current reference. Returns
    'new', 'edited' or 'removed' when it changed, None when it is the same. The
    caller holds the transaction."""
    current = references.current(document_id)
    if current is None and not text:
        return None
    if not text and FOUND_WITH in (current["source"] or ""):
        # Found beside an identical copy, not beside this file: its absence here says nothing.
        return None
    if current is not None and current["text"] == text:
        if current["source"] != source:
            db["reference_summaries"].update(document_id, {"source": source})
        return None
    if current is not None:
        history_id = db.execute(
            "insert into reference_history (document_id, text, source, since, until, replaced_in_run) "
            "values (?, ?, ?, ?, ?, ?)",
            [document_id, current["text"], current["source"], current["since"], when, run_id],
        ).lastrowid
        summary_filter = "summary_id in (select id from summaries where document_id = ?)"
        db.execute(
            'insert into superseded_scores (history_id, summary_id, metric, "precision", recall, f1, created) '
            f'select ?, summary_id, metric, "precision", recall, f1, created from scores where {summary_filter}',
            [history_id, document_id],
        )
        db.execute(f"delete from scores where {summary_filter}", [document_id])
        db["reference_summaries"].delete(document_id)
    if not text:
        return REMOVED
    db["reference_summaries"].insert({"document_id": document_id, "text": text, "source": source, "since": when})
    return NEW if current is None else EDITED
