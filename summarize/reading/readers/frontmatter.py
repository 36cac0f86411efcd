"""YAML front matter: a block between '---' lines at the very top of a text file."""

from __future__ import annotations

import datetime as dt
import re

import yaml

from summarize.reading.limits import LimitExceeded
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.safe_yaml import load_bounded_yaml

_OPENING = re.compile(r"\A\ufeff?---[ \t]*\r?\n")
_CLOSING = re.compile(r"^(?:---|\.\.\.)[ \t]*$", re.MULTILINE)
# The first line of the block must look like a mapping key; otherwise a leading
# '---' is a horizontal rule, not front matter.
_KEY_LINE = re.compile(r"\A\s*[A-Za-z_][\w\- ]*:")


def split_front_matter(text: str) -> tuple[dict, str]:
    """``(fields, rest_of_text)``; fields is empty when there is no front matter.
    Raises ``ReadError`` when a block that is clearly front matter is not valid
    YAML or not a mapping."""
    opening = _OPENING.match(text)
    if not opening:
        return {}, text
    closing = _CLOSING.search(text, opening.end())
    if not closing:
        return {}, text
    block = text[opening.end() : closing.start()]
    if not _KEY_LINE.match(block):
        return {}, text
    try:
        fields = load_bounded_yaml(block)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" (line {mark.line + 2})" if mark is not None else ""
        raise ReadError(f"front matter is not valid YAML{where}") from None
    if not isinstance(fields, dict):
        raise ReadError("front matter is not a mapping of keys to values")
    return {str(key).lower(): _plain(value) for key, value in fields.items()}, text[closing.end() :]


def read_front_matter(text: str) -> tuple[dict, str, str | None]:
    """``(fields, rest_of_text, warning)``. Front matter that is not valid YAML (or not
    a mapping) is left out of the text and gives a warning instead of fields, so the
    document is still read: ``title: Inspection INS-2025-114: Lift`` (a second colon
    without quotes) should not cost the report."""
    try:
        fields, rest = split_front_matter(text)
    except LimitExceeded:
        # Front matter built to cost too much (an alias bomb) is hostile, not a slip: the file fails.
        raise
    except ReadError as exc:
        opening = _OPENING.match(text)
        closing = _CLOSING.search(text, opening.end()) if opening else None
        rest = text[closing.end() :] if closing else text
        return {}, rest, f"{exc}; read without it"
    return fields, rest, None


def summary_text(value: object) -> str | None:
    """A summary given as a string or as a list of strings (one per paragraph)."""
    if isinstance(value, str):
        return value.strip() or None
    if isinstance(value, list) and all(isinstance(item, str) for item in value):
        return "\n\n".join(item.strip() for item in value if item.strip()) or None
    return None


def _plain(value: object) -> object:
    """YAML dates become ISO strings so the fields stay JSON-serialisable."""
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    if isinstance(value, list):
        return [_plain(item) for item in value]
    if isinstance(value, dict):
        return {str(key): _plain(item) for key, item in value.items()}
    return value
