"""'Title: ...' and 'Date: ...' lines near the top of a document ('Subject:'
counts as a title; 'Report date:', 'Issued:' and the like as a date; the date of
an event described, such as 'Date of incident:', does not)."""

from __future__ import annotations

import re

from summarize.reading.readers.blocks import Block
from summarize.reading.readers.dates import iso_date

_FIELD_LINE = re.compile(
    r"^\s*(title|subject|date|dated|report date|date of report|issue date|date issued|issued)\s*:\s*(\S.*?)\s*$",
    re.IGNORECASE,
)
_TITLE_KEYS = ("title", "subject")
# How far down the document such lines are looked for.
_MAX_BLOCKS = 4
_MAX_LINES = 12


def preamble_fields(blocks: list[Block]) -> tuple[str | None, str | None]:
    """``(title, iso_date)`` from field lines among the first few lines; either is
    None when absent (or, for the date, unreadable)."""
    title = date = None
    lines_seen = 0
    for block in blocks[:_MAX_BLOCKS]:
        for line in block.text.split("\n"):
            lines_seen += 1
            if lines_seen > _MAX_LINES:
                return title, date
            match = _FIELD_LINE.match(line)
            if not match:
                continue
            key, value = match.group(1).lower(), match.group(2)
            if key in _TITLE_KEYS:
                title = title or value
            else:
                date = date or iso_date(value)
    return title, date
