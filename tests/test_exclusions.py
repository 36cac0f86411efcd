"""Exclude patterns: on the command line, in the job file and in the archive's own
``.summarize-exclude`` file.

External check: within one path part, a pattern matches exactly as Python's
``fnmatch.fnmatchcase`` documents (``*``, ``?``, ``[seq]``, ``[!seq]``). How parts,
``**``, anchoring and a trailing ``/`` combine is this project's own grammar (common
practice for path globs, no outside source), checked case by case below.
"""

from __future__ import annotations

import io
import json
import sqlite3
from fnmatch import fnmatchcase
from pathlib import Path

import pytest
from click.testing import CliRunner

from summarize.cli import main
from summarize.reading.exclusions import EXCLUDE_FILE_NAME, BadExcludePattern, ExcludePattern, ExclusionRules
from summarize.reading.ingest import IngestProblem, archive_files, iter_archive
from summarize.runs.progress import TerminalProgress
from summarize.runs.runner import run_archive

ROOT = Path("/srv/archive")
REPORT = "The tram depot was inspected in March. Two doors were repaired. The roof is sound."


def excluded(pattern: str, relative: str, is_folder: bool = False) -> bool:
    return ExclusionRules(ROOT, [ExcludePattern.parse(pattern)]).excludes(ROOT / relative, is_folder)


@pytest.mark.parametrize("pattern", ["*.tmp", "draft?", "[abc]*", "[!a]*.txt", "notes.txt", "*"])
@pytest.mark.parametrize("name", ["a.tmp", "drafts", "draft1", "b-notes.txt", "notes.txt", "a.txt", "[x].tmp"])
def test_a_pattern_of_one_part_matches_a_name_as_fnmatch_does(pattern, name):
    # External check: fnmatch.fnmatchcase, Python standard library.
    assert excluded(pattern, f"2025/{name}") == fnmatchcase(name, pattern)


@pytest.mark.parametrize(
    ("pattern", "relative", "expected"),
    [
        ("drafts", "drafts/a.txt", True),
        ("drafts", "2025/drafts/deep/a.txt", True),
        ("drafts", "2025/drafts.txt", False),
        ("drafts/", "2025/drafts/a.txt", True),
        ("drafts/", "2025/drafts", False),  # a file named like the folder stays
        ("scans/2019", "scans/2019/a.pdf", True),
        ("scans/2019", "old/scans/2019/a.pdf", False),  # anchored at the archive folder
        ("scans/*/raw", "scans/2019/raw/a.pdf", True),
        ("scans/*/raw", "scans/2019/x/raw/a.pdf", False),
        ("scans/**/raw", "scans/raw/a.pdf", True),
        ("scans/**/raw", "scans/2019/x/raw/a.pdf", True),
        ("**/raw/", "a/b/raw/c.txt", True),
        ("**/raw/", "a/b/raw", False),
        ("2025/*.tmp", "2025/x.tmp", True),
        ("2025/*.tmp", "2025/sub/x.tmp", False),  # '*' stays within one part
        ("/srv/archive/drafts", "drafts/a.txt", True),
        ("/srv/other/drafts", "drafts/a.txt", False),
        ("Drafts", "drafts/a.txt", False),  # case-sensitive
        ("./drafts/", "drafts/a.txt", True),
    ],
)
def test_parts_anchoring_and_folders(pattern, relative, expected):
    assert excluded(pattern, relative) is expected


def test_a_folder_reported_by_the_walk_is_matched_as_a_folder():
    assert excluded("raw/", "scans/raw", is_folder=True)


@pytest.mark.parametrize("pattern", ["", "  ", "/", "a/**b", "x**", "../elsewhere"])
def test_patterns_that_cannot_mean_anything_are_refused(pattern):
    with pytest.raises(BadExcludePattern):
        ExcludePattern.parse(pattern)


def make_archive(folder: Path) -> Path:
    for relative in ("2025/depot.txt", "2025/depot.tmp.txt", "drafts/plan.txt", "2025/drafts/old.md",
                     "scans/2019/raw/scan.txt", "scans/2020/report.txt"):
        path = folder / relative
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(f"# {path.stem}\n\n{REPORT}\n", encoding="utf-8")
    return folder


def walked(archive: Path, exclude=()) -> list[str]:
    return [Path(item.path).relative_to(archive).as_posix()
            for item in iter_archive([archive], exclude=exclude) if not isinstance(item, IngestProblem)]


def test_the_walk_leaves_out_what_the_patterns_exclude(tmp_path):
    archive = make_archive(tmp_path / "archive")
    assert walked(archive) == [
        "2025/depot.tmp.txt", "2025/depot.txt", "2025/drafts/old.md", "drafts/plan.txt",
        "scans/2019/raw/scan.txt", "scans/2020/report.txt",
    ]
    assert walked(archive, ["drafts/", "*.tmp.txt", "scans/**/raw"]) == ["2025/depot.txt", "scans/2020/report.txt"]
    # What a stopped run counts as not read yet is the same selection.
    assert sorted(archive_files([archive], exclude=["drafts/", "*.tmp.txt", "scans/**/raw"])) == [
        str(archive / "2025/depot.txt"), str(archive / "scans/2020/report.txt")
    ]


def test_a_file_given_by_name_is_read_whatever_the_patterns(tmp_path):
    archive = make_archive(tmp_path / "archive")
    given = archive / "drafts" / "plan.txt"
    assert [item.path for item in iter_archive([given], exclude=["drafts"])] == [str(given)]


def test_the_archive_folder_exclude_file(tmp_path):
    archive = make_archive(tmp_path / "archive")
    (archive / EXCLUDE_FILE_NAME).write_text(
        "# kept out of the nightly run\n\ndrafts/\n  *.tmp.txt  \nscans/**x\n", encoding="utf-8"
    )
    items = list(iter_archive([archive]))
    documents = sorted(Path(i.path).relative_to(archive).as_posix() for i in items if not isinstance(i, IngestProblem))
    assert documents == ["2025/depot.txt", "scans/2019/raw/scan.txt", "scans/2020/report.txt"]
    # The bad line alone is ignored, and named with its file and line.
    [problem] = [i for i in items if isinstance(i, IngestProblem)]
    assert problem.path == str(archive / EXCLUDE_FILE_NAME) and problem.kind == "error"
    assert problem.reason.startswith("line 5: ") and "'**'" in problem.reason
    # Patterns given to the run are added to the file's.
    assert walked(archive, ["scans/2019"]) == ["2025/depot.txt", "scans/2020/report.txt"]


def test_an_excluded_document_stays_as_it_was_in_the_store(tmp_path):
    archive = make_archive(tmp_path / "archive")
    db = tmp_path / "store.sqlite"
    quiet = TerminalProgress(stream=io.StringIO())
    assert run_archive([archive], str(db), methods=["lead"], progress=quiet).exit_status == 0
    later = run_archive([archive], str(db), methods=["lead"], exclude=["drafts"], progress=quiet)
    assert later.exit_status == 0 and later.missing == 0
    with sqlite3.connect(db) as conn:
        assert {status for (status,) in conn.execute("select status from documents")} == {"active"}
        config = json.loads(conn.execute("select config from runs where id = ?", [later.run_id]).fetchone()[0])
    assert config["exclude"] == ["drafts"]


def test_exclude_on_the_command_line_and_in_the_job_file(tmp_path):
    archive = make_archive(tmp_path / "archive")
    runner = CliRunner()

    def documents_read(*args: str) -> int:
        result = runner.invoke(main, ["run", *args, "--methods", "lead", "--json"])
        assert result.exit_code == 0, result.output
        return json.loads(result.stdout)["documents_seen"]

    assert documents_read(str(archive), "--db", str(tmp_path / "a.sqlite"), "--exclude", "drafts",
                          "--exclude", "scans/") == 2
    job = tmp_path / "night.toml"
    job.write_text('paths = ["archive"]\ndb = "b.sqlite"\nexclude = ["drafts", "*.tmp.txt"]\n', encoding="utf-8")
    assert documents_read("--job", str(job)) == 3
    # A pattern on the command line is added to the job file's.
    assert documents_read("--job", str(job), "--exclude", "scans/2020") == 2

    refused = runner.invoke(main, ["run", str(archive), "--db", str(tmp_path / "c.sqlite"), "--exclude", "a/**b"])
    assert refused.exit_code == 2 and "'**' must be a whole part" in refused.output
    job.write_text('paths = ["archive"]\ndb = "b.sqlite"\nexclude = [3]\n', encoding="utf-8")
    refused = runner.invoke(main, ["run", "--job", str(job)])
    assert refused.exit_code == 2 and "exclude" in refused.output
