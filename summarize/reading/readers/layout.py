"""The last step every reader's blocks go through before they become the stored text:
hard-wrapped lines joined, table rows labelled by their column headers.

Reflow happens here, before the text is stored and before any span is taken, so the
stored text is the reflowed one and every span slices it exactly; the file's own
line breaks are not kept. Inside a paragraph or list block a line continues the line
above (joined with one space) unless

* it opens a list item ('1.', 'a)', '- ', '•'), so every item is one line however
  it wrapped;
* it is a 'Label: value' field line, or the line above is one (a report's header
  block keeps one field per line);
* the line above is the block's first line and reads as a heading (capitals, or
  short Title Case without final punctuation, numbered or not).

A line ending in a hyphen after a letter or digit is joined without a space, the
hyphen kept ('non-' + 'European'): typed text seldom hyphenates at a wrap, and
a dropped hyphen would change a word.

A table becomes one line per row, each cell labelled by its column's header
("Asset: Berth 5 fender; Condition: poor"); the header row itself is not kept as a
line, since every row now carries it. In a table of one row, or whose header row
has an empty cell, a two-cell row becomes a field ('Location: Quillham Bank') and a
longer row keeps its cells apart with '; '.
"""

from __future__ import annotations

import re

from summarize.reading.readers.headings import is_capitals_heading, is_list_item

CELL_SEPARATOR = " | "
_FIELD_LINE = re.compile(r"^\s*[A-Z][\w/&()' .-]{0,40}:\s+\S")
_TERMINAL = tuple(".!?;:,")
_MAX_HEADING_WORDS = 12


def reflow_lines(text: str) -> str:
    """The lines of one paragraph or list block with hard wraps joined."""
    lines = [line.strip() for line in text.split("\n") if line.strip()]
    joined: list[str] = []
    for index, line in enumerate(lines):
        if joined and _continues(joined[-1], line, previous_is_first=index == 1):
            joined[-1] = _join(joined[-1], line)
        else:
            joined.append(line)
    return "\n".join(joined)


def labelled_rows(text: str) -> str:
    """A table block (one row per line, cells joined by ' | ') as labelled rows."""
    rows = [line.split(CELL_SEPARATOR) for line in text.split("\n") if line.strip()]
    header = [cell.strip() for cell in rows[0]] if rows else []
    if len(rows) < 2 or len(header) < 2 or not all(header):
        return "\n".join(_unlabelled(row) for row in rows if any(cell.strip() for cell in row))
    labelled = []
    for row in rows[1:]:
        cells = [
            f"{label}: {cell.strip()}" if index < len(header) else cell.strip()
            for index, (label, cell) in enumerate(zip(header + [""] * len(row), row))
            if cell.strip()
        ]
        if cells:
            labelled.append("; ".join(cells))
    return "\n".join(labelled)


def _unlabelled(row: list[str]) -> str:
    """A row of a table without a full header row: a pair is a field ('Location:
    Quillham Bank'), longer rows keep their cells apart with '; '."""
    cells = [cell.strip() for cell in row if cell.strip()]
    if len(cells) == 2:
        return f"{cells[0]}: {cells[1]}"
    return "; ".join(cells)


def is_field_line(line: str) -> bool:
    return bool(_FIELD_LINE.match(line))


def _continues(previous: str, line: str, previous_is_first: bool) -> bool:
    if is_list_item(line) or is_field_line(line) or is_field_line(previous):
        return False
    return not (previous_is_first and _reads_as_heading(previous))


def _reads_as_heading(line: str) -> bool:
    if line.endswith(_TERMINAL) or len(line.split()) > _MAX_HEADING_WORDS:
        return False
    if is_capitals_heading(line):
        return True
    # A numbered first line is a section heading only in Title Case ("3. Findings");
    # "1. Restrict crane" is a list item wrapped after its second word.
    words = [word for word in re.findall(r"[A-Za-z][A-Za-z'-]*", line) if len(word) > 3]
    return bool(words) and all(word[0].isupper() for word in words)


def _join(first: str, second: str) -> str:
    if first.endswith("-") and len(first) >= 2 and first[-2].isalnum():
        return first + second
    return first + " " + second
