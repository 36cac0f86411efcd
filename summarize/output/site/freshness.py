"""Knowing when the store changed, so whole-store facts computed once (summary choices,
comparison pages) are recomputed only then."""

from __future__ import annotations

import os
from pathlib import Path


def store_version(db_path: str | Path) -> tuple:
    """Changes whenever the store does: the file's and its write-ahead log's times and sizes."""
    stats = [os.stat(path) for path in (Path(db_path), Path(f"{db_path}-wal")) if path.exists()]
    return tuple((stat.st_mtime_ns, stat.st_size) for stat in stats)
