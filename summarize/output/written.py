"""Writing an output file so that it can never destroy the store or leave half a file.

An output path that names the store itself, one of SQLite's companion files
(``-wal``, ``-shm``, ``-journal``) or the store's lock file is refused. Everything
else is written to a temporary file in the target's folder and renamed over the
target only once it is complete (``os.replace`` is atomic within one file system),
so a crash, a full disk or a Ctrl-C leaves either the old file or the new one.
"""

from __future__ import annotations

import errno
import os
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import TextIO

from store.errors import OutputRefused

STORE_COMPANIONS = ("", "-wal", "-shm", "-journal", ".lock")


def check_output_path(out_path: str | Path, store_path: str | Path | None) -> None:
    """Refuse an output path that is the store or one of its companion files."""
    if store_path is None:
        return
    target = os.path.realpath(out_path)
    for suffix in STORE_COMPANIONS:
        protected = f"{store_path}{suffix}"
        same = os.path.realpath(protected) == target
        if not same and os.path.exists(protected) and os.path.exists(out_path):
            same = os.path.samefile(protected, out_path)
        if same:
            what = f"the store's {suffix} file" if suffix else "the store itself"
            raise OutputRefused(f"{out_path}: is {what}; refusing to overwrite it (choose another output path)")


@contextmanager
def atomic_text_file(
    out_path: str | Path, store_path: str | Path | None = None, encoding: str = "utf-8"
) -> Iterator[TextIO]:
    """A text handle whose content replaces ``out_path`` when the block ends without
    an error; nothing is changed when it raises."""
    check_output_path(out_path, store_path)
    folder = os.path.dirname(os.path.abspath(out_path))
    if os.path.isdir(out_path):
        raise OutputRefused(f"{out_path}: is a folder; give a file name")
    if not os.path.isdir(folder):
        raise OutputRefused(f"{out_path}: the folder {folder} does not exist")
    try:
        descriptor, temporary = tempfile.mkstemp(prefix=f".{os.path.basename(out_path)}.", suffix=".partial", dir=folder)
    except OSError as error:
        raise _refused(out_path, error) from None
    try:
        with os.fdopen(descriptor, "w", encoding=encoding, newline="") as handle:
            yield handle
            handle.flush()
            os.fsync(handle.fileno())
        # mkstemp makes the file private; an output is as readable as any file created here.
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(temporary, 0o666 & ~umask)
        os.replace(temporary, out_path)
    except OSError as error:
        _remove(temporary)
        raise _refused(out_path, error) from None
    except BaseException:
        _remove(temporary)
        raise


def _refused(out_path: str | Path, error: OSError) -> OutputRefused:
    if error.errno == errno.ENOSPC:
        return OutputRefused(f"no space left to write {out_path} (nothing was changed there)")
    return OutputRefused(f"{out_path}: cannot write ({error.strerror or error})")


def _remove(path: str) -> None:
    try:
        os.remove(path)
    except FileNotFoundError:
        pass
