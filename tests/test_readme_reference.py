"""The README's command reference and exit-status table against `--help` and behaviour.

Common practice, no external source: the README is the contract with the user.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

from summarize.cli import main

ROOT = Path(__file__).resolve().parent.parent
README = (ROOT / "README.md").read_text(encoding="utf-8")
OPTION = re.compile(r"--[a-z][a-z0-9-]*")


def _section(title: str) -> str:
    start = README.index(title)
    following = README.find("\n## ", start + len(title))
    return README[start: following if following != -1 else len(README)]


def readme_reference() -> dict[str, set[str]]:
    """Command name -> the options its synopsis under "Using it" lists."""
    commands: dict[str, set[str]] = {}
    current = None
    for line in _section("## Using it").splitlines():
        match = re.match(r"    summarize ([a-z-]+)", line)
        if match:
            current = match.group(1)
            commands[current] = set()
        elif not line.startswith("        "):
            current = None if not line.startswith("    ") else current
        if current and line.startswith("    "):
            commands[current] |= set(OPTION.findall(line))
    return commands


def help_options(command: str) -> set[str]:
    result = CliRunner().invoke(main, [command, "--help"], terminal_width=200)
    assert result.exit_code == 0, result.output
    return set(OPTION.findall(result.stdout.split("Options:", 1)[1])) - {"--help"}


def exit_table() -> dict[int, tuple[str, str]]:
    rows = re.findall(r"^\| (\d) \| (.+?) \| (.+?) \|$", _section("### Exit status"), re.MULTILINE)
    return {int(status): (meaning, commands) for status, meaning, commands in rows}


# Described in the README's own "Answers" section, which the reference points to.
ANSWER_COMMANDS = {"aspects", "train-aspects", "digest"}


def test_every_command_is_in_the_reference_with_exactly_its_options():
    reference = readme_reference()
    assert set(reference) == set(main.commands) - ANSWER_COMMANDS
    assert all(name in _section("## Using it") for name in ANSWER_COMMANDS)
    for command, options in reference.items():
        assert options == help_options(command), command


def test_the_exit_table_covers_every_status_and_command():
    table = exit_table()
    assert set(table) == {0, 1, 2, 3, 4}
    for status in (0, 1, 2):
        assert table[status][1] == "every command"
    assert table[3][1] == table[4][1] == "`run`"
    run_help = CliRunner().invoke(main, ["run", "--help"], terminal_width=200).stdout
    assert "3 finished" in run_help and "4 stopped early" in run_help


@pytest.fixture(scope="module")
def small_store(tmp_path_factory) -> tuple[Path, Path]:
    folder = tmp_path_factory.mktemp("reference")
    archive = folder / "archive"
    shutil.copytree(ROOT / "demo_archive" / "audits", archive / "audits")
    db = folder / "store.sqlite"
    assert CliRunner().invoke(main, ["run", str(archive), "--db", str(db), "--methods", "lead", "--quiet"]).exit_code == 0
    return archive, db


def _arguments(command: str, db: Path, folder: Path) -> list[str]:
    """The least each command needs, with ``db`` as its store."""
    out = str(folder / f"{command}.out")
    return {
        "run": [str(folder / "archive"), "--db", str(db), "--methods", "lead", "--quiet"],
        "score": ["--db", str(db), "--methods", "lead,oracle"],
        "compare": ["--db", str(db), "--resamples", "100"],
        "report": ["--db", str(db), "--out", out, "--resamples", "100", "--examples", "1"],
        "train": ["--db", str(db)],
        "choose": ["--db", str(db)],
        "find": ["audit", "--db", str(db)],
        "show": ["1", "--db", str(db)],
        "export": ["--db", str(db), "--format", "csv", "--out", out],
        "fetch-model": ["fictional-lab/tiny-t5", "--dest", str(folder / "model")],
        "review": ["--db", str(db)],
    }[command]


def test_status_2_for_a_bad_command_line_in_every_command(small_store):
    archive, db = small_store
    for command in main.commands:
        arguments = [] if command in ANSWER_COMMANDS else _arguments(command, db, archive.parent)
        result = CliRunner().invoke(main, [command, *arguments, "--no-such-option"])
        assert result.exit_code == 2, (command, result.output)


def test_status_1_when_nothing_can_be_done_in_every_command(small_store, tmp_path, monkeypatch):
    from huggingface_hub import constants

    monkeypatch.setattr(constants, "HF_HUB_OFFLINE", True)  # fetch-model: as without a network, sending nothing
    archive, _ = small_store
    (tmp_path / "archive").symlink_to(archive, target_is_directory=True)
    foreign = tmp_path / "notes.txt"
    foreign.write_text("not a store", encoding="utf-8")
    for command in set(main.commands) - ANSWER_COMMANDS:
        result = CliRunner().invoke(main, [command, *_arguments(command, foreign, tmp_path)])
        assert result.exit_code == 1, (command, result.output)
        assert result.stderr.startswith("error: "), (command, result.stderr)


def test_status_0_3_and_4_as_the_table_says(small_store, tmp_path):
    archive, db = small_store
    for command in ("run", "score", "compare", "report", "find", "show", "export", "choose"):
        result = CliRunner().invoke(main, [command, *_arguments(command, db, archive.parent)])
        assert result.exit_code == 0, (command, result.output)
    shutil.copytree(ROOT / "demo_archive" / "awkward", tmp_path / "awkward")
    partly = CliRunner().invoke(main, ["run", str(tmp_path / "awkward"), str(archive), "--db", str(db), "--quiet"])
    assert partly.exit_code == 3 and "error: " in partly.stderr
    stopped = CliRunner().invoke(main, ["run", str(archive), "--db", str(tmp_path / "new.sqlite"),
                                        "--max-minutes", "0.000001", "--quiet"])
    assert stopped.exit_code == 4, stopped.output
