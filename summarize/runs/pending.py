"""Which methods each document still lacks during a run, in a few bytes a document."""

from __future__ import annotations

from array import array
from collections.abc import Iterable, Iterator

import numpy as np

NOTHING: frozenset[str] = frozenset()


class PendingSummaries:
    """Method names still to run, per document.

    A run over 100,000 documents holds this from the start of its summarizing pass to
    its end. A dict of document id to set of names costs about 100 bytes a document
    (and scatters that many small objects over the heap); here documents that lack the
    same methods share one set of names, and each document holds its id (8 bytes, ids
    sorted for bisection) and the code of its set (4 bytes; 0 is "nothing left").
    Iteration is in id order.
    """

    def __init__(self, pending: Iterable[tuple[int, frozenset[str]]]):
        self._sets: list[frozenset[str]] = [NOTHING]
        self._codes_of: dict[frozenset[str], int] = {NOTHING: 0}
        ids, codes = array("q"), array("I")
        for document_id, names in pending:
            if names:
                ids.append(document_id)
                codes.append(self._code(frozenset(names)))
        all_ids = np.array(ids, dtype=np.int64)
        order = np.argsort(all_ids, kind="stable")
        self._ids = all_ids[order]
        self._codes = np.array(codes, dtype=np.uint32)[order]
        self._left = len(self._ids)

    def _code(self, names: frozenset[str]) -> int:
        code = self._codes_of.get(names)
        if code is None:
            code = self._codes_of[names] = len(self._sets)
            self._sets.append(names)
        return code

    def _position(self, document_id: int) -> int | None:
        at = int(np.searchsorted(self._ids, document_id))
        return at if at < len(self._ids) and int(self._ids[at]) == document_id else None

    def names(self, document_id: int) -> frozenset[str]:
        """The methods ``document_id`` still lacks (empty when none or unknown)."""
        at = self._position(document_id)
        return NOTHING if at is None else self._sets[int(self._codes[at])]

    def finish(self, document_id: int, names: Iterable[str]) -> bool:
        """``names`` are done for ``document_id``; true when that leaves it nothing."""
        at = self._position(document_id)
        if at is None or not self._codes[at]:
            return False
        left = self._sets[int(self._codes[at])] - frozenset(names)
        self._codes[at] = self._code(left)
        if left:
            return False
        self._left -= 1
        return True

    def wanting(self, name: str) -> list[int]:
        """The documents that still lack method ``name``, in id order."""
        wanted = np.array([name in names for names in self._sets], dtype=bool)
        return [int(document_id) for document_id in self._ids[wanted[self._codes]]]

    def __len__(self) -> int:
        """Documents that still lack any method."""
        return self._left

    def __iter__(self) -> Iterator[int]:
        return (int(document_id) for document_id in self._ids[self._codes != 0])
