"""Markdown to readable blocks, parsed with markdown-it-py (CommonMark + tables).

Emphasis, code and link markup are dropped, keeping the words; headings lose
their '#'s; each list item becomes one line ('- ' for bullets, the item's own
number for ordered lists), nested items included; table rows become lines of
cells joined by ' | '; raw HTML keeps only its text. Paragraphs keep their
line breaks.
"""

from __future__ import annotations

from bs4 import BeautifulSoup
from markdown_it import MarkdownIt
from markdown_it.token import Token

from summarize.reading.readers.blocks import HEADING, LIST, PARAGRAPH, TABLE, Block

_PARSER = MarkdownIt("commonmark").enable("table")


def markdown_blocks(text: str) -> list[Block]:
    tokens = _PARSER.parse(text)
    blocks: list[Block] = []
    index = 0
    while index < len(tokens):
        token = tokens[index]
        if token.type == "heading_open":
            level = int(token.tag[1])
            blocks.append(Block(_inline_text(tokens[index + 1], " "), HEADING, level))
            index += 3
        elif token.type in ("bullet_list_open", "ordered_list_open"):
            end = _matching_close(tokens, index)
            blocks.append(Block("\n".join(_list_lines(tokens[index:end])), LIST))
            index = end + 1
        elif token.type == "table_open":
            end = _matching_close(tokens, index)
            blocks.append(Block("\n".join(_table_lines(tokens[index:end])), TABLE))
            index = end + 1
        elif token.type == "inline":
            blocks.append(Block(_inline_text(token, "\n"), PARAGRAPH))
            index += 1
        elif token.type in ("fence", "code_block"):
            blocks.append(Block(token.content, PARAGRAPH))
            index += 1
        elif token.type == "html_block":
            blocks.append(Block(_html_text(token.content), PARAGRAPH))
            index += 1
        else:
            index += 1
    return blocks


def _matching_close(tokens: list[Token], open_index: int) -> int:
    """Index of the token closing the one at ``open_index`` (same level, nesting -1)."""
    opening = tokens[open_index]
    for index in range(open_index + 1, len(tokens)):
        token = tokens[index]
        if token.nesting == -1 and token.level == opening.level and token.tag == opening.tag:
            return index
    return len(tokens) - 1


def _list_lines(tokens: list[Token]) -> list[str]:
    """One line per list item; an item's own paragraphs are joined by spaces and
    its nested list follows as further lines."""
    lines: list[str] = []
    markers: list[str] = []
    parts: list[str] = []
    for token in tokens:
        if token.type == "list_item_open":
            if parts:
                lines.append(markers[-1] + " ".join(parts))
                parts = []
            if token.markup in (".", ")"):
                markers.append(f"{token.info}{token.markup} ")
            else:
                markers.append("- ")
        elif token.type == "list_item_close":
            if parts:
                lines.append(markers[-1] + " ".join(parts))
                parts = []
            markers.pop()
        elif token.type == "inline":
            parts.append(_inline_text(token, " "))
        elif token.type in ("fence", "code_block"):
            parts.append(" ".join(token.content.split()))
    return lines


def _table_lines(tokens: list[Token]) -> list[str]:
    lines: list[str] = []
    cells: list[str] = []
    for token in tokens:
        if token.type == "tr_open":
            cells = []
        elif token.type == "inline":
            cells.append(_inline_text(token, " "))
        elif token.type == "tr_close":
            lines.append(" | ".join(cells))
    return lines


def _inline_text(token: Token, line_break: str) -> str:
    pieces: list[str] = []
    for child in token.children or []:
        if child.type in ("text", "code_inline"):
            pieces.append(child.content)
        elif child.type == "image":
            pieces.append(child.content)
        elif child.type in ("softbreak", "hardbreak"):
            pieces.append(line_break)
    return "".join(pieces).strip()


def _html_text(html: str) -> str:
    return BeautifulSoup(html, "lxml").get_text(" ", strip=True)
