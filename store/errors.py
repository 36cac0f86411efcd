"""The one base class of every error the tool reports to a person as one line.

The command line catches only these (anything else is a bug and shows as one); each
subclass says what went wrong and with which file in its message, and carries the
exit status the command ends with.
"""

from __future__ import annotations


class SummarizerError(Exception):
    """A problem the user can act on: bad input, a bad option, an unusable store or model."""

    exit_status = 1


class UsageError(SummarizerError):
    """A bad command line, option value or job file."""

    exit_status = 2


class StoreUnusable(SummarizerError, RuntimeError):
    """The store file cannot be used as it is: missing, damaged, foreign, too new,
    read-only or full. The message names the file and the problem on one line. (Also a
    RuntimeError, which the writing commands catch for an unusable store.)"""


class StoreNotReadable(StoreUnusable):
    """A store opened for reading is missing, not a store, damaged or of another schema version."""


class StoreDamaged(StoreNotReadable):
    """The file is an SQLite store that SQLite reports as damaged (truncated, corrupt)."""


class NotAStore(StoreNotReadable):
    """The file is not a summary store (random bytes, another program's database)."""


class StoreTooNew(StoreNotReadable):
    """The store was written by a newer version of this program."""


class StoreReadOnly(StoreUnusable):
    """A command that writes was given a store (or folder) it may not write."""


class StoreFull(StoreUnusable):
    """The disk holding the store is full; what was committed before stays consistent."""


class OutputRefused(SummarizerError):
    """An output file cannot be written where it was asked for (it would replace the
    store, its folder is missing, the disk is full)."""
