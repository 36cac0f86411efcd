"""Checking that a store exists before a command that only reads or scores it."""

from __future__ import annotations

from pathlib import Path

from store.errors import SummarizerError
from store.store import Store


class StoreMissing(SummarizerError):
    """A ``--db`` that names no file."""


def check_existing(path: str | Path) -> None:
    """:class:`StoreMissing` when there is no store at ``path`` (what the file holds is
    checked where it is opened, ``store.schema``)."""
    if not Path(path).exists():
        raise StoreMissing(f"{path}: no such store (create one with `summarize run PATH --db {path}`)")


def open_existing(path: str | Path) -> Store:
    """The store at ``path``, read-only, after :func:`check_existing`."""
    check_existing(path)
    return Store(str(path), read_only=True)
