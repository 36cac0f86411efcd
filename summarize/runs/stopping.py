"""When a run must stop: a time budget, and SIGINT/SIGTERM handled between documents."""

from __future__ import annotations

import signal
import time
from collections.abc import Callable
from datetime import datetime, timedelta

from store.errors import UsageError


class BadClockTime(UsageError, ValueError):
    """An ``--until`` value that is not a time of day."""


def parse_until(value: str, now: datetime | None = None) -> datetime:
    """``HH:MM`` as the next such local time (tomorrow when already past today)."""
    now = now or datetime.now()
    try:
        clock = datetime.strptime(value.strip(), "%H:%M")
    except ValueError:
        raise BadClockTime(f"--until {value!r}: expected a time of day as HH:MM, e.g. 06:30") from None
    target = now.replace(hour=clock.hour, minute=clock.minute, second=0, microsecond=0)
    return target if target > now else target + timedelta(days=1)


class StopConditions:
    """Tells the runner, between documents, whether to stop and why.

    A deadline comes from ``until`` (local wall-clock time) and/or ``max_minutes``
    (from construction); the earlier wins. While installed (``with``), SIGINT and
    SIGTERM only set a flag, so the document in flight is finished and stored; a
    second SIGINT interrupts at once. ``clock`` gives the seconds the budget is
    measured in (``time.monotonic``; tests pass a clock of their own).
    """

    def __init__(
        self,
        until: datetime | None = None,
        max_minutes: float | None = None,
        clock: Callable[[], float] = time.monotonic,
    ):
        self.until = until
        self.max_minutes = max_minutes
        self.clock = clock
        self._started = clock()
        self._wall_started = datetime.now()
        self.signal_name: str | None = None
        self._previous: dict = {}

    def deadline(self) -> datetime | None:
        candidates = []
        if self.until is not None:
            candidates.append(self.until)
        if self.max_minutes is not None:
            candidates.append(self._wall_started + timedelta(minutes=self.max_minutes))
        return min(candidates) if candidates else None

    def reason(self) -> str | None:
        """Why to stop now, or None to go on."""
        if self.signal_name:
            return f"stopped by {self.signal_name}"
        if self.max_minutes is not None and self.clock() - self._started >= self.max_minutes * 60:
            return f"time budget of {self.max_minutes:g} minutes used"
        if self.until is not None and datetime.now() >= self.until:
            return f"reached --until {self.until:%H:%M}"
        return None

    def _handle(self, signum, _frame) -> None:
        if self.signal_name and signum == signal.SIGINT:
            raise KeyboardInterrupt
        self.signal_name = signal.Signals(signum).name

    def __enter__(self) -> StopConditions:
        for signum in (signal.SIGINT, signal.SIGTERM):
            try:
                self._previous[signum] = signal.signal(signum, self._handle)
            except ValueError:  # not the main thread (e.g. inside a test runner thread)
                pass
        return self

    def __exit__(self, *exc) -> None:
        for signum, handler in self._previous.items():
            signal.signal(signum, handler)
        self._previous.clear()
