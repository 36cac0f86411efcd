"""Every external check is labelled one way, and DEVELOPERS.md's table lists every label.

Common practice, no external source.
"""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
LABEL = re.compile(r"^\s*# External check: (.+)$", re.MULTILINE)


def test_the_developers_table_lists_every_labelled_source():
    labelled = {
        source.strip()
        for path in (ROOT / "tests").glob("*.py")
        for source in LABEL.findall(path.read_text(encoding="utf-8"))
    }
    guide = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = guide[guide.index("| check | source (as labelled) |"):]
    section = section[: section.index("\n\n")]
    tabled = {row.rsplit("|", 2)[1].strip() for row in section.splitlines()[2:]}
    assert labelled and labelled <= tabled
