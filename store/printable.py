"""Text from documents and file names made safe to show on a terminal or in a log line.

Documents and file names may hold control characters: an escape sequence can
rewrite the terminal (colours, cursor moves, window titles), a newline or a line
separator in a file name splits a one-line error message in two, and bidirectional
overrides make text read differently from what it is. Such characters are shown as
visible escapes (``\\x1b``, ``\\n``, ``\\u202e``) instead of being passed through.
"""

from __future__ import annotations

import re

# C0 and C1 controls and DEL, Unicode line and paragraph separators, and the
# bidirectional embedding, override and isolate controls.
_BEYOND_C0 = "\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069"
_UNSAFE_IN_LINE = re.compile(f"[\x00-\x1f{_BEYOND_C0}]")
# Tab (\x09) and newline (\x0a) kept.
_UNSAFE_IN_TEXT = re.compile(f"[\x00-\x08\x0b-\x1f{_BEYOND_C0}]")


def _escape(match: re.Match) -> str:
    character = match.group()
    if character == "\n":
        return "\\n"
    if character == "\t":
        return "\\t"
    if character == "\r":
        return "\\r"
    code = ord(character)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def printable(text: str) -> str:
    """``text`` on one line with every control character shown as an escape."""
    return _UNSAFE_IN_LINE.sub(_escape, text)


def terminal_text(text: str) -> str:
    """``text`` with its line breaks and tabs kept and every other control
    character shown as an escape."""
    return _UNSAFE_IN_TEXT.sub(_escape, text)
