"""Word documents (.docx) read with python-docx.

Body paragraphs and tables are taken in document order. Paragraphs styled
'Heading N' are headings of level N, and 'Title' is a level-1 heading; list paragraphs (List styles or Word numbering)
become one line each, '- ' for bullets and a running number for numbered lists;
table rows become lines of cells joined by ' | ' (a merged cell counted once).
"""

from __future__ import annotations

import io
import re
import zipfile
import zlib

import docx
from docx.document import Document as WordDocument
from docx.opc.exceptions import PackageNotFoundError
from docx.table import Table
from docx.text.paragraph import Paragraph
from lxml import etree

from summarize.reading.limits import LimitExceeded, current_limits
from summarize.reading.readers.blocks import DATE_IN_FILE_METADATA, HEADING, LIST, PARAGRAPH, TABLE, Block, Extract
from summarize.reading.readers.dates import iso_date
from summarize.reading.readers.errors import ReadError

_HEADING_STYLE = re.compile(r"^heading\s*(\d)$", re.IGNORECASE)
_W = "{http://schemas.openxmlformats.org/wordprocessingml/2006/main}"
# Paragraph start tags (<w:p>, <w:p/>, <w:p attr...>), counted before python-docx builds its tree.
_PARAGRAPH_TAG = re.compile(rb"<w:p[\s/>]")
_CHUNK = 1024 * 1024


def read_docx(raw: bytes) -> Extract:
    document = _open(raw)
    blocks: list[Block] = []
    numbering = _NumberingFormats(document)
    list_lines: list[str] = []
    counters: dict[tuple[str, int], int] = {}

    def flush_list() -> None:
        if list_lines:
            blocks.append(Block("\n".join(list_lines), LIST))
            list_lines.clear()
            counters.clear()

    for item in document.iter_inner_content():
        if isinstance(item, Table):
            flush_list()
            blocks.append(Block("\n".join(_table_lines(item)), TABLE))
            continue
        text = item.text.strip()
        if not text:
            continue
        level = _heading_level(item)
        list_format = numbering.list_format(item)
        if level:
            flush_list()
            blocks.append(Block(text, HEADING, level))
        elif list_format is not None:
            list_lines.append(_list_marker(list_format, counters) + text)
        else:
            flush_list()
            blocks.append(Block(text, PARAGRAPH))
    flush_list()

    properties = document.core_properties
    title = (properties.title or "").strip() or next((b.text for b in blocks if b.is_heading), None)
    metadata = {key: value for key, value in (("author", properties.author),) if value}
    date = iso_date(properties.created)
    return Extract(
        blocks=blocks, title=title, date=date, metadata=metadata, date_source=DATE_IN_FILE_METADATA if date else None
    )


def _open(raw: bytes) -> WordDocument:
    if not zipfile.is_zipfile(io.BytesIO(raw)):
        raise ReadError("not a valid DOCX file (bad zip)")
    try:
        _check_unpacked_size(raw)
        return docx.Document(io.BytesIO(raw))
    except (PackageNotFoundError, KeyError, ValueError, zipfile.BadZipFile, zlib.error, etree.XMLSyntaxError) as exc:
        message = str(exc).strip().splitlines()
        detail = message[0] if message else type(exc).__name__
        raise ReadError(f"not a valid DOCX file ({detail})") from None


def _check_unpacked_size(raw: bytes) -> None:
    """Refuse a package that unpacks past the limits before python-docx parses it:
    its declared sizes, then the main part streamed (a declared size can lie) with
    its paragraphs counted."""
    limits = current_limits()
    with zipfile.ZipFile(io.BytesIO(raw)) as package:
        if sum(info.file_size for info in package.infolist()) > limits.max_unpacked_bytes:
            raise LimitExceeded("DOCX unpacked size", "max_unpacked_bytes", limits.max_unpacked_bytes)
        if "word/document.xml" not in package.namelist():
            return
        unpacked = paragraphs = 0
        tail = b""
        with package.open("word/document.xml") as part:
            while chunk := part.read(_CHUNK):
                unpacked += len(chunk)
                if unpacked > limits.max_unpacked_bytes:
                    raise LimitExceeded("DOCX unpacked size", "max_unpacked_bytes", limits.max_unpacked_bytes)
                window = tail + chunk
                paragraphs += len(_PARAGRAPH_TAG.findall(window))
                if paragraphs > limits.max_parts:
                    raise LimitExceeded("DOCX paragraph count", "max_parts", limits.max_parts)
                # Four bytes cannot hold a whole tag: a tag split by the chunk is counted once.
                tail = window[-4:]


def _heading_level(paragraph: Paragraph) -> int:
    style = paragraph.style
    name = (style.name if style is not None else "") or ""
    if name.lower() == "title":
        return 1
    match = _HEADING_STYLE.match(name)
    return int(match.group(1)) if match else 0


def _list_marker(list_format: tuple[str, str, int], counters: dict[tuple[str, int], int]) -> str:
    kind, list_id, depth = list_format
    if kind == "bullet":
        return "- "
    key = (list_id, depth)
    # A return to a shallower level restarts the numbers of deeper ones.
    for other in [other for other in counters if other[0] == list_id and other[1] > depth]:
        del counters[other]
    counters[key] = counters.get(key, 0) + 1
    return f"{counters[key]}. "


class _NumberingFormats:
    """Whether a paragraph is a list item, and whether bulleted or numbered,
    from its numbering properties (its own or its style's) or its style name."""

    def __init__(self, document: WordDocument) -> None:
        self._formats: dict[tuple[str, int], str] = {}
        try:
            root = document.part.numbering_part.element
        except (KeyError, NotImplementedError, AttributeError):
            return
        abstract_formats: dict[str, dict[int, str]] = {}
        for abstract in root.findall(f"{_W}abstractNum"):
            levels = {}
            for level in abstract.findall(f"{_W}lvl"):
                fmt = level.find(f"{_W}numFmt")
                levels[int(level.get(f"{_W}ilvl", "0"))] = fmt.get(f"{_W}val") if fmt is not None else "decimal"
            abstract_formats[abstract.get(f"{_W}abstractNumId")] = levels
        for num in root.findall(f"{_W}num"):
            abstract_id = num.find(f"{_W}abstractNumId")
            if abstract_id is None:
                continue
            for depth, fmt in abstract_formats.get(abstract_id.get(f"{_W}val"), {}).items():
                self._formats[(num.get(f"{_W}numId"), depth)] = fmt

    def list_format(self, paragraph: Paragraph) -> tuple[str, str, int] | None:
        """``(kind, list id, depth)`` with kind 'bullet' or 'number', or None."""
        num_pr = _numbering_properties(paragraph)
        style_name = ((paragraph.style.name if paragraph.style is not None else "") or "").lower()
        if num_pr is not None:
            num_id, depth = num_pr
            if num_id == "0":
                return None
            fmt = self._formats.get((num_id, depth))
            if fmt is None and "number" in style_name:
                fmt = "decimal"
            kind = "number" if fmt not in (None, "bullet", "none") else "bullet"
            return kind, num_id, depth
        if style_name.startswith("list number"):
            return "number", style_name, 0
        if style_name.startswith("list bullet") or style_name == "list paragraph":
            return "bullet", style_name, 0
        return None


def _numbering_properties(paragraph: Paragraph) -> tuple[str, int] | None:
    """The (numId, ilvl) a paragraph or its style chain carries."""
    candidates = [paragraph._p.pPr]
    style = paragraph.style
    while style is not None:
        candidates.append(style.element.pPr)
        style = style.base_style
    for properties in candidates:
        if properties is None or properties.numPr is None:
            continue
        num_pr = properties.numPr
        num_id = num_pr.numId.val if num_pr.numId is not None else None
        depth = num_pr.ilvl.val if num_pr.ilvl is not None else 0
        if num_id is not None:
            return str(num_id), int(depth)
    return None


def _table_lines(table: Table) -> list[str]:
    lines = []
    for row in table.rows:
        cells = []
        seen = set()
        for cell in row.cells:
            # python-docx repeats a merged cell once per grid column it spans.
            if id(cell._tc) in seen:
                continue
            seen.add(id(cell._tc))
            cells.append(" ".join(cell.text.split()))
        if any(cells):
            lines.append(" | ".join(cells))
    return lines
