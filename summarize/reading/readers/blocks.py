"""The intermediate form every reader produces, and how it becomes final text.

Conventions of the final text (the splitter relies on them): blocks are joined by
one blank line; a heading is a block of its own and its span is recorded; a list
block holds one item per line; no block starts or ends with whitespace, so the
text never does either.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from store.records import Span

HEADING = "heading"
PARAGRAPH = "paragraph"
LIST = "list"
TABLE = "table"

_BLANK_RUNS = re.compile(r"\n{3,}")


@dataclass
class Block:
    """One paragraph-level unit. ``level`` is the heading level (1 = top) when the
    format says so, 0 when it is unknown (plain text, PDF)."""

    text: str
    kind: str = PARAGRAPH
    level: int = 0

    @property
    def is_heading(self) -> bool:
        return self.kind == HEADING


@dataclass
class Extract:
    """What a reader found in one file (or one record)."""

    blocks: list[Block]
    title: str | None = None
    date: str | None = None
    encoding: str | None = None
    metadata: dict = field(default_factory=dict)
    reference_summary: str | None = None
    reference_source: str | None = None


def clean_blocks(blocks: list[Block]) -> list[Block]:
    """Strip every line's trailing spaces and each block's outer whitespace,
    collapse runs of blank lines inside a block to one, put each heading on one
    line, and drop blocks left empty."""
    cleaned = []
    for block in blocks:
        text = _BLANK_RUNS.sub("\n\n", "\n".join(line.rstrip() for line in block.text.strip().split("\n")))
        if block.is_heading:
            # A heading is one line, whatever line breaks the source put in it.
            text = " ".join(text.split())
        if text:
            cleaned.append(Block(text, block.kind, block.level))
    return cleaned


def assemble(blocks: list[Block]) -> tuple[str, list[Span]]:
    """Join blocks into the final text; return it with the spans of the headings."""
    parts: list[str] = []
    headings: list[Span] = []
    offset = 0
    for block in clean_blocks(blocks):
        if parts:
            offset += 2
        if block.is_heading:
            headings.append(Span(offset, offset + len(block.text)))
        parts.append(block.text)
        offset += len(block.text)
    return "\n\n".join(parts), headings
