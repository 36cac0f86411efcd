"""Reference summaries written inside a document: a leading section headed
'Executive Summary', 'Management Summary', 'Summary' or 'Abstract'.

Only a section at the start counts. Before its heading there may be title
headings (at most three, none numbered like a section) and after them a few
short blocks (author, date, reference lines: at most four blocks of at most ten
lines, 800 characters in all); a heading after such a block, a numbered section
heading, or anything longer means the document has started, and a later
'Summary' belongs to its body. Only the exact names qualify, so a 'Summary of
costs' is never taken.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from summarize.reading.readers.blocks import Block
from summarize.reading.readers.headings import is_numbered_section

SUMMARY_HEADING = re.compile(
    r"^\s*(?:#{1,6}\s*)?"
    r"(?:(?:\d+(?:\.\d+)*\.?|[IVX]+\.)\s*)?"
    r"(?:executive\s+summary|management\s+summary|summary|abstract)"
    r"\s*:?\s*$",
    re.IGNORECASE,
)
_MAX_TITLE_HEADINGS = 3
_MAX_PREAMBLE_BLOCKS = 4
_MAX_PREAMBLE_LINES = 10
_MAX_PREAMBLE_CHARS = 800


@dataclass(frozen=True)
class LeadingSection:
    heading: str
    body: str
    remaining: list[Block]


def is_summary_heading(line: str) -> bool:
    return bool(SUMMARY_HEADING.match(line))


def find_leading_section(blocks: list[Block]) -> LeadingSection | None:
    """The leading summary section of ``blocks`` and the blocks without it.

    The section's body runs to the next heading of the same or a higher level
    (any heading when levels are unknown). When no heading follows, only the
    first block is taken: formats without heading markup (PDF, plain text) may
    have missed the next heading, and taking the whole document would be worse.
    Nothing is found when removing the section would leave no text."""
    titles_seen = 0
    preamble_blocks = 0
    preamble_chars = 0
    for index, block in enumerate(blocks):
        if block.is_heading and is_summary_heading(block.text):
            return _cut_section(blocks, index)
        if block.is_heading:
            titles_seen += 1
            if preamble_blocks or titles_seen > _MAX_TITLE_HEADINGS or is_numbered_section(block.text):
                return None
            continue
        preamble_blocks += 1
        preamble_chars += len(block.text)
        if (
            preamble_blocks > _MAX_PREAMBLE_BLOCKS
            or preamble_chars > _MAX_PREAMBLE_CHARS
            or block.text.count("\n") >= _MAX_PREAMBLE_LINES
        ):
            return None
    return None


def _cut_section(blocks: list[Block], heading_index: int) -> LeadingSection | None:
    heading = blocks[heading_index]
    end = heading_index + 1
    while end < len(blocks) and not _ends_section(heading, blocks[end]):
        end += 1
    if end == len(blocks):
        end = min(heading_index + 2, len(blocks))
    body_blocks = blocks[heading_index + 1 : end]
    remaining = blocks[:heading_index] + blocks[end:]
    if not body_blocks or not any(not block.is_heading for block in remaining):
        return None
    body = "\n\n".join(block.text.strip() for block in body_blocks).strip()
    if not body:
        return None
    return LeadingSection(heading.text.strip(), body, remaining)


def _ends_section(section_heading: Block, block: Block) -> bool:
    if not block.is_heading:
        return False
    if section_heading.level and block.level:
        return block.level <= section_heading.level
    return True
