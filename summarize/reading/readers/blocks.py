"""The intermediate form every reader produces, and how it becomes final text.

Conventions of the final text (the splitter relies on them): blocks are joined by
one blank line; a heading is a block of its own and its span is recorded; hard
wraps are joined, so a paragraph is one line except for its field lines and list
items (one item per line); a table row is one line; no block starts or ends with
whitespace, so the text never does either.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from store.records import Span
from summarize.reading.readers.layout import labelled_rows, reflow_lines

HEADING = "heading"
PARAGRAPH = "paragraph"
LIST = "list"
TABLE = "table"

# Where a document's date came from. File metadata (a DOCX or PDF property, often the
# day the file was made or converted) is the weakest: a date in the text wins over it.
DATE_IN_TEXT = "document text"
DATE_IN_FRONT_MATTER = "front matter"
DATE_IN_HEADER = "header"
DATE_IN_EMAIL = "e-mail"
DATE_IN_RECORD = "record field"
DATE_IN_FILE_METADATA = "file metadata"

_BLANK_RUNS = re.compile(r"\n{3,}")


@dataclass
class Block:
    """One paragraph-level unit. ``level`` is the heading level (1 = top) when the
    format says so, 0 when it is unknown (plain text, PDF). ``part`` names a block
    that is kept in the text but is not the document's message (an e-mail's
    greeting, signature, quoted earlier message; see ``mailparts``), else None."""

    text: str
    kind: str = PARAGRAPH
    level: int = 0
    part: str | None = None

    @property
    def is_heading(self) -> bool:
        return self.kind == HEADING


@dataclass
class Extract:
    """What a reader found in one file (or one record). ``date_source`` says where
    ``date`` came from (DATE_SOURCES); ``warnings`` are one-line problems that did not
    stop the reading (invalid front matter, a date that could not be read)."""

    blocks: list[Block]
    title: str | None = None
    date: str | None = None
    encoding: str | None = None
    metadata: dict = field(default_factory=dict)
    reference_summary: str | None = None
    reference_source: str | None = None
    date_source: str | None = None
    warnings: list[str] = field(default_factory=list)


def clean_blocks(blocks: list[Block]) -> list[Block]:
    """Strip every line's trailing spaces and each block's outer whitespace,
    collapse runs of blank lines inside a block to one, put each heading on one
    line, reflow paragraphs and lists, label table rows, and drop blocks left empty
    (see :mod:`summarize.reading.readers.layout`)."""
    cleaned = []
    for block in blocks:
        text = _BLANK_RUNS.sub("\n\n", "\n".join(line.rstrip() for line in block.text.strip().split("\n")))
        if block.is_heading:
            # A heading is one line, whatever line breaks the source put in it.
            text = " ".join(text.split())
        elif block.kind == TABLE:
            text = labelled_rows(text)
        else:
            text = "\n\n".join(reflow_lines(part) for part in text.split("\n\n"))
        if text:
            cleaned.append(Block(text, block.kind, block.level, block.part))
    return cleaned


@dataclass
class Layout:
    """The final text with the spans of its headings and of its marked parts
    (``(part name, span)``, in text order)."""

    text: str
    headings: list[Span]
    parts: list[tuple[str, Span]]


def lay_out(blocks: list[Block]) -> Layout:
    """Join blocks into the final text, recording heading and marked-part spans."""
    texts: list[str] = []
    headings: list[Span] = []
    parts: list[tuple[str, Span]] = []
    offset = 0
    for block in clean_blocks(blocks):
        if texts:
            offset += 2
        span = Span(offset, offset + len(block.text))
        if block.is_heading:
            headings.append(span)
        if block.part:
            parts.append((block.part, span))
        texts.append(block.text)
        offset += len(block.text)
    return Layout("\n\n".join(texts), headings, parts)


def assemble(blocks: list[Block]) -> tuple[str, list[Span]]:
    """Join blocks into the final text; return it with the spans of the headings."""
    layout = lay_out(blocks)
    return layout.text, layout.headings
