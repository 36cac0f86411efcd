"""Checking a store that must already exist, with a one-line error for anything else."""

from __future__ import annotations

import sqlite3
from pathlib import Path

from store.errors import SummarizerError
from store.store import Store

# Every SQLite database file starts with these 16 bytes (sqlite.org/fileformat.html, §1.3).
SQLITE_HEADER = b"SQLite format 3\x00"


class StoreUnusable(SummarizerError):
    """A ``--db`` that is missing, a folder, or not an SQLite store."""


def check_existing(path: str | Path) -> None:
    """:class:`StoreUnusable` when there is no store at ``path`` or the file is something
    else (checked before SQLite touches it, so a stray file is never altered)."""
    path = Path(path)
    if not path.exists():
        raise StoreUnusable(f"{path}: no such store (create one with `summarize run PATH --db {path}`)")
    _check_header(path)


def check_store_file(path: str | Path) -> None:
    """:class:`StoreUnusable` unless ``path`` is missing or empty (a store a run is about
    to create, or creating at this moment) or an SQLite file."""
    path = Path(path)
    if path.exists() and not (path.is_file() and path.stat().st_size == 0):
        _check_header(path)


def open_existing(path: str | Path) -> Store:
    """The store at ``path``, read-only, after :func:`check_existing`."""
    check_existing(path)
    try:
        return Store(str(path), read_only=True)
    except sqlite3.DatabaseError as error:
        raise StoreUnusable(f"{path}: unusable store ({error})") from None


def _check_header(path: Path) -> None:
    if path.is_dir():
        raise StoreUnusable(f"{path}: is a folder, not a store file")
    try:
        with open(path, "rb") as handle:
            header = handle.read(len(SQLITE_HEADER))
    except OSError as error:
        raise StoreUnusable(f"{path}: cannot read the store ({error.strerror or error})") from None
    if header != SQLITE_HEADER:
        raise StoreUnusable(f"{path}: not a store (not an SQLite database file)")
