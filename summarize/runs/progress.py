"""Progress on stderr: a tqdm bar on a terminal, periodic plain lines otherwise, and
an optional log file with every message."""

from __future__ import annotations

import logging
import sys
import time

from tqdm import tqdm

log = logging.getLogger("summarize")
# Messages reach the screen through Progress itself; without a handler of its own the
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


class Progress:
    """Counts documents through a run.

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
