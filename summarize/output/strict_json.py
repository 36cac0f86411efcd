"""JSON that every strict parser and every line-based reader accepts.

Python's ``json`` writes ``NaN`` and ``Infinity`` for non-finite floats, which the
JSON grammar (RFC 8259, section 6) does not allow; here they become ``null``. With
``ensure_ascii=False`` it also writes U+2028, U+2029 and U+0085 raw: valid JSON, but
tools that split lines on them (and JavaScript before ES2019) cut a record in two;
here they are written as ``\\uXXXX`` escapes.
"""

from __future__ import annotations

import json
import math

_LINE_BREAKING = {"\u2028": "\\u2028", "\u2029": "\\u2029", "\u0085": "\\u0085"}


def finite(value: object) -> object:
    """``value`` with every NaN and infinity replaced by None (recursively)."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {key: finite(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [finite(item) for item in value]
    return value


def dumps(value: object, **options) -> str:
    """``json.dumps`` of ``value`` made strict (see the module docstring)."""
    text = json.dumps(finite(value), allow_nan=False, **options)
    for character, escape in _LINE_BREAKING.items():
        text = text.replace(character, escape)
    return text
