"""Telling heading lines from body lines in text that has no markup for them
(plain text, PDF text layers, e-mail bodies). Heuristics, stated per function."""

from __future__ import annotations

import re

from summarize.reading.readers.dates import iso_date

# A line made of one repeated punctuation character: an rst/setext underline or
# a plain-text rule.
_UNDERLINE = re.compile(r"^\s*([=\-~^*#+_.:'\"`])\1{2,}\s*$")
_LIST_ITEM = re.compile(r"^\s*(?:[-*+\u2022\u2023\u25aa\u25e6\u2013\u2043]\s+|\(?[0-9]{1,3}[.)]\s+|\(?[a-z][.)]\s+)")
_METADATA_LINE = re.compile(r"^[A-Za-z][A-Za-z .\-/]{0,30}:\s+\S")
_NUMBERED_TITLE = re.compile(r"^\d+(\.\d+)*\.?\s+[A-Z]")
_TERMINAL_PUNCTUATION = tuple(".,;!?")
_MAX_HEADING_CHARS = 80
_MAX_HEADING_WORDS = 12


def is_underline(line: str) -> bool:
    return bool(_UNDERLINE.match(line))


def is_list_item(line: str) -> bool:
    return bool(_LIST_ITEM.match(line))


def is_metadata_line(line: str) -> bool:
    """'Date: 3 May 2024', 'Ref: BR-17' and the like."""
    return bool(_METADATA_LINE.match(line.strip()))


def is_capitals_heading(line: str) -> bool:
    """A short line whose letters are all capitals ('FINDINGS', '2. SCOPE OF WORK')."""
    stripped = line.strip()
    letters = [char for char in stripped if char.isalpha()]
    return (
        len(letters) >= 2
        and all(char.isupper() for char in letters)
        and len(stripped) <= _MAX_HEADING_CHARS
        and not stripped.endswith(".")
    )


def is_heading_shaped(line: str) -> bool:
    """Short, a few words, holds letters and does not end like a sentence. Enough
    for a line whose font already marks it out."""
    stripped = line.strip()
    return (
        0 < len(stripped) <= _MAX_HEADING_CHARS
        and len(stripped.split()) <= _MAX_HEADING_WORDS
        and not stripped.endswith(_TERMINAL_PUNCTUATION)
        and any(char.isalpha() for char in stripped)
    )


def looks_like_heading(line: str) -> bool:
    """A line standing alone as a paragraph that reads as a title rather than a
    sentence: heading-shaped, starts with a capital or a section number, and is
    not a list item, a 'Key: value' line or a date ('21 May 2025')."""
    stripped = line.strip()
    if not is_heading_shaped(stripped) or is_metadata_line(stripped) or iso_date(stripped):
        return False
    if is_list_item(stripped) and not is_numbered_section(stripped):
        return False
    return stripped[0].isupper() or stripped[0].isdigit()


def is_numbered_section(line: str) -> bool:
    """'2. Findings', '3.1 Scope': a numbered section heading, not a title."""
    return bool(_NUMBERED_TITLE.match(line.strip()))
