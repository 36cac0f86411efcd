"""Text-format files (.txt, .md, .rst): decode, take off the YAML front matter,
then cut the rest into blocks with the format's own reader.

Front matter keys used: title, date, and summary (or abstract) as the reference
summary; other keys are kept in the metadata under 'front_matter'. Front matter that
is not valid YAML is left out and reported as a warning; the rest is read.
"""

from __future__ import annotations

from collections.abc import Callable

from summarize.reading.readers.blocks import DATE_IN_FRONT_MATTER, Block, Extract
from summarize.reading.readers.dates import date_problem, iso_date
from summarize.reading.readers.decoding import decode_text
from summarize.reading.readers.frontmatter import read_front_matter, summary_text
from summarize.reading.readers.markdown import markdown_blocks
from summarize.reading.readers.rst import rst_blocks
from summarize.reading.readers.text import plain_text_blocks

_SUMMARY_KEYS = ("summary", "abstract")
_USED_KEYS = frozenset({"title", "date", *_SUMMARY_KEYS})


def read_txt(raw: bytes) -> Extract:
    return _read(raw, plain_text_blocks)


def read_md(raw: bytes) -> Extract:
    return _read(raw, markdown_blocks)


def read_rst(raw: bytes) -> Extract:
    return _read(raw, rst_blocks)


def _read(raw: bytes, to_blocks: Callable[[str], list[Block]]) -> Extract:
    text, encoding = decode_text(raw)
    front, body, warning = read_front_matter(text)
    extract = Extract(blocks=to_blocks(body), encoding=encoding)
    if warning:
        extract.warnings.append(warning)
    if not front:
        return extract
    title = front.get("title")
    if isinstance(title, str) and title.strip():
        extract.title = " ".join(title.split())
    extract.date = iso_date(front.get("date"))
    extract.date_source = DATE_IN_FRONT_MATTER if extract.date else None
    problem = date_problem(front.get("date"))
    if problem:
        extract.warnings.append(f"front matter {problem}")
    for key in _SUMMARY_KEYS:
        summary = summary_text(front.get(key))
        if summary:
            extract.reference_summary, extract.reference_source = summary, "front-matter"
            break
    rest = {key: value for key, value in front.items() if key not in _USED_KEYS}
    if rest:
        extract.metadata["front_matter"] = rest
    return extract
