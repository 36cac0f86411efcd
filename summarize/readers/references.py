"""Reference summaries written inside a document: a leading section headed
'Executive Summary', 'Management Summary', 'Summary' or 'Abstract'.

Only a section near the start counts. Before it there may be at most one other
heading (the document's title) and a few short blocks (author, date, reference
lines); anything longer means the document has started and a later 'Summary'
belongs to its body (a 'Summary of costs' in section 7 is never taken anyway,
since only the exact names qualify).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from summarize.readers.blocks import Block

SUMMARY_HEADING = re.compile(
    r"^\s*(?:#{1,6}\s*)?"
    r"(?:(?:\d+(?:\.\d+)*\.?|[IVX]+\.)\s*)?"
    r"(?:executive\s+summary|management\s+summary|summary|abstract)"
    r"\s*:?\s*$",
    re.IGNORECASE,
)
_MAX_PREAMBLE_BLOCKS = 4
_MAX_PREAMBLE_LINES = 4
_MAX_PREAMBLE_LINE_CHARS = 100


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
    for index, block in enumerate(blocks):
        if block.is_heading and is_summary_heading(block.text):
            return _cut_section(blocks, index)
        if block.is_heading:
            titles_seen += 1
            if titles_seen > 1:
                return None
        else:
            preamble_blocks += 1
            if preamble_blocks > _MAX_PREAMBLE_BLOCKS or not _is_short(block):
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


def _is_short(block: Block) -> bool:
    lines = block.text.strip().split("\n")
    return len(lines) <= _MAX_PREAMBLE_LINES and all(
        len(line) <= _MAX_PREAMBLE_LINE_CHARS for line in lines
    )
