"""Reference summaries kept next to a document: for ``NAME.ext`` the file
``NAME.summary.txt`` or ``NAME.summary.md`` in the same folder. Sidecars are
never documents themselves."""

from __future__ import annotations

from pathlib import Path

from summarize.reading.readers.blocks import assemble
from summarize.reading.readers.decoding import decode_text
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.markdown import markdown_blocks
from summarize.reading.readers.text import normalise_lines

SIDECAR_SUFFIXES = (".summary.txt", ".summary.md")


def is_sidecar_name(path: Path) -> bool:
    return path.name.lower().endswith(SIDECAR_SUFFIXES)


def sidecar_stem(path: Path) -> str:
    """'report' for 'report.summary.txt'."""
    name = path.name
    for suffix in SIDECAR_SUFFIXES:
        if name.lower().endswith(suffix):
            return name[: -len(suffix)]
    return name


def find_sidecar(document: Path) -> Path | None:
    """The sidecar of a document, if one exists (.txt preferred over .md)."""
    stem = document.name[: -len(document.suffix)] if document.suffix else document.name
    for suffix in SIDECAR_SUFFIXES:
        candidate = document.with_name(stem + suffix)
        if candidate.is_file():
            return candidate
    return None


def read_sidecar(path: Path) -> str:
    """The summary a sidecar holds, as plain text. Raises ``ReadError``."""
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise ReadError(f"cannot read summary sidecar ({exc.strerror or exc})") from None
    text, _ = decode_text(raw)
    if path.name.lower().endswith(".md"):
        summary, _ = assemble(markdown_blocks(text))
    else:
        summary = "\n".join(normalise_lines(text)).strip()
    if not summary:
        raise ReadError("summary sidecar is empty")
    return summary
