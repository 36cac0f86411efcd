"""Rejoining hard-wrapped lines (PDF text layers) into paragraphs.

A ``Line`` carries its text and whether the layout marked it as a heading (a
larger or bolder font). Heuristics, in order:

* A paragraph ends at a blank line, before and after a heading line, before a
  list item, and after a line that ends with terminal punctuation (. ! ? : and
  closing quotes/brackets after them) while being clearly shorter than the
  document's usual line (under 80% of the 95th-percentile line length): a full-width
  line ending in a period is more likely wrapped mid-paragraph by chance.
* A line ending in two or more numbers is taken for the end of a table row
  and ends its paragraph too, so a table's rows do not run into each other or
  into the prose after the table.
* Lines of one paragraph are joined with a space, except that a hyphen at the
  end of a line between two lowercase letters is taken for a word broken by
  hyphenation and removed ('inspec-' + 'tion' -> 'inspection'). This is a
  heuristic: a real compound split at its hyphen ('follow-' + 'up') loses its
  hyphen too. Any other hyphen attached to a word is kept and the lines joined
  without a space ('non-' + 'European' -> 'non-European'). A soft hyphen
  (U+00AD) at a line end always joins.
* Each list item starts a new line of its list block; its wrapped continuation
  lines join it.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from summarize.reading.readers.blocks import HEADING, LIST, PARAGRAPH, Block
from summarize.reading.readers.headings import is_list_item

_PARAGRAPH_END = re.compile(r"[.!?:][\"'\u201d\u2019)\]]*$")
_BULLET = re.compile(r"^\s*[\u2022\u2023\u25aa\u25e6\u2043\u2013*]\s+")
_SHORT_LINE_SHARE = 0.8
# Two or more numbers closing a line: the end of a table row ('Valves 36 25 11').
_TABLE_ROW_END = re.compile(r"(?:\s[-+]?[£$€]?\d[\d,.]*%?){2,}$")


@dataclass(frozen=True)
class Line:
    """One line of a text layer; ``size`` is its font size (0 when unknown)."""

    text: str
    is_heading: bool = False
    size: float = 0.0


def reflow(lines: list[Line]) -> list[Block]:
    usual_length = _usual_line_length(lines)
    blocks: list[Block] = []
    current: list[str] = []
    current_is_list = False
    previous_ended = True
    previous_heading: Line | None = None

    def flush() -> None:
        nonlocal current_is_list
        if current:
            blocks.append(Block("\n".join(current), LIST if current_is_list else PARAGRAPH))
        current.clear()
        current_is_list = False

    for line in lines:
        text = line.text.strip()
        if not text:
            flush()
            previous_ended, previous_heading = True, None
            continue
        if line.is_heading:
            flush()
            if previous_heading is not None and previous_heading.size == line.size:
                # A heading wrapped over two lines is one heading.
                blocks[-1] = Block(blocks[-1].text + " " + text, HEADING)
            else:
                blocks.append(Block(text, HEADING))
            previous_ended, previous_heading = True, line
            continue
        if is_list_item(text):
            if not current_is_list:
                flush()
            current_is_list = True
            current.append(_BULLET.sub("- ", text))
        elif current and not previous_ended:
            current[-1] = join_wrapped(current[-1], text)
        else:
            flush()
            current.append(text)
        previous_ended, previous_heading = _ends_paragraph(text, usual_length), None
    flush()
    return blocks


def join_wrapped(first: str, second: str) -> str:
    """Join two lines of one paragraph, repairing line-break hyphenation."""
    if first.endswith("\u00ad"):
        return first[:-1] + second
    if len(first) >= 2 and first.endswith("-") and first[-2].isalnum():
        if first[-2].islower() and second[:1].islower():
            return first[:-1] + second
        return first + second
    return first + " " + second


def _ends_paragraph(text: str, usual_length: int) -> bool:
    short_sentence_end = bool(_PARAGRAPH_END.search(text)) and len(text) < _SHORT_LINE_SHARE * usual_length
    return short_sentence_end or bool(_TABLE_ROW_END.search(text))


def _usual_line_length(lines: list[Line]) -> int:
    lengths = sorted(len(line.text.strip()) for line in lines if line.text.strip() and not line.is_heading)
    if not lengths:
        return 0
    # Rounded up, so that on a short page the longest line sets the width.
    return lengths[math.ceil(0.95 * (len(lengths) - 1))]
