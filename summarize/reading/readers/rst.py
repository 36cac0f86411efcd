"""reStructuredText to readable blocks, line by line.

Section titles (underlined, optionally overlined) become headings, their levels
numbered in order of first appearance as rst does; adornment, transition and
table-border lines are dropped; bullet items become '- ' lines and enumerated
items keep their numbers ('#.' is numbered); an item's indented continuation
joins its line; comments, targets and non-text directives (images, includes,
tables of contents) are dropped, while the bodies of text directives (notes,
warnings) are kept; docinfo fields (':Date: ...') become 'Date: ...' lines;
inline markup is reduced to its words.
"""

from __future__ import annotations

import re

from summarize.reading.readers.blocks import HEADING, LIST, PARAGRAPH, Block
from summarize.reading.readers.headings import is_underline
from summarize.reading.readers.text import normalise_lines

_DIRECTIVE = re.compile(r"^\.\.\s+([\w:-]+)::(.*)$")
_EXPLICIT_MARKUP = re.compile(r"^\.\.(\s|$)")
_NON_TEXT_DIRECTIVES = frozenset(
    {"image", "figure", "include", "raw", "toctree", "contents", "sectnum", "index", "meta",
     "code", "code-block", "sourcecode", "math", "csv-table", "list-table", "highlight"}
)
_BULLET = re.compile(r"^([-*+\u2022])\s+(.*)$")
_ENUMERATOR = re.compile(r"^(\(?(?:\d+|#|[a-zA-Z])[.)])\s+(.*)$")
_FIELD = re.compile(r"^:([^:]+):\s*(.*)$")
_TABLE_BORDER = re.compile(r"^\s*[+=\-|: ]*[=\-][+=\-|: ]*$")
_OPTION = re.compile(r"^:[\w-]+:")

_INLINE_RULES = (
    (re.compile(r":[\w:-]+:`([^`<]*?)(?:\s*<[^>]*>)?`"), r"\1"),  # :role:`text <target>`
    (re.compile(r"`([^`<]+?)\s*<[^>]*>`__?"), r"\1"),  # `text <url>`_
    (re.compile(r"``(.+?)``"), r"\1"),
    (re.compile(r"`([^`]+)`__?"), r"\1"),
    (re.compile(r"`([^`]+)`"), r"\1"),
    (re.compile(r"\*\*(.+?)\*\*"), r"\1"),
    (re.compile(r"(?<![\w*])\*(?!\s)(.+?)(?<!\s)\*(?![\w*])"), r"\1"),
    (re.compile(r"\s*\[(?:#\w*|\*|\d+)\]_"), ""),  # footnote references
    (re.compile(r"\b(\w+)__?(?=[\s.,;:!?)]|$)"), r"\1"),  # word_ references
)


def rst_blocks(text: str) -> list[Block]:
    lines = _drop_explicit_markup(normalise_lines(text))
    blocks: list[Block] = []
    styles: list[str] = []
    paragraph: list[str] = []
    items: list[str] = []

    def flush() -> None:
        if paragraph:
            blocks.append(Block("\n".join(paragraph), PARAGRAPH))
            paragraph.clear()
        if items:
            blocks.append(Block("\n".join(items), LIST))
            items.clear()

    auto_number = 0
    index = 0
    while index < len(lines):
        line = lines[index]
        stripped = line.strip()
        following = lines[index + 1] if index + 1 < len(lines) else ""
        if not stripped:
            flush()
            auto_number = 0
        elif _is_section_title(line, following):
            flush()
            overlined = index > 0 and is_underline(lines[index - 1])
            style = following.strip()[0] + ("/over" if overlined else "")
            if style not in styles:
                styles.append(style)
            blocks.append(Block(_inline(stripped), HEADING, styles.index(style) + 1))
            index += 2
            continue
        elif is_underline(line) or _TABLE_BORDER.match(line):
            pass
        elif (bullet := _BULLET.match(stripped)) or (enumerated := _ENUMERATOR.match(stripped)):
            if paragraph:
                flush()
            if bullet:
                marker, body = "- ", bullet.group(2)
            else:
                marker, body = enumerated.group(1) + " ", enumerated.group(2)
                if marker.startswith("#"):
                    auto_number += 1
                    marker = f"{auto_number}{marker[1:]}"
            items.append(marker + _inline(body))
        elif items and line[:1].isspace():
            items[-1] += " " + _inline(stripped)
        elif field := _FIELD.match(stripped):
            name, value = field.group(1), _inline(field.group(2))
            paragraph.append(f"{name}: {value}" if value else name)
        else:
            if items:
                flush()
            paragraph.append(_literal_marker(_inline(_table_row(stripped))))
        index += 1
    flush()
    return [block for block in blocks if block.text.strip()]


def _is_section_title(line: str, following: str) -> bool:
    return bool(line.strip()) and not line[:1].isspace() and not is_underline(line) and is_underline(following)


def _drop_explicit_markup(lines: list[str]) -> list[str]:
    """Remove comments, targets and non-text directives with their indented
    bodies; keep the dedented body of text directives (note, warning, ...)."""
    kept: list[str] = []
    index = 0
    while index < len(lines):
        line = lines[index]
        if not _EXPLICIT_MARKUP.match(line):
            kept.append(line)
            index += 1
            continue
        directive = _DIRECTIVE.match(line)
        keep_body = directive is not None and directive.group(1).lower() not in _NON_TEXT_DIRECTIVES
        if keep_body and directive.group(2).strip():
            kept.extend(["", directive.group(2).strip()])
        index += 1
        while index < len(lines) and (not lines[index].strip() or lines[index][:1].isspace()):
            body_line = lines[index].strip()
            if keep_body and not _OPTION.match(body_line):
                kept.append(body_line)
            index += 1
        kept.append("")
    return kept


def _table_row(line: str) -> str:
    if line.startswith("|") and line.endswith("|") and len(line) > 1:
        return " | ".join(cell.strip() for cell in line.strip("|").split("|"))
    return line


def _literal_marker(line: str) -> str:
    """'Example::' introduces a literal block; the reader sees 'Example:'."""
    if line == "::":
        return ""
    return line[:-1] if line.endswith("::") else line


def _inline(text: str) -> str:
    for pattern, replacement in _INLINE_RULES:
        text = pattern.sub(replacement, text)
    return text
