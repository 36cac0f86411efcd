"""Every benchmark module imports: a renamed or moved API breaks the benchmark at once
rather than the next time someone measures (common practice; no external source)."""

from __future__ import annotations

import importlib
import pkgutil
from pathlib import Path

import pytest

BENCH = Path(__file__).resolve().parent.parent / "bench"


@pytest.mark.parametrize("name", sorted(m.name for m in pkgutil.iter_modules([str(BENCH)]) if m.name != "__main__"))
def test_benchmark_module_imports(name):
    module = importlib.import_module(f"bench.{name}")
    assert module.__name__ == f"bench.{name}"
