"""PDF text layers read with pypdf, reflowed into paragraphs.

Lines are rebuilt from pypdf's text fragments so that each keeps its font size
and weight: a short line set clearly larger (15% over the body size) or bold in
a non-bold body is a heading, as is a short line in capitals or one naming a
summary section. Lines that are only a page number are dropped, and so are
running headers and footers (see ``_without_running_lines``). Pages are then
read as one stream, so a paragraph may continue over a page break; see
``reflow`` for how lines become paragraphs. A document-information title that
is only a placeholder ('Untitled', 'Microsoft Word - x.docx') is ignored; the
first block stands in for a missing title when it is short.
"""

from __future__ import annotations

import io
import logging
import re
from collections import Counter

from pypdf import PasswordType, PdfReader
from pypdf.errors import DependencyError, FileNotDecryptedError, PdfReadError

from summarize.reading.limits import LimitExceeded, current_limits
from summarize.reading.readers.blocks import DATE_IN_FILE_METADATA, Extract
from summarize.reading.readers.dates import iso_date
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.headings import is_capitals_heading, is_heading_shaped
from summarize.reading.readers.references import is_summary_heading
from summarize.reading.readers.reflow import Line, reflow

_PAGE_NUMBER = re.compile(r"^\s*(?:-\s*\d+\s*-|(?:page\s+)?\d+(?:\s*(?:of|/)\s*\d+)?)\s*$", re.IGNORECASE)
_HEADING_SIZE_RATIO = 1.15
_MAX_TITLE_CHARS = 120
# Lines at the top and bottom of a page checked for running headers and footers.
_EDGE_LINES = 2
_DIGITS = re.compile(r"\d+")
# Producer names some tools put where the title belongs.
_PLACEHOLDER_TITLE = re.compile(r"^(?:untitled|microsoft (?:word|powerpoint|excel) - .*|.*\.(?:docx?|pdf|odt|rtf))$", re.IGNORECASE)

# pypdf logs every irregularity it works around; the batch reports problems as
# one line per file instead.
logging.getLogger("pypdf").setLevel(logging.ERROR)


def read_pdf(raw: bytes) -> Extract:
    reader = _open(raw)
    limits = current_limits()
    try:
        if len(reader.pages) > limits.max_parts:
            raise LimitExceeded("PDF page count", "max_parts", limits.max_parts)
        pages = list(reader.pages)
    except (PdfReadError, ValueError, KeyError, TypeError, AttributeError) as exc:
        raise ReadError(f"not a valid PDF ({_first_line(exc)})") from None
    if not pages:
        raise ReadError("PDF has no pages")
    page_lines: list[list[_StyledLine]] = []
    unreadable_pages = []
    characters = 0
    for number, page in enumerate(pages, start=1):
        try:
            page_lines.append(_page_lines(page))
        except Exception:  # noqa: BLE001 - one damaged page should not lose the rest
            unreadable_pages.append(number)
            continue
        characters += sum(len(line.text) for line in page_lines[-1])
        if characters > limits.max_unpacked_bytes:
            raise LimitExceeded("PDF text", "max_unpacked_bytes", limits.max_unpacked_bytes)
    if not any(line.text.strip() for lines in page_lines for line in lines):
        raise ReadError("PDF has no text layer (scanned image?)")
    page_lines = [[line for line in lines if not _PAGE_NUMBER.match(line.text)] for lines in page_lines]
    lines = [line for lines in _without_running_lines(page_lines) for line in lines]
    blocks = reflow(_mark_headings(lines))
    metadata: dict = {"pages": len(pages)}
    if unreadable_pages:
        metadata["unreadable_pages"] = unreadable_pages
    info = _document_info(reader)
    if info.get("author"):
        metadata["author"] = info["author"]
    first_block = blocks[0].text if blocks else ""
    return Extract(
        blocks=blocks,
        title=info.get("title") or (first_block if len(first_block) <= _MAX_TITLE_CHARS else None),
        date=info.get("date"),
        metadata=metadata,
        date_source=DATE_IN_FILE_METADATA if info.get("date") else None,
    )


def _without_running_lines(pages: list[list[_StyledLine]]) -> list[list[_StyledLine]]:
    """Drop running headers and footers: among the first and last few lines of
    each page, those that recur (digits aside) on at least half the pages of a
    document of three or more pages."""
    if len(pages) < 3:
        return pages
    counts: Counter[str] = Counter()
    for lines in pages:
        counts.update({_running_key(line) for line in _page_edges(lines)})
    threshold = len(pages) / 2
    running = {key for key, count in counts.items() if count >= threshold}
    kept_pages = []
    for lines in pages:
        dropped = {id(line) for line in _page_edges(lines) if _running_key(line) in running}
        kept_pages.append([line for line in lines if id(line) not in dropped])
    return kept_pages


def _page_edges(lines: list[_StyledLine]) -> list[_StyledLine]:
    visible = [line for line in lines if line.text.strip()]
    return visible[:_EDGE_LINES] + visible[-_EDGE_LINES:]


def _running_key(line: _StyledLine) -> str:
    return _DIGITS.sub("#", " ".join(line.text.split()).lower())


def _open(raw: bytes) -> PdfReader:
    if b"%PDF-" not in raw[:1024]:
        raise ReadError("not a valid PDF (no PDF header)")
    try:
        reader = PdfReader(io.BytesIO(raw))
    except (PdfReadError, ValueError, KeyError, TypeError, AttributeError) as exc:
        raise ReadError(f"not a valid PDF ({_first_line(exc)})") from None
    if reader.is_encrypted:
        # Many PDFs are encrypted only against editing and open with an empty password.
        try:
            if reader.decrypt("") == PasswordType.NOT_DECRYPTED:
                raise ReadError("PDF is encrypted")
        except (DependencyError, FileNotDecryptedError, NotImplementedError):
            raise ReadError("PDF is encrypted") from None
    return reader


def _document_info(reader: PdfReader) -> dict:
    """Title, author and creation date from the document information dictionary,
    tolerating malformed entries."""
    info: dict = {}
    try:
        metadata = reader.metadata
    except (PdfReadError, ValueError, KeyError, TypeError):
        return info
    if metadata is None:
        return info
    for key, attribute in (("title", "title"), ("author", "author")):
        try:
            value = getattr(metadata, attribute)
        except (ValueError, TypeError, KeyError):
            value = None
        if isinstance(value, str) and value.strip():
            info[key] = " ".join(value.split())
    if _PLACEHOLDER_TITLE.match(info.get("title", "")):
        del info["title"]
    try:
        info["date"] = iso_date(metadata.creation_date)
    except (ValueError, TypeError, KeyError):
        info["date"] = None
    return info


class _StyledLine:
    """A line being rebuilt from text fragments, with the size and weight of the
    characters it holds."""

    def __init__(self) -> None:
        self.text = ""
        self.sizes: Counter[float] = Counter()
        self.bold_chars = 0

    def add(self, text: str, size: float, bold: bool) -> None:
        self.text += text
        visible = len(text.strip())
        self.sizes[size] += visible
        if bold:
            self.bold_chars += visible

    @property
    def size(self) -> float:
        return max((size for size, count in self.sizes.items() if count), default=0.0)

    @property
    def bold(self) -> bool:
        visible = len(self.text.strip())
        return visible > 0 and self.bold_chars == visible


def _page_lines(page) -> list[_StyledLine]:
    lines = [_StyledLine()]

    def visit(text: str, cm: list, tm: list, font: dict | None, font_size: float) -> None:
        size = round(abs(font_size * (tm[3] or tm[0]) * (cm[3] or cm[0] or 1)), 1)
        bold = bool(font) and "bold" in str(font.get("/BaseFont", "")).lower()
        pieces = text.split("\n")
        for index, piece in enumerate(pieces):
            if index:
                lines.append(_StyledLine())
            if piece:
                lines[-1].add(piece, size, bold)

    page.extract_text(visitor_text=visit)
    return lines


def _mark_headings(lines: list[_StyledLine]) -> list[Line]:
    sizes: Counter[float] = Counter()
    bold_chars = plain_chars = 0
    for line in lines:
        sizes.update(line.sizes)
        visible = len(line.text.strip())
        bold_chars += line.bold_chars
        plain_chars += visible - line.bold_chars
    body_size = sizes.most_common(1)[0][0] if sizes else 0.0
    body_is_bold = bold_chars > plain_chars
    marked = []
    for line in lines:
        text = line.text.strip()
        larger = body_size > 0 and line.size >= _HEADING_SIZE_RATIO * body_size
        bolder = line.bold and not body_is_bold
        heading = bool(text) and (
            ((larger or bolder) and is_heading_shaped(text))
            or is_capitals_heading(text)
            or is_summary_heading(text)
        )
        marked.append(Line(text, heading, line.size))
    return marked


def _first_line(exc: Exception) -> str:
    message = str(exc).strip().splitlines()
    return message[0] if message else type(exc).__name__
