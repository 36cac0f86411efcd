"""Limits on what one input may cost, so that no file can hang a batch or exhaust memory.

Every limit has a default that an ordinary archive never reaches and a flag of
``summarize run`` (and a job-file key of the same name) to change it; a file that
reaches one is reported as a named problem naming the flag, never cut silently.

The limits in force are set for the reading of one file with :func:`using_limits`
and read by the format readers with :func:`current_limits`, so that a reader's
signature stays ``reader(raw) -> Extract``.

The per-document time limit is enforced with a real-time interval timer
(``setitimer``): when it fires, :class:`DocumentTookTooLong` is raised in the code
that is running. It works in the main thread of a process (the run, and each local
worker); elsewhere (threads of a Dask worker) the limit is not enforced.
"""

from __future__ import annotations

import signal
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass

from summarize.reading.readers.errors import ReadError

MIB = 1024 * 1024


@dataclass(frozen=True)
class ReadLimits:
    """What one file may cost. Sizes in bytes; ``max_parts`` counts DOCX paragraphs,
    PDF pages and e-mail MIME parts; ``yaml_nodes`` bounds the nodes of a front-matter
    block counted with every alias expanded; ``document_seconds`` bounds the reading
    and the sentence splitting of one document (0 turns it off)."""

    max_file_bytes: int = 64 * MIB
    max_unpacked_bytes: int = 256 * MIB
    max_parts: int = 50_000
    max_metadata_bytes: int = 64 * 1024
    yaml_nodes: int = 10_000
    document_seconds: float = 120.0


# The flag that changes each limit, for the messages.
LIMIT_FLAGS = {
    "max_file_bytes": "--max-file-mb",
    "max_unpacked_bytes": "--max-unpacked-mb",
    "max_parts": "--max-parts",
    "max_metadata_bytes": "--max-metadata-kb",
    "yaml_nodes": "--max-yaml-nodes",
    "document_seconds": "--document-seconds",
}

DEFAULT_LIMITS = ReadLimits()
_current: ContextVar[ReadLimits] = ContextVar("read_limits", default=DEFAULT_LIMITS)


class LimitExceeded(ReadError):
    """A file reached one of the read limits; the message names the limit and its flag."""

    def __init__(self, what: str, limit_name: str, value: object) -> None:
        super().__init__(f"{what} exceeds the limit of {_shown(limit_name, value)} (raise it with {LIMIT_FLAGS[limit_name]})")


class DocumentTookTooLong(ReadError):
    """Reading or splitting one document took longer than ``document_seconds``."""

    def __init__(self, seconds: float) -> None:
        super().__init__(
            f"took longer than the limit of {seconds:g} s per document (raise it with {LIMIT_FLAGS['document_seconds']})"
        )


def _shown(limit_name: str, value: object) -> str:
    if limit_name in ("max_file_bytes", "max_unpacked_bytes"):
        return f"{value / MIB:.3g} MB"
    if limit_name == "max_metadata_bytes":
        return f"{value / 1024:.3g} KB"
    return f"{value:,}"


def current_limits() -> ReadLimits:
    return _current.get()


@contextmanager
def using_limits(limits: ReadLimits) -> Iterator[ReadLimits]:
    token = _current.set(limits)
    try:
        yield limits
    finally:
        _current.reset(token)


@contextmanager
def time_limit(seconds: float) -> Iterator[None]:
    """Raise :class:`DocumentTookTooLong` in the running code after ``seconds``
    (wall clock). A no-op for 0, or outside a process's main thread."""
    if seconds <= 0 or threading.current_thread() is not threading.main_thread():
        yield
        return

    def expire(_signum, _frame):
        raise DocumentTookTooLong(seconds)

    previous = signal.signal(signal.SIGALRM, expire)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
