"""Walking an archive's folders so that no entry can stop, hang or mislead the walk.

Every entry becomes either a regular file to read or an :class:`IngestProblem`
with a one-line reason; nothing raises. In particular:

* a name that is not valid UTF-8 is kept losslessly: Python holds its bytes as
  surrogate escapes, and :func:`display_path` writes each such byte as ``\\xNN``
  for keys, messages and the store (``os.fsencode`` of the walked path gives the
  bytes back);
* symbolic links are followed only when their target lies inside one of the
  archive roots (as resolved), unless ``follow_links_outside`` is set; a link
  loop, a broken link and a folder reached twice are each handled once;
* only regular files are read: FIFOs, sockets and devices are reported, never
  opened for reading in a way that could block (:func:`read_regular_file`);
* a folder that cannot be listed, or can be listed but not searched, and an
  archive root that is absent are reported as *unlisted*: the runner then leaves
  the stored documents under them as they were, since their absence says nothing.
"""

from __future__ import annotations

import errno
import os
import stat
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path

from store.printable import printable
from summarize.reading.limits import LimitExceeded
from summarize.reading.readers.sidecars import is_sidecar_name

_CHUNK = 1024 * 1024
_SPECIAL_KINDS = (
    (stat.S_ISFIFO, "a FIFO (named pipe)"),
    (stat.S_ISSOCK, "a socket"),
    (stat.S_ISCHR, "a character device"),
    (stat.S_ISBLK, "a block device"),
)


@dataclass(frozen=True)
class IngestProblem:
    """One file, folder or record that gave no document, or a fault in one that did.
    ``kind`` is 'error' for unreadable, unsafe or malformed input, 'skipped' for input
    that is not meant to be read (unsupported type, stray summary sidecar) and
    'warning' for a document read despite a fault (invalid front matter, an
    unreadable date). ``unlisted`` marks a
    folder (or an absent root) whose contents could not be seen."""

    path: str
    reason: str
    kind: str
    unlisted: bool = False

    def __str__(self) -> str:
        return printable(f"{self.path}: {self.reason}")


class UnreadableFile(Exception):
    """A file that cannot be read; ``str()`` is 'path: reason' on one line."""

    def __init__(self, path: str, reason: str) -> None:
        super().__init__(path, reason)
        self.path = path
        self.reason = reason

    def __str__(self) -> str:
        return printable(f"{self.path}: {self.reason}")


def display_path(path: str | Path) -> str:
    """The path as valid UTF-8 text: bytes of the name that are not UTF-8 (held by
    Python as surrogate escapes) are written ``\\xNN``."""
    return os.fsencode(path).decode("utf-8", "backslashreplace")


def special_kind(mode: int) -> str | None:
    """What a non-regular, non-folder entry is ('a FIFO (named pipe)', ...), else None."""
    return next((name for test, name in _SPECIAL_KINDS if test(mode)), None)


def _reason(exc: OSError) -> str:
    return exc.strerror or str(exc)


class ArchiveWalk:
    """The files under ``roots`` (absolute paths), depth first, entries sorted by
    name, names starting with '.' skipped (a hidden path given as a root is read)."""

    def __init__(self, roots: Iterable[str], follow_links_outside: bool = False) -> None:
        self.roots = [os.path.abspath(root) for root in roots]
        self.follow_links_outside = follow_links_outside
        self.real_roots = [os.path.realpath(root) for root in self.roots]

    def __iter__(self) -> Iterator[Path | IngestProblem]:
        visited: set[str] = set()
        for root in self.roots:
            yield from self._root(root, visited)

    def inside(self, path: str) -> bool:
        """Whether ``path``, links resolved, lies inside one of the roots."""
        real = os.path.realpath(path)
        return any(real == root or real.startswith(root.rstrip(os.sep) + os.sep) for root in self.real_roots)

    def _root(self, root: str, visited: set[str]) -> Iterator[Path | IngestProblem]:
        try:
            mode = os.stat(root).st_mode
        except OSError as exc:
            reason = "no such file or directory" if exc.errno == errno.ENOENT else f"cannot open ({_reason(exc)})"
            yield IngestProblem(display_path(root), f"{reason}; documents stored from it are left as they were",
                                "error", unlisted=True)
            return
        if stat.S_ISDIR(mode):
            yield from self._folder(root, visited)
        else:
            yield from self._file_or_special(root, mode)

    def _folder(self, folder: str, visited: set[str]) -> Iterator[Path | IngestProblem]:
        real = os.path.realpath(folder)
        if real in visited:
            return
        visited.add(real)
        try:
            with os.scandir(folder) as listing:
                entries = sorted(listing, key=lambda entry: entry.name)
        except OSError as exc:
            yield IngestProblem(display_path(folder), f"cannot list folder ({_reason(exc)})", "error", unlisted=True)
            return
        for entry in entries:
            if entry.name.startswith("."):
                continue
            try:
                mode = entry.stat(follow_symlinks=False).st_mode
            except FileNotFoundError:
                yield IngestProblem(display_path(entry.path), "vanished while the archive was read", "error")
                continue
            except OSError as exc:
                if exc.errno == errno.EACCES:
                    yield IngestProblem(display_path(folder), "folder can be listed but not searched (permission denied)",
                                        "error", unlisted=True)
                    return
                yield IngestProblem(display_path(entry.path), f"cannot inspect ({_reason(exc)})", "error")
                continue
            if stat.S_ISLNK(mode):
                yield from self._link(entry.path, visited)
            elif stat.S_ISDIR(mode):
                yield from self._folder(entry.path, visited)
            else:
                yield from self._file_or_special(entry.path, mode)

    def _link(self, path: str, visited: set[str]) -> Iterator[Path | IngestProblem]:
        try:
            mode = os.stat(path).st_mode
        except OSError as exc:
            if exc.errno == errno.ELOOP:
                reason = "symbolic link loop (the link leads back to itself)"
            elif exc.errno == errno.ENOENT:
                reason = "broken symbolic link (its target does not exist)"
            else:
                reason = f"cannot follow symbolic link ({_reason(exc)})"
            yield IngestProblem(display_path(path), reason, "error")
            return
        if not self.follow_links_outside and not self.inside(path) and not is_sidecar_name(Path(path)):
            # (A summary sidecar is judged, once, when its document is read.)
            yield IngestProblem(
                display_path(path),
                f"symbolic link to {display_path(os.path.realpath(path))}, outside the archive; not read "
                "(allow with --follow-links-outside)",
                "error",
            )
            return
        if stat.S_ISDIR(mode):
            yield from self._folder(path, visited)
        else:
            yield from self._file_or_special(path, mode)

    @staticmethod
    def _file_or_special(path: str, mode: int) -> Iterator[Path | IngestProblem]:
        kind = special_kind(mode)
        if kind is None:
            yield Path(path)
        else:
            yield IngestProblem(display_path(path), f"is {kind}, not a regular file; not read", "error")


def read_regular_file(path: Path, max_bytes: int) -> bytes:
    """The bytes of a regular file, at most ``max_bytes``. Opening never blocks (a
    FIFO put in the file's place is refused, not waited on). Raises
    ``UnreadableFile`` for anything else."""
    key = display_path(path)
    try:
        descriptor = os.open(path, os.O_RDONLY | os.O_NONBLOCK | os.O_NOCTTY)
    except FileNotFoundError:
        raise UnreadableFile(key, "vanished while the archive was read") from None
    except OSError as exc:
        raise UnreadableFile(key, f"cannot read file ({_reason(exc)})") from None
    try:
        mode = os.fstat(descriptor).st_mode
        kind = special_kind(mode)
        if kind is not None or stat.S_ISDIR(mode):
            raise UnreadableFile(key, f"is {kind or 'a directory'}, not a regular file; not read")
        chunks: list[bytes] = []
        size = 0
        while chunk := os.read(descriptor, _CHUNK):
            size += len(chunk)
            if size > max_bytes:
                raise UnreadableFile(key, str(LimitExceeded("file size", "max_file_bytes", max_bytes)))
            chunks.append(chunk)
        return b"".join(chunks)
    except OSError as exc:
        raise UnreadableFile(key, f"cannot read file ({_reason(exc)})") from None
    finally:
        os.close(descriptor)
