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


class StoreNotReadable(SummarizerError, RuntimeError):
    """A store opened for reading is missing, not a store, or of another schema version.
    (Also a RuntimeError, which the writing commands catch for an unusable store.)"""
