"""Which of two byte-identical documents is the canonical copy, whatever the walk order.

The rule, in order: a name without a copy marker ("Copy of …", "copy_of_…", "… (2)",
"… - Copy", "… copy") wins over one with a marker; then the shorter path; then the earlier
modification time; then the record key, so the choice is total. The other copies are
stored as duplicates of the canonical one and are not summarized.
"""

from __future__ import annotations

import re
from array import array
from collections.abc import Iterable
from pathlib import PurePath

import sqlite_utils

from store.references import References

_COPY_MARKER = re.compile(
    r"(?:^copy[\s_-]+(?:\(\d+\)[\s_-]+)?of(?:[\s_-]|$)|\s*\(\d+\)$|\s*-\s*copy(?:\s*\(\d+\))?$"
    r"|[\s_]copy(?:\s*\d+)?$)",
    re.IGNORECASE,
)


def has_copy_marker(path: str) -> bool:
    """'Copy of quay wall report (2).txt', 'report - Copy.docx', 'notes (3).md'."""
    return bool(_COPY_MARKER.search(PurePath(path.split("#", 1)[0]).stem))


def canonical_rank(record_key: str, path: str, modified: str | None) -> tuple:
    """Sort key: the smallest is the canonical copy."""
    return (has_copy_marker(path), len(path), modified or "\uffff", record_key)


def stored_rank(db: sqlite_utils.Database, document_id: int) -> tuple:
    row = db.execute("select record_key, path, modified from documents where id = ?", [document_id]).fetchone()
    return canonical_rank(row[0], row[1], row[2])


def make_canonical(db: sqlite_utils.Database, references: References, document_id: int, former_id: int) -> None:
    """``document_id`` becomes the canonical copy in place of ``former_id``: the former
    and every duplicate of it now point at the new one, which also takes over the
    former's reference summary when it has none. The caller holds the transaction."""
    db.execute(
        "update documents set status = 'duplicate', duplicate_of = ? where id = ? or duplicate_of = ?",
        [document_id, former_id, former_id],
    )
    former = references.current(former_id)
    if former is not None and not references.exists(document_id):
        former_key = db.execute("select record_key from documents where id = ?", [former_id]).fetchone()[0]
        db["reference_summaries"].insert(
            {
                "document_id": document_id,
                "text": former["text"],
                "source": f"{former['source']} (found with {former_key})",
                "since": former["since"],
            }
        )


def still_active(db: sqlite_utils.Database, document_ids: Iterable[int]) -> array:
    """The given documents that are still active (not since made duplicates), in order,
    as an array of ids (8 bytes each). The store's other documents (duplicates, earlier
    versions, missing files) are the ones held in a set: usually far fewer."""
    inactive = {row[0] for row in db.execute("select id from documents where status != 'active'")}
    return array("q", (document_id for document_id in document_ids if document_id not in inactive))
