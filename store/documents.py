"""Stored documents as the records the methods take: no re-reading, no re-splitting."""

from __future__ import annotations

import json

import sqlite_utils

from store.records import Document, Segmentation, Span


def stored_segmentation(db: sqlite_utils.Database, document_id: int) -> Segmentation:
    """The sentence spans stored for a document. Paragraph spans are not stored; each is
    rebuilt as the stretch from its first sentence to its last."""
    rows = db.execute(
        "select start, \"end\", paragraph, is_heading from document_sentences "
        "where document_id = ? order by position",
        [document_id],
    ).fetchall()
    paragraph_numbers = sorted({row[2] for row in rows})
    renumbered = {number: index for index, number in enumerate(paragraph_numbers)}
    bounds: dict[int, list[int]] = {}
    for start, end, paragraph, _ in rows:
        low, high = bounds.get(paragraph, (start, end))
        bounds[paragraph] = [min(low, start), max(high, end)]
    return Segmentation(
        paragraphs=tuple(Span(*bounds[number]) for number in paragraph_numbers),
        sentences=tuple(Span(row[0], row[1]) for row in rows),
        sentence_paragraph=tuple(renumbered[row[2]] for row in rows),
        sentence_is_heading=tuple(bool(row[3]) for row in rows),
    )


def stored_document(db: sqlite_utils.Database, document_id: int) -> tuple[Document, Segmentation]:
    """A stored document as the record the methods take, with its reference summary."""
    row = db["documents"].get(document_id)
    reference = db.execute(
        "select text, source from reference_summaries where document_id = ?", [document_id]
    ).fetchone()
    document = Document(
        record_key=row["record_key"],
        path=row["path"],
        text=row["text"],
        format=row["format"],
        sha256=row["sha256"],
        size=row["size"],
        title=row["title"],
        date=row["date"],
        encoding=row["encoding"],
        reference_summary=reference[0] if reference else None,
        reference_source=reference[1] if reference else None,
        metadata=json.loads(row["metadata"]) if row["metadata"] else {},
    )
    segmentation = stored_segmentation(db, document_id)
    document.headings = [
        span for span, heading in zip(segmentation.sentences, segmentation.sentence_is_heading) if heading
    ]
    return document, segmentation
