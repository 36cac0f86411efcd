"""Plain text: kept as written, cut into paragraphs at blank lines.

Beyond normalising line ends and trailing spaces, two things change: lines that
only underline the line above ('=====') are dropped, because they are decoration
the sentence splitter would read as a sentence; and a heading line found at the
top of a paragraph is made a paragraph of its own, so each heading stands alone.
"""

from __future__ import annotations

from summarize.reading.readers.blocks import HEADING, Block
from summarize.reading.readers.headings import is_capitals_heading, is_underline, looks_like_heading
from summarize.reading.readers.references import is_summary_heading


def normalise_lines(text: str) -> list[str]:
    """Unify line ends (\\r\\n, \\r) and drop trailing whitespace of each line."""
    return [line.rstrip() for line in text.replace("\r\n", "\n").replace("\r", "\n").split("\n")]


def plain_text_blocks(text: str) -> list[Block]:
    """Paragraph and heading blocks of plain text, in order."""
    blocks: list[Block] = []
    for paragraph in _paragraphs(normalise_lines(text)):
        blocks.extend(_split_headings(paragraph))
    return blocks


def _paragraphs(lines: list[str]) -> list[list[str]]:
    paragraphs: list[list[str]] = []
    current: list[str] = []
    for line in lines:
        if line.strip():
            current.append(line)
        elif current:
            paragraphs.append(current)
            current = []
    if current:
        paragraphs.append(current)
    return paragraphs


def _split_headings(lines: list[str]) -> list[Block]:
    """Cut one blank-line paragraph into heading and body blocks.

    A line is a heading when an underline follows it, when it opens the
    paragraph and is in capitals or names a summary section, or when it is the
    paragraph's only line and looks like a heading."""
    blocks: list[Block] = []
    body: list[str] = []

    def flush_body() -> None:
        if body:
            blocks.append(Block("\n".join(body)))
            body.clear()

    for index, line in enumerate(lines):
        if is_underline(line):
            continue
        following = lines[index + 1] if index + 1 < len(lines) else None
        underlined = following is not None and is_underline(following)
        strong_opening = not body and not blocks and following is not None and (
            is_capitals_heading(line) or is_summary_heading(line)
        )
        sole_line = len(lines) == 1 and looks_like_heading(line)
        if underlined or strong_opening or sole_line:
            flush_body()
            blocks.append(Block(line.strip(), HEADING))
        else:
            body.append(line)
    flush_body()
    return blocks
