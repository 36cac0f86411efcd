"""The README's table "On the demo archive" is what the demo pipeline computes.

Common practice, no external source: a pin on our own invented demo, so a change that
moves a score on the demo shows here (structural, as DEVELOPERS.md allows: the numbers
are the README's, not an assertion about quality).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

import summarize

ROOT = Path(__file__).resolve().parent.parent
pytestmark = pytest.mark.slow


def readme_table() -> dict[str, list[str]]:
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    section = readme[readme.index("### On the demo archive"):]
    section = section[: section.index("\n### ", 1)]
    rows = re.findall(r"^\| ([a-z][^|]*?) \| (\d+) \| (.+?) \| (.+?) \| (.+?) \|$", section, re.MULTILINE)
    return {name.removesuffix(" (upper bound)"): list(values) for name, *values in rows}


def _cell(interval) -> str:
    return f"{100 * interval.estimate:.1f} [{100 * interval.low:.1f}, {100 * interval.high:.1f}]"


def test_the_demo_matched_budget_table_matches_the_readme(tmp_path):
    db = tmp_path / "demo.sqlite"
    report = summarize.run([ROOT / "demo_archive"], db)
    assert report.exit_status == 3  # the awkward files fail, as the README says
    summarize.score(db)
    comparison = summarize.compare(db, budget="reference")
    (group,) = comparison.groups
    computed = {
        system.name: [str(system.documents), *(_cell(system.scores[m]) for m in ("rouge1", "rouge2", "rougeL"))]
        for system in group.systems
    }
    expected = readme_table()
    assert set(expected) == {"lead", "tfidf", "textrank", "oracle"}
    assert computed == expected
