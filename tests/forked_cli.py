"""Run the `summarize` command in a forked child with a memory ceiling and a time limit.

Forking after the imports makes each call cost milliseconds instead of the seconds
a fresh interpreter takes, so that a suite of many hostile inputs stays fast; the
child's address space is capped with ``resource.setrlimit(RLIMIT_AS)`` at what the
parent already uses plus ``memory_mb``, so an input that makes the program allocate
without bound fails the test instead of the machine. A child still running after
``timeout`` seconds is killed and reported as hung.
"""

from __future__ import annotations

import os
import resource
import signal
import sys
import tempfile
import time
from dataclasses import dataclass

import summarize.cli

HUNG = -1


@dataclass
class CliResult:
    exit_status: int
    stdout: str
    stderr: str
    seconds: float

    @property
    def error_lines(self) -> list[str]:
        return [line for line in self.stderr.splitlines() if line.startswith("error: ")]


def _address_space_bytes() -> int:
    with open("/proc/self/status", encoding="ascii") as status:
        for line in status:
            if line.startswith("VmSize:"):
                return int(line.split()[1]) * 1024
    raise RuntimeError("no VmSize in /proc/self/status")


def run_cli(args: list[str], timeout: float = 20.0, memory_mb: int = 768, as_user: int | None = None) -> CliResult:
    """``summarize ARGS`` in a child process; ``as_user`` runs it under that uid (and its gid)."""
    ceiling = _address_space_bytes() + memory_mb * 1024 * 1024
    with tempfile.TemporaryFile() as out, tempfile.TemporaryFile() as err:
        started = time.monotonic()
        child = os.fork()
        if child == 0:  # pragma: no cover - runs in the child
            status = 1
            try:
                os.dup2(out.fileno(), 1)
                os.dup2(err.fileno(), 2)
                sys.stdout = os.fdopen(1, "w", closefd=False)
                sys.stderr = os.fdopen(2, "w", closefd=False)
                resource.setrlimit(resource.RLIMIT_AS, (ceiling, ceiling))
                if as_user is not None:
                    import importlib
                    import pwd

                    # Codecs load on first use, from an installation the unprivileged
                    # user may not be able to read (a Python under /root): load them first.
                    for codec in ("utf_8_sig", "utf_16", "utf_16_le", "utf_16_be", "cp1252", "latin_1", "ascii"):
                        importlib.import_module(f"encodings.{codec}")
                    os.setgid(pwd.getpwuid(as_user).pw_gid)
                    os.setgroups([])
                    os.setuid(as_user)
                summarize.cli.main.main(args=args, prog_name="summarize", standalone_mode=True)
                status = 0
            except SystemExit as exit_:
                status = exit_.code if isinstance(exit_.code, int) else 1
            except BaseException as error:  # noqa: BLE001 - reported to the parent as status 99
                import traceback

                traceback.print_exception(error)
                status = 99
            finally:
                sys.stdout.flush()
                sys.stderr.flush()
                os._exit(status)
        status = None
        while time.monotonic() - started < timeout:
            pid, raw = os.waitpid(child, os.WNOHANG)
            if pid:
                status = os.waitstatus_to_exitcode(raw)
                break
            time.sleep(0.01)
        if status is None:
            os.kill(child, signal.SIGKILL)
            os.waitpid(child, 0)
            status = HUNG
        seconds = time.monotonic() - started
        out.seek(0)
        err.seek(0)
        return CliResult(status, out.read().decode("utf-8", "replace"), err.read().decode("utf-8", "replace"), seconds)
