"""Progress as events: the library reports, a front end shows.

Library code never prints: it sends :class:`ProgressEvent` values to one callback
(:data:`ProgressCallback`), through a :class:`ProgressTracker`. The command line passes
a :class:`TerminalProgress`, which draws them on stderr (a tqdm bar on a terminal,
periodic plain lines otherwise) and copies every line to an optional log file; a
notebook passes its own callback, or none.
"""

from __future__ import annotations

import logging
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass

from tqdm import tqdm

log = logging.getLogger("summarize")
# Messages reach the screen through TerminalProgress itself; without a handler of its own the
# logger would echo warnings to stderr a second time.
log.addHandler(logging.NullHandler())


def configure_log_file(path: str | None) -> None:
    """Send every progress message and error to ``path`` as well (appending), instead
    of any log file set before in this process."""
    for handler in [h for h in log.handlers if isinstance(h, logging.FileHandler)]:
        log.removeHandler(handler)
        handler.close()
    if not path:
        return
    handler = logging.FileHandler(path, encoding="utf-8")
    handler.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(message)s"))
    log.addHandler(handler)
    log.setLevel(logging.INFO)


@dataclass(frozen=True)
class ProgressEvent:
    """One thing worth telling a person while work goes on.

    ``kind``: ``"start"`` (counting ``total`` items called ``label``; ``total`` None
    when not known in advance), ``"advance"`` (``count`` more done, ``done`` so far),
    ``"message"`` (a line of ``text``), ``"warning"`` (a line shown even when quiet),
    ``"error"`` (a one-line problem with a file; the work goes on) or ``"close"``.
    """

    kind: str
    text: str = ""
    total: int | None = None
    label: str = ""
    count: int = 0
    done: int = 0


ProgressCallback = Callable[[ProgressEvent], None]


class ProgressTracker:
    """What library code holds: counts, and turns each step into an event for the
    callback (none: the work is silent)."""

    def __init__(self, callback: ProgressCallback | None = None):
        self.callback = callback
        self.done = 0

    def _emit(self, event: ProgressEvent) -> None:
        if self.callback is not None:
            self.callback(event)

    def start(self, total: int | None, label: str = "documents") -> None:
        self.done = 0
        self._emit(ProgressEvent("start", total=total, label=label))

    def advance(self, count: int = 1) -> None:
        self.done += count
        self._emit(ProgressEvent("advance", count=count, done=self.done))

    def message(self, text: str) -> None:
        self._emit(ProgressEvent("message", text=text))

    def warning(self, text: str) -> None:
        self._emit(ProgressEvent("warning", text=text))

    def error(self, text: str) -> None:
        self._emit(ProgressEvent("error", text=text))

    def close(self) -> None:
        self._emit(ProgressEvent("close"))


def messages_to(callback: ProgressCallback | None) -> Callable[[str], None] | None:
    """A ``say(text)`` function for code that reports in lines, sending each as a
    message event to ``callback``."""
    if callback is None:
        return None
    return ProgressTracker(callback).message


class TerminalProgress:
    """Shows progress events on a stream (stderr by default).

    On a terminal a tqdm bar shows rate and ETA; otherwise (cron, nohup, CI) a plain
    line is printed every ``every_seconds``. ``message`` prints a line either way
    (above the bar on a terminal).
    """

    def __init__(self, stream=None, every_seconds: float = 30.0, quiet: bool = False):
        self.stream = stream or sys.stderr
        self.every_seconds = every_seconds
        self.quiet = quiet
        self._bar = None
        self._total = 0
        self._done = 0
        self._started = time.monotonic()
        self._last_line = self._started

    @property
    def interactive(self) -> bool:
        return hasattr(self.stream, "isatty") and self.stream.isatty()

    def start(self, total: int | None, label: str = "documents") -> None:
        """Count toward ``total`` (None when not known in advance: no ETA then)."""
        self.close()
        self._total, self._done = total, 0
        self._started = self._last_line = time.monotonic()
        self.label = label
        if self.interactive and not self.quiet:
            self._bar = tqdm(total=total, unit="doc", file=self.stream, dynamic_ncols=True, desc=label)

    def advance(self, count: int = 1) -> None:
        self._done += count
        if self._bar is not None:
            self._bar.update(count)
        now = time.monotonic()
        if now - self._last_line >= self.every_seconds or self._done == self._total:
            self._last_line = now
            if self._bar is None:
                self.message(self.status_line())
            else:  # the bar shows it on screen; the log file still gets the line
                log.info(self.status_line())

    def status_line(self) -> str:
        elapsed = max(time.monotonic() - self._started, 1e-9)
        rate = self._done / elapsed
        if self._total is None:
            return f"{self._done} {self.label}, {rate:.2f}/s"
        remaining = self._total - self._done
        eta = f", about {remaining / rate / 60:.1f} min left" if rate > 0 and remaining > 0 else ""
        return f"{self._done}/{self._total} {self.label}, {rate:.2f}/s{eta}"

    def message(self, text: str, level: int = logging.INFO) -> None:
        log.log(level, text)
        if self.quiet and level < logging.WARNING:
            return
        if self._bar is not None:
            self._bar.write(text, file=self.stream)
        else:
            print(text, file=self.stream, flush=True)

    def error(self, text: str) -> None:
        """A one-line problem report, shown even with ``quiet``."""
        self.message(f"error: {text}", logging.WARNING)

    def close(self) -> None:
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __call__(self, event: ProgressEvent) -> None:
        if event.kind == "start":
            self.start(event.total, event.label)
        elif event.kind == "advance":
            self.advance(event.count)
        elif event.kind == "message":
            self.message(event.text)
        elif event.kind == "warning":
            self.message(event.text, logging.WARNING)
        elif event.kind == "error":
            self.error(event.text)
        elif event.kind == "close":
            self.close()
