"""Groups of documents written in one transaction.

Committing once per document makes the writer wait for the disk once per document;
committing once per group of many spreads that wait. The guarantee moves from the
document to the group: a kill -9 loses at most the group in flight (SQLite's
rollback journal undoes it on the next open), and since every write is idempotent
by natural keys a rerun redoes exactly that group.
"""

from __future__ import annotations

import time
from contextlib import ExitStack

DEFAULT_GROUP_DOCUMENTS = 200
DEFAULT_GROUP_SECONDS = 2.0


class WriteGroups:
    """Keeps one transaction open across documents and commits it when it holds
    ``max_documents`` documents or has been open ``max_seconds``, whichever comes first.

    Each document's own writes stay in their nested transaction (a savepoint), so a
    document that fails to write is undone alone and the group goes on. Use as a
    context manager around the loop, calling :meth:`document_written` after each
    document; leaving the block commits the last group (also on Ctrl-C), and any other
    exception rolls it back.
    """

    def __init__(self, store, max_documents: int = DEFAULT_GROUP_DOCUMENTS, max_seconds: float = DEFAULT_GROUP_SECONDS):
        self.store = store
        self.max_documents = max_documents
        self.max_seconds = max_seconds
        self._open: ExitStack | None = None
        self._documents = 0
        self._opened_at = 0.0
        self.groups_committed = 0

    def __enter__(self) -> WriteGroups:
        self._begin()
        return self

    def __exit__(self, kind, error, trace) -> bool:
        opened, self._open = self._open, None
        if opened is not None:
            # A Ctrl-C leaves every finished document whole (the one in flight has
            # already rolled back its own savepoint), so the group is kept; any other
            # exception is passed on, which rolls the group back.
            interrupted = isinstance(error, KeyboardInterrupt)
            if interrupted:
                opened.close()
            else:
                opened.__exit__(kind, error, trace)
            self.groups_committed += (error is None or interrupted) and self._documents > 0
        return False

    def _begin(self) -> None:
        self._open = ExitStack()
        self._open.enter_context(self.store.transaction())
        self._documents = 0
        self._opened_at = time.monotonic()

    def document_written(self) -> None:
        """One more document is in the group; commit the group when it is full or old."""
        self._documents += 1
        full = self._documents >= self.max_documents
        if full or time.monotonic() - self._opened_at >= self.max_seconds:
            self.commit()

    def commit(self) -> None:
        """Commit what the group holds now and open the next one."""
        if self._open is None:
            return
        self._open.close()
        self.groups_committed += self._documents > 0
        self._begin()
