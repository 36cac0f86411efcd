"""Paragraph and sentence spans with character offsets into ``Document.text``.

Paragraphs are blocks separated by blank lines (the readers' output contract). Inside
a paragraph, heading lines and list items are units of their own, so they are never
glued to the next sentence; each unit is then segmented with pySBD (Sadvilkar &
Neumann 2020), a rule-based segmenter built around the "Golden Rules" for English
sentence boundaries. Sentences are located in the text by a forward search, so their
spans are exact even when the same sentence occurs twice.
"""

from __future__ import annotations

import re
from functools import lru_cache

import pysbd

from store.records import Document, Segmentation, Span

_BLANK_LINE = re.compile(r"\n[ \t]*\n")
# "Date of incident: Friday 17 January 2025": a labelled field line of a report's
# header block, which stands alone like a list item.
_FIELD_LINE = re.compile(r"^\s*[A-Z][\w/&()' -]{0,40}:\s+\S")
_LIST_ITEM = re.compile(r"^\s*(?:[-*•–]\s+|\(?\d{1,3}[.)]\s+|\(?[a-z][.)]\s+)")
_NUMBERED_HEADING = re.compile(r"^\s*(?:\d{1,2}(?:\.\d{1,2})*\.?|[A-Z]\.|[IVX]{1,4}\.)\s+\S")
_MAX_HEADING_WORDS = 12
_MAX_NUMBERED_HEADING_WORDS = 7


@lru_cache(maxsize=1)
def _segmenter() -> pysbd.Segmenter:
    return pysbd.Segmenter(language="en", clean=False)


def _looks_like_heading(line: str, standalone: bool) -> bool:
    """A short line without terminal punctuation. Alone in its paragraph that is
    enough; as the first line of a longer block it must also be numbered, in capitals
    or in Title Case, so that a wrapped line of prose is not taken for a heading."""
    stripped = line.strip()
    if not stripped or len(stripped.split()) > _MAX_HEADING_WORDS:
        return False
    if stripped[-1] in ".!?;,:":
        return False
    letters = [c for c in stripped if c.isalpha()]
    if not letters:
        return False
    if standalone or all(c.isupper() for c in letters):
        return True
    if _NUMBERED_HEADING.match(stripped):
        return True
    words = [w for w in re.findall(r"[A-Za-z][A-Za-z'-]*", stripped) if len(w) > 3]
    return bool(words) and all(w[0].isupper() for w in words)


def _units(text: str, start: int, end: int) -> list[tuple[Span, bool]]:
    """Split one paragraph into (span, is_heading) units: heading lines and list items
    stand alone; other consecutive lines form one unit of running prose."""
    units: list[tuple[Span, bool]] = []
    prose_start: int | None = None
    prose_end = start
    position = start
    lines = text[start:end].split("\n")
    for index, line in enumerate(lines):
        line_start, line_end = position, position + len(line)
        position = line_end + 1
        if not line.strip():
            continue
        # "2. Scope" is a numbered heading; "2. Replace the seals on pump 4 before May" an item.
        is_item = bool(_FIELD_LINE.match(line)) or (
            bool(_LIST_ITEM.match(line))
            and (not _NUMBERED_HEADING.match(line) or len(line.split()) > _MAX_NUMBERED_HEADING_WORDS)
        )
        # A first line without terminal punctuation, followed by field lines, is a title.
        title_over_fields = (
            index == 0
            and len(lines) > 1
            and bool(_FIELD_LINE.match(lines[1]))
            and _looks_like_heading(line, standalone=True)
        )
        standalone_heading = not is_item and len(lines) == 1 and _looks_like_heading(line, standalone=True)
        is_heading_line = not is_item and len(lines) > 1 and index == 0 and (
            title_over_fields or _looks_like_heading(line, standalone=False)
        )
        if standalone_heading or is_item or is_heading_line:
            if prose_start is not None:
                units.append((Span(prose_start, prose_end), False))
                prose_start = None
            units.append((Span(line_start, line_end), standalone_heading or is_heading_line))
        else:
            if prose_start is None:
                prose_start = line_start
            prose_end = line_end
    if prose_start is not None:
        units.append((Span(prose_start, prose_end), False))
    return units


def _trimmed(text: str, start: int, end: int) -> Span | None:
    while start < end and text[start].isspace():
        start += 1
    while end > start and text[end - 1].isspace():
        end -= 1
    return Span(start, end) if end > start else None


def sentence_spans(text: str, start: int = 0, end: int | None = None) -> list[Span]:
    """Sentence spans of ``text[start:end]`` as segmented by pySBD, whitespace trimmed."""
    end = len(text) if end is None else end
    # Hard line wraps inside running prose are not boundaries; a same-length
    # replacement keeps every offset valid.
    flat = text[start:end].replace("\n", " ")
    spans: list[Span] = []
    cursor = 0
    for piece in _segmenter().segment(flat):
        core = piece.strip()
        if not core:
            continue
        found = flat.find(core, cursor)
        if found < 0:
            # pySBD with clean=False returns substrings; if that ever changes, fail
            # loudly rather than store a span that does not slice back to the sentence.
            raise ValueError(f"sentence not found after offset {start + cursor}: {core[:60]!r}")
        spans.append(Span(start + found, start + found + len(core)))
        cursor = found + len(core)
    return spans


def split_document(document: Document | str) -> Segmentation:
    """Segment a document (or a bare text) into paragraphs and sentences."""
    text = document if isinstance(document, str) else document.text
    heading_starts = set() if isinstance(document, str) else {h.start for h in document.headings}
    paragraphs: list[Span] = []
    sentences: list[Span] = []
    owner: list[int] = []
    is_heading: list[bool] = []
    block_start = 0
    for match in list(_BLANK_LINE.finditer(text)) + [None]:
        block_end = match.start() if match else len(text)
        block = _trimmed(text, block_start, block_end)
        block_start = match.end() if match else len(text)
        if block is None:
            continue
        paragraph_index = len(paragraphs)
        paragraphs.append(block)
        for unit, heading in _units(text, block.start, block.end):
            heading = heading or unit.start in heading_starts
            unit_sentences = [unit] if heading else sentence_spans(text, unit.start, unit.end)
            for span in unit_sentences:
                sentences.append(span)
                owner.append(paragraph_index)
                is_heading.append(heading)
    return Segmentation(
        paragraphs=tuple(paragraphs),
        sentences=tuple(sentences),
        sentence_paragraph=tuple(owner),
        sentence_is_heading=tuple(is_heading),
    )
