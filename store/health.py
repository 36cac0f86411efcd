"""Telling a usable store from a damaged, foreign, too new, read-only or full one.

SQLite reports such problems as exceptions whose text names neither the file nor
what to do; :func:`store_error` turns them into one-line
:class:`~store.errors.StoreUnusable` errors, and :func:`check_store_file` refuses a
file that is not an SQLite database before SQLite is asked to open it.
"""

from __future__ import annotations

import errno
import sqlite3

from store.errors import NotAStore, StoreDamaged, StoreFull, StoreReadOnly, StoreUnusable

# The first 16 bytes of every SQLite 3 database file (sqlite.org/fileformat.html, 1.3).
SQLITE_HEADER = b"SQLite format 3\x00"
# The tables every version of the schema has: a database without them is another program's.
CORE_TABLES = frozenset({"runs", "documents", "summaries"})


def check_store_file(path: str) -> None:
    """Refuse a file that is not empty and does not start with the SQLite header."""
    try:
        with open(path, "rb") as handle:
            header = handle.read(len(SQLITE_HEADER))
    except FileNotFoundError:
        return
    except IsADirectoryError:
        raise NotAStore(f"{path}: is a folder, not a summary store") from None
    except OSError as error:
        raise StoreUnusable(f"{path}: cannot open the store ({error.strerror or error})") from None
    if header and header != SQLITE_HEADER:
        raise NotAStore(f"{path}: not a summary store (not an SQLite database file)")


def check_tables(path: str, tables: set[str], version: int) -> None:
    """A database holding tables but not this program's is someone else's: never add ours to it."""
    if tables and not CORE_TABLES <= tables:
        raise NotAStore(f"{path}: not a summary store (an SQLite database of another program, schema version {version})")


def sqlite_failure(error: BaseException, path: str) -> StoreUnusable | None:
    """:func:`store_error` when ``error`` is SQLite's, else None (for callers that keep
    SQLite out of their imports)."""
    return store_error(error, path) if isinstance(error, sqlite3.Error) else None


def store_error(error: sqlite3.Error | OSError, path: str) -> StoreUnusable:
    """The one-line error for what SQLite (or the file system) said about the store at ``path``."""
    return known_store_error(error, path) or StoreDamaged(f"{path}: the store cannot be used ({error})")


def known_store_error(error: sqlite3.Error | OSError, path: str) -> StoreUnusable | None:
    """:func:`store_error` for the conditions of the store itself (full, read-only,
    damaged, foreign, unopenable, locked, I/O); None for anything else, such as a
    constraint the program violated, which is a bug to show as one."""
    if isinstance(error, OSError):
        if error.errno == errno.ENOSPC:
            return StoreFull(f"no space left for the store at {path}")
        if error.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
            return StoreReadOnly(f"{path}: cannot write the store or its folder ({error.strerror}); "
                                 "read-only commands (find, show, export, compare, report) still work")
        return StoreUnusable(f"{path}: {error.strerror or error}")
    code = getattr(error, "sqlite_errorcode", None)
    primary = code & 0xFF if isinstance(code, int) else None
    message = str(error)
    if primary == sqlite3.SQLITE_FULL or "disk is full" in message:
        return StoreFull(f"no space left for the store at {path}")
    if primary == sqlite3.SQLITE_READONLY or "readonly database" in message:
        return StoreReadOnly(f"{path}: the store is read-only here; read-only commands (find, show, export, "
                             "compare, report) still work")
    if primary == sqlite3.SQLITE_NOTADB or "not a database" in message:
        return NotAStore(f"{path}: not a summary store (not an SQLite database file)")
    if primary == sqlite3.SQLITE_CORRUPT or "malformed" in message:
        return StoreDamaged(f"{path}: the store is damaged ({message}); restore it from a backup, "
                            "or start a new store and rerun")
    if primary == sqlite3.SQLITE_CANTOPEN or "unable to open" in message:
        return StoreUnusable(f"{path}: cannot open the store ({message})")
    if primary == sqlite3.SQLITE_BUSY or "locked" in message:
        return StoreUnusable(f"{path}: the store stayed locked by another process ({message}); try again")
    if primary == sqlite3.SQLITE_IOERR:
        return StoreUnusable(f"{path}: input/output error on the store ({message})")
    return None
