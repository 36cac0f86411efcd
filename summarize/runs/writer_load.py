"""How hard the single writer works: its busy share and the results waiting for it.

Every result, from local workers or a Dask cluster, is stored by one process. When
that process is busy writing nearly all the time and finished results pile up
behind it, more workers cannot make the run faster: the run is *writer-bound*.
"""

from __future__ import annotations

import time
from contextlib import contextmanager

# Writer-bound: busy this share of the pass or more, with results waiting on average
# (common practice for spotting a saturated single consumer; no outside source).
BOUND_BUSY_SHARE = 0.8
BOUND_MEAN_WAITING = 1.0


class WriterLoad:
    """Busy share = seconds spent writing / seconds of the pass; queue depth = results
    finished by workers but not yet handed to the writer, sampled at each hand-over
    (mean and largest). ``every_seconds`` spaces the progress lines."""

    def __init__(self, every_seconds: float = 30.0):
        self.every_seconds = every_seconds
        self.busy_seconds = 0.0
        self.samples = 0
        self.waiting_total = 0
        self.waiting_most = 0
        self._started: float | None = None
        self._ended: float | None = None
        self._last_line = 0.0

    def start(self) -> None:
        self._started = self._last_line = time.monotonic()
        self._ended = None

    def stop(self) -> None:
        self._ended = time.monotonic()

    @contextmanager
    def writing(self, results_waiting: int):
        """Time one hand-over to the writer; ``results_waiting`` others are already done."""
        self.samples += 1
        self.waiting_total += results_waiting
        self.waiting_most = max(self.waiting_most, results_waiting)
        began = time.monotonic()
        try:
            yield
        finally:
            self.busy_seconds += time.monotonic() - began

    @property
    def seconds(self) -> float:
        if self._started is None:
            return 0.0
        return (self._ended or time.monotonic()) - self._started

    @property
    def busy_share(self) -> float:
        return self.busy_seconds / self.seconds if self.seconds > 0 else 0.0

    @property
    def mean_waiting(self) -> float:
        return self.waiting_total / self.samples if self.samples else 0.0

    @property
    def bound(self) -> bool:
        return self.busy_share >= BOUND_BUSY_SHARE and self.mean_waiting >= BOUND_MEAN_WAITING

    def due(self) -> bool:
        """True once every ``every_seconds``: time for a progress line."""
        now = time.monotonic()
        if now - self._last_line < self.every_seconds:
            return False
        self._last_line = now
        return True

    def line(self, label: str) -> str:
        verdict = "; writer-bound: more workers will not help" if self.bound else ""
        return (
            f"writer ({label}): busy {self.busy_share:.0%} of {self.seconds:.1f} s, "
            f"results waiting {self.mean_waiting:.1f} on average, {self.waiting_most} at most{verdict}"
        )

    def counts(self) -> dict:
        return {
            "busy_share": round(self.busy_share, 3),
            "busy_seconds": round(self.busy_seconds, 3),
            "seconds": round(self.seconds, 3),
            "mean_waiting": round(self.mean_waiting, 2),
            "most_waiting": self.waiting_most,
            "writer_bound": self.bound,
        }
