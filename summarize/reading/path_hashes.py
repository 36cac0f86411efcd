"""A set of paths that costs about 8 bytes a path, for walks of very large archives."""

from __future__ import annotations

import numpy as np


class PathHashes:
    """Paths kept as their 64-bit string hashes (Python's ``hash``: stable within the
    process, never stored), so a set of 100,000 paths takes under a megabyte where a
    Python set of the paths takes about 20 and one of their hashes about 7.

    New hashes go to a small Python set; every ``merge_every`` additions they are
    merged into one sorted NumPy array, which ``in`` searches by bisection. Besides the
    size, this keeps long-lived small objects from being scattered over the heap
    while a run allocates and frees a great deal around them.

    Two different paths with the same hash count as one: a chance of about one in
    10^9 among 100,000 paths (birthday bound, n² / 2⁶⁵).
    """

    def __init__(self, merge_every: int = 4096):
        self.merge_every = merge_every
        self._sorted = np.empty(0, dtype=np.int64)
        self._recent: set[int] = set()

    def add(self, path: str) -> None:
        self._recent.add(hash(path))
        if len(self._recent) >= self.merge_every:
            self._merge()

    def __contains__(self, path: str) -> bool:
        value = hash(path)
        if value in self._recent:
            return True
        at = int(np.searchsorted(self._sorted, value))
        return at < len(self._sorted) and int(self._sorted[at]) == value

    def _merge(self) -> None:
        recent = np.fromiter(self._recent, dtype=np.int64, count=len(self._recent))
        self._sorted = np.union1d(self._sorted, recent)
        self._recent = set()
