"""How much of the archive a stopped run leaves: files not read yet, documents still
to summarize.

A run reads files in walk order, several documents may be in flight (being split
elsewhere) when a stop comes, and those that never come back are not stored. So a file
counts as read only once every one of its documents (and problems) is stored (or
recorded); a file read only in part is not read yet.

Documents remaining are those read in this run that still lack a summary, plus, for
each file not read yet, what the store last knew of it: its current documents that
still lack a summary (nothing, when it was read and summarized in full before);
nothing for a file that failed to be read before and was never stored; one document
for a file the store has never seen (how many records a new JSON file holds is known
only once it is read, so the count is then a lower bound).
"""

from __future__ import annotations

from collections.abc import Iterable

from summarize.reading.path_hashes import PathHashes


def file_of(key: str) -> str:
    """The file behind a record key or problem path ('a.jsonl#3' -> 'a.jsonl')."""
    return key.split("#", 1)[0]


class ReadingTracker:
    """Which files a run has read to the end so far. The walk gives a file's items
    (documents and problems) together: ``starting`` is told how many there are, and
    ``done`` is told of each once it is stored or recorded. A file is read when all
    of its items are done.

    Only the few files in flight are held by name; finished files are kept as
    :class:`~summarize.reading.path_hashes.PathHashes` (about 8 bytes a file). Two
    paths with the same hash would count as both read: a chance of about one in 10^9
    at 100,000 files."""

    def __init__(self):
        self._walk_ended = False
        self._out = 0
        self._items_left: dict[str, int] = {}
        self._finished = PathHashes()

    def starting(self, file: str, items: int) -> None:
        if items:
            self._items_left[file] = items
        else:
            self._finish(file)

    def done(self, path: str) -> None:
        file = file_of(path)
        self._items_left[file] -= 1
        if not self._items_left[file]:
            del self._items_left[file]
            self._finish(file)

    def _finish(self, file: str) -> None:
        self._finished.add(file)

    def handed_out(self) -> None:
        """A file of the walk went out to be read; until it is ``returned``, nothing
        is known of its items."""
        self._out += 1

    def returned(self) -> None:
        self._out -= 1

    def walk_ended(self) -> None:
        self._walk_ended = True

    @property
    def everything_read(self) -> bool:
        """The walk reached its end, every file sent out came back, and every item of
        every file is done."""
        return self._walk_ended and not self._out and not self._items_left

    def read(self, file: str) -> bool:
        return file not in self._items_left and file in self._finished

    def unread(self, archive_files: Iterable[str]) -> list[str]:
        """The files of the archive not read to the end, in walk order."""
        return [file for file in archive_files if not self.read(file)]


def documents_remaining(
    read_still_to_do: Iterable[int], unread_files: list[str], current_documents, failed_files: set[str], still_to_do
) -> int:
    """Documents still to summarize: those read in this run that lack a summary
    (``read_still_to_do``), and those of the ``unread_files`` as the store last knew
    them. ``current_documents`` are the store's active and duplicate documents (id,
    record key, status); ``failed_files`` the files earlier runs failed to read;
    ``still_to_do(ids)`` gives those of ``ids`` that lack a summary."""
    remaining = set(read_still_to_do)
    if not unread_files:
        return len(remaining)
    unread = set(unread_files)
    held: dict[str, list] = {}
    for stored in current_documents:
        file = file_of(stored.record_key)
        if file in unread:
            held.setdefault(file, []).append(stored)
    never_held = sum(1 for file in unread if file not in held and file not in failed_files)
    active = [stored.id for versions in held.values() for stored in versions if stored.status == "active"]
    remaining.update(still_to_do([document_id for document_id in active if document_id not in remaining]))
    return len(remaining) + never_held
