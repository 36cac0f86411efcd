"""Paragraph and sentence spans with character offsets into ``Document.text``.

Paragraphs are blocks separated by blank lines (the readers' output contract). Inside
a paragraph, heading lines, list items and field lines are units of their own, so they
are never glued to the next sentence, and a labelled table row is one sentence; each unit is then cut into sentences by a
:class:`~summarize.reading.sentences.SentenceSplitter` (report abbreviations, pySBD
underneath where its rules cannot decide). Spans are exact even when the same
sentence occurs twice.
"""

from __future__ import annotations

import re

from store.records import Document, Segmentation, Span
from summarize.reading.sentences import SentenceSplitter

_BLANK_LINE = re.compile(r"\n[ \t]*\n")
# "Date of incident: Friday 17 January 2025": a labelled field line of a report's
# header block, which stands alone like a list item.
_FIELD_LINE = re.compile(r"^\s*[A-Z][\w/&()' -]{0,40}:\s+\S")
# "Asset: Berth 5 fender; Condition: poor": a table row labelled by its headers
# (summarize.reading.readers.layout), kept as one sentence.
_TABLE_ROW = re.compile(r"[^;:\n]{1,60}: [^;\n]*(?:; [^;:\n]{1,60}: [^;\n]*)+")
_LIST_ITEM = re.compile(r"^\s*(?:[-*•–]\s+|\(?\d{1,3}[.)]\s+|\(?[a-z][.)]\s+)")
_NUMBERED_HEADING = re.compile(r"^\s*(?:\d{1,2}(?:\.\d{1,2})*\.?|[A-Z]\.|[IVX]{1,4}\.)\s+\S")
_MAX_HEADING_WORDS = 12
_MAX_NUMBERED_HEADING_WORDS = 7


DEFAULT_SPLITTER = SentenceSplitter()


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
        is_item = bool(_FIELD_LINE.match(line)) or bool(_TABLE_ROW.fullmatch(line.strip())) or (
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


def sentence_spans(text: str, start: int = 0, end: int | None = None, splitter: SentenceSplitter | None = None) -> list[Span]:
    """Sentence spans of ``text[start:end]`` (see :mod:`summarize.reading.sentences`), whitespace trimmed."""
    return (splitter or DEFAULT_SPLITTER).spans(text, start, end)


def split_document(document: Document | str, splitter: SentenceSplitter | None = None) -> Segmentation:
    """Segment a document (or a bare text) into paragraphs and sentences; ``splitter``
    defaults to :data:`DEFAULT_SPLITTER` (the report abbreviations, no additions)."""
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
            whole = heading or _TABLE_ROW.fullmatch(text, unit.start, unit.end)
            unit_sentences = [unit] if whole else sentence_spans(text, unit.start, unit.end, splitter)
            for span in unit_sentences:
                sentences.append(span)
                owner.append(paragraph_index)
                is_heading.append(heading)
    segmentation = Segmentation(
        paragraphs=tuple(paragraphs),
        sentences=tuple(sentences),
        sentence_paragraph=tuple(owner),
        sentence_is_heading=tuple(is_heading),
    )
    return segmentation if isinstance(document, str) else segmentation.with_asides(document.aside_spans())
