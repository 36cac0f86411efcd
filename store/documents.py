"""Stored documents as the records the methods take: no re-reading, no re-splitting."""

from __future__ import annotations

import json
from collections.abc import Iterable, Iterator
from dataclasses import dataclass

import sqlite_utils

from store.records import Document, Segmentation, Span
from store.references import References

LOADED_COLUMNS = "record_key, path, text, format, sha256, size, title, date, date_source, modified, encoding, metadata"


@dataclass(frozen=True)
class StoredVersion:
    """One stored row of a document: its id, record key and status."""

    id: int
    record_key: str
    status: str


@dataclass(frozen=True)
class DocumentBrief:
    """What a comparison or a report shows of a document."""

    id: int
    title: str | None
    record_key: str
    text: str
    reference: str | None


class DocumentReads:
    """Reads of the stored documents."""

    def __init__(self, db: sqlite_utils.Database, references: References):
        self.db = db
        self.references = references

    def segmentation(self, document_id: int) -> Segmentation:
        """The sentence spans stored for a document. Paragraph spans are not stored;
        each is rebuilt as the stretch from its first sentence to its last."""
        rows = self.db.execute(
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

    def load(self, document_id: int) -> tuple[Document, Segmentation]:
        """A stored document as the record the methods take, with its reference summary."""
        # Plain SQL: sqlite-utils' get() inspects the schema on every call, and a run
        # loads every document it summarizes.
        cursor = self.db.execute(f"select {LOADED_COLUMNS} from documents where id = ?", [document_id])
        found = cursor.fetchone()
        if found is None:
            raise KeyError(f"no stored document with id {document_id}")
        row = dict(zip((column[0] for column in cursor.description), found))
        reference = self.references.of(document_id)
        document = Document(
            record_key=row["record_key"],
            path=row["path"],
            text=row["text"],
            format=row["format"],
            sha256=row["sha256"],
            size=row["size"],
            title=row["title"],
            date=row["date"],
            date_source=row["date_source"],
            modified=row["modified"],
            encoding=row["encoding"],
            reference_summary=reference.text if reference else None,
            reference_source=reference.source if reference else None,
            metadata=json.loads(row["metadata"]) if row["metadata"] else {},
        )
        segmentation = self.segmentation(document_id).with_asides(document.aside_spans())
        document.headings = [
            span for span, heading in zip(segmentation.sentences, segmentation.sentence_is_heading) if heading
        ]
        return document, segmentation

    def text(self, document_id: int) -> str:
        return self.db.execute("select text from documents where id = ?", [document_id]).fetchone()[0]

    def texts(self, document_ids: Iterable[int]) -> Iterator[str]:
        """The texts of the given documents, one at a time (a large archive is never
        held in memory at once)."""
        for document_id in document_ids:
            yield self.text(document_id)

    def active_texts(self) -> ActiveTexts:
        """Texts of every active document, what archive-wide statistics are fitted on:
        read from the store each time they are iterated, never held all at once."""
        return ActiveTexts(self.db)

    def active(self) -> Iterator[StoredVersion]:
        """Every active document, one row at a time (from the index, without its text)."""
        for row in self.db.execute("select id, record_key, status from documents where status = 'active'"):
            yield StoredVersion(*row)

    def current(self) -> list[StoredVersion]:
        """Every active or duplicate document: the store's current version of each file."""
        return [
            StoredVersion(*row)
            for row in self.db.execute(
                "select id, record_key, status from documents where status in ('active', 'duplicate')"
            )
        ]

    def count(self) -> int:
        return self.db.execute("select count(*) from documents").fetchone()[0]

    def briefs(self, document_ids: list[int]) -> dict[int, DocumentBrief]:
        """Title, record key, text and reference of the given documents, by id."""
        references = self.references.of_ids(document_ids)
        found: dict[int, DocumentBrief] = {}
        for start in range(0, len(document_ids), 500):
            chunk = document_ids[start : start + 500]
            marks = ",".join("?" for _ in chunk)
            for row in self.db.execute(
                f"select id, title, record_key, text from documents where id in ({marks})", chunk
            ):
                reference = references.get(row[0])
                found[row[0]] = DocumentBrief(*row, reference=reference.text if reference else None)
        return found


class ActiveTexts:
    """The texts of the active documents in id order, as an iterable that reads them
    from the store on each pass (several methods may fit on it in turn)."""

    def __init__(self, db):
        self.db = db

    def __iter__(self) -> Iterator[str]:
        for (text,) in self.db.execute("select text from documents where status = 'active' order by id"):
            yield text
