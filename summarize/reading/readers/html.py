"""HTML to blocks with BeautifulSoup (lxml parser).

Page furniture (script, style, nav, header, footer, aside, form, noscript,
template) is dropped. Headings h1-h6 become headings of that level; paragraphs,
list items (one line each, '- ' or their number), table rows (cells joined by
' | '), preformatted text and loose text in containers become blocks. Inline
whitespace is collapsed; <br> keeps a line break.
"""

from __future__ import annotations

import re

from bs4 import BeautifulSoup, Comment, Doctype, NavigableString, ProcessingInstruction, Tag
from bs4.dammit import EncodingDetector

from summarize.reading.readers.blocks import DATE_IN_HEADER, HEADING, LIST, PARAGRAPH, TABLE, Block, Extract
from summarize.reading.readers.dates import iso_date
from summarize.reading.readers.decoding import decode_text

_DROPPED = frozenset({"script", "style", "nav", "header", "footer", "aside", "form", "noscript", "template", "head", "iframe", "svg", "button", "select"})
_HEADINGS = {f"h{level}": level for level in range(1, 7)}
_PARAGRAPHS = frozenset({"p", "blockquote", "dt", "dd", "figcaption", "caption", "address", "summary"})
_LISTS = frozenset({"ul", "ol", "menu"})
_INLINE = frozenset(
    {"a", "abbr", "b", "bdi", "bdo", "cite", "code", "data", "dfn", "em", "font", "i", "kbd", "mark",
     "q", "s", "samp", "small", "span", "strong", "sub", "sup", "time", "tt", "u", "var", "wbr", "del", "ins", "label", "img"}
)
_DATE_META_NAMES = ("date", "dc.date", "dcterms.created", "dcterms.date", "article:published_time", "created")
_SPACES = re.compile(r"[ \t\r\n\f\u00a0]+")


def read_html(raw: bytes) -> Extract:
    declared = EncodingDetector.find_declared_encoding(raw, is_html=True)
    text, encoding = decode_text(raw, declared=declared)
    return html_extract(text, encoding)


def html_extract(markup: str, encoding: str | None) -> Extract:
    """Blocks, title and date of an HTML document given as text."""
    soup = BeautifulSoup(markup, "lxml")
    title = _title(soup)
    date = _meta_date(soup)
    body = soup.body or soup
    blocks: list[Block] = []
    _walk(body, blocks)
    if title is None:
        title = next((block.text for block in blocks if block.is_heading and block.level == 1), None)
    return Extract(
        blocks=blocks, title=title, date=date, encoding=encoding, date_source=DATE_IN_HEADER if date else None
    )


def _title(soup: BeautifulSoup) -> str | None:
    if soup.title and soup.title.get_text(strip=True):
        return _collapse(soup.title.get_text())
    return None


def _meta_date(soup: BeautifulSoup) -> str | None:
    for meta in soup.find_all("meta"):
        name = (meta.get("name") or meta.get("property") or "").lower()
        if name in _DATE_META_NAMES:
            date = iso_date(meta.get("content", ""))
            if date:
                return date
    return None


def _walk(container: Tag, blocks: list[Block]) -> None:
    """Emit blocks for the children of a container element, gathering loose inline
    content between block-level children into paragraphs."""
    loose: list[str] = []

    def flush() -> None:
        text = _tidy("".join(loose))
        if text:
            blocks.append(Block(text, PARAGRAPH))
        loose.clear()

    for child in container.children:
        if isinstance(child, (Comment, Doctype, ProcessingInstruction)):
            continue
        if isinstance(child, NavigableString):
            loose.append(str(child))
            continue
        if not isinstance(child, Tag):
            continue
        name = child.name
        if name in _DROPPED:
            continue
        if name in _INLINE or name == "br":
            loose.append(_inline_text(child))
            continue
        flush()
        if name in _HEADINGS:
            blocks.append(Block(_tidy(_inline_text(child)), HEADING, _HEADINGS[name]))
        elif name in _PARAGRAPHS:
            blocks.append(Block(_tidy(_inline_text(child)), PARAGRAPH))
        elif name in _LISTS:
            blocks.append(Block("\n".join(_list_lines(child)), LIST))
        elif name == "table":
            blocks.append(Block("\n".join(_table_lines(child)), TABLE))
        elif name == "pre":
            blocks.append(Block(child.get_text(), PARAGRAPH))
        elif name == "hr":
            continue
        else:
            _walk(child, blocks)
    flush()


def _inline_text(element: Tag | NavigableString) -> str:
    """Text of an element with whitespace as rendered: runs collapsed, <br> kept."""
    if isinstance(element, (Comment, Doctype, ProcessingInstruction)):
        return ""
    if isinstance(element, NavigableString):
        return str(element)
    if element.name == "br":
        return "\n"
    if element.name in _DROPPED:
        return ""
    if element.name == "img":
        return element.get("alt", "")
    pieces = [_inline_text(child) for child in element.children]
    if element.name in _LISTS or element.name in _HEADINGS or element.name in _PARAGRAPHS:
        # Block elements nested in inline ones still separate their words.
        return " " + "".join(pieces) + " "
    return "".join(pieces)


def _tidy(text: str) -> str:
    """Collapse whitespace runs within each line, keeping explicit line breaks."""
    lines = [_collapse(line) for line in text.split("\n")]
    return "\n".join(line for line in lines if line)


def _collapse(text: str) -> str:
    return _SPACES.sub(" ", text).strip()


def _list_lines(list_element: Tag) -> list[str]:
    """One line per item, nested lists flattened after their parent item."""
    lines: list[str] = []
    ordered = list_element.name == "ol"
    number = int(list_element.get("start", 1)) if str(list_element.get("start", "1")).isdigit() else 1
    for item in list_element.find_all("li", recursive=False):
        own_text = "".join(
            _inline_text(child) for child in item.children if not (isinstance(child, Tag) and child.name in _LISTS)
        )
        marker = f"{number}. " if ordered else "- "
        text = _collapse(own_text)
        if text:
            lines.append(marker + text)
        number += 1
        for nested in item.find_all(list(_LISTS), recursive=False):
            lines.extend(_list_lines(nested))
    return lines


def _table_lines(table: Tag) -> list[str]:
    lines = []
    for row in table.find_all("tr"):
        if row.find_parent("table") is not table:
            continue
        cells = [_collapse(_inline_text(cell)) for cell in row.find_all(["td", "th"], recursive=False)]
        if any(cells):
            lines.append(" | ".join(cells))
    return lines
