"""The archive walk, JSON records one by one, read limits, missing-means-missing and
clean terminal output: the behaviour behind the hostile-input suite, case by case.

Permission cases run the command as the unprivileged user 'nobody' (root reads any
folder), and are skipped with the reason where that user does not exist.
"""

from __future__ import annotations

import json
import os
import pwd
import signal
import sqlite3
import tempfile
import time
from pathlib import Path

import pytest
from forked_cli import run_cli

from store.printable import printable, terminal_text
from summarize.output.strict_json import dumps as strict_dumps
from summarize.reading.ingest import iter_archive, read_file
from summarize.reading.limits import DocumentTookTooLong, LimitExceeded, ReadLimits, time_limit, using_limits
from summarize.reading.readers.safe_yaml import load_bounded_yaml
from summarize.reading.walk import UnreadableFile, read_regular_file

TEXT = "The north reservoir was inspected in March. Two valves were replaced. Water quality stayed within limits."


def _rows(db: Path, sql: str) -> list[tuple]:
    connection = sqlite3.connect(f"file:{db}?mode=ro", uri=True)
    try:
        return connection.execute(sql).fetchall()
    finally:
        connection.close()


# names --------------------------------------------------------------------------------


def test_a_name_that_is_not_utf8_is_stored_losslessly(tmp_path):
    raw_name = bytes(tmp_path) + b"/caf\xe9 report.txt"
    Path(os.fsdecode(raw_name)).write_text(TEXT, encoding="utf-8")
    [document] = [item for item in iter_archive([tmp_path])]
    assert document.record_key == f"{tmp_path}/caf\\xe9 report.txt"
    assert document.record_key.encode("utf-8")  # valid UTF-8 for SQLite
    assert bytes.fromhex(document.metadata["path_bytes"]) == raw_name
    with open(bytes.fromhex(document.metadata["path_bytes"]), encoding="utf-8") as handle:
        assert handle.read() == TEXT


def test_printable_makes_every_control_character_visible():
    assert printable("a\nb\x1b[2Jc\u2028d\u202e\x00") == "a\\nb\\x1b[2Jc\\u2028d\\u202e\\x00"
    assert terminal_text("line one\n\tline two\x1b]0;title\x07\r") == "line one\n\tline two\\x1b]0;title\\x07\\r"


# links and special files -------------------------------------------------------------------


def test_links_inside_the_archive_are_followed_once_and_outside_only_when_allowed(tmp_path):
    archive = tmp_path / "archive"
    (archive / "sub").mkdir(parents=True)
    (archive / "sub" / "a.txt").write_text(TEXT, encoding="utf-8")
    os.symlink("sub", archive / "again")  # the same folder twice
    outside = tmp_path / "elsewhere"
    outside.mkdir()
    (outside / "b.txt").write_text(TEXT.replace("north", "south"), encoding="utf-8")
    os.symlink(outside / "b.txt", archive / "b.txt")
    refused = [str(item) for item in iter_archive([archive])]
    assert len(refused) == 2 and "outside the archive" in refused[1]
    allowed = list(iter_archive([archive], follow_links_outside=True))
    assert [item.record_key for item in allowed] == [str(archive / "again" / "a.txt"), str(archive / "b.txt")]


def test_opening_a_fifo_never_blocks(tmp_path):
    fifo = tmp_path / "pipe.txt"
    os.mkfifo(fifo)
    previous = signal.signal(signal.SIGALRM, lambda *_: pytest.fail("reading a FIFO blocked"))
    signal.alarm(5)
    try:
        with pytest.raises(UnreadableFile, match="is a FIFO"):
            read_regular_file(fifo, 1024)
        with pytest.raises(UnreadableFile, match="is a FIFO"):
            read_file(fifo)
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)


def test_a_file_that_vanished_is_named(tmp_path):
    with pytest.raises(UnreadableFile, match="vanished while the archive was read"):
        read_regular_file(tmp_path / "gone.txt", 1024)


def test_a_seq2seq_checkpoint_holding_a_fifo_is_refused_at_once(tmp_path):
    from summarize.methods.seq2seq.models import ModelLoadError, load_checkpoint

    (tmp_path / "config.json").write_text("{}", encoding="utf-8")
    os.mkfifo(tmp_path / "model.safetensors")
    started = time.monotonic()
    with pytest.raises(ModelLoadError, match="is a FIFO"):
        load_checkpoint(tmp_path)
    assert time.monotonic() - started < 5


# limits -----------------------------------------------------------------------------------


def test_yaml_within_budget_loads_and_aliases_count_where_used():
    assert load_bounded_yaml("a: &x [1, 2]\nb: *x\n") == {"a": [1, 2], "b": [1, 2]}
    with using_limits(ReadLimits(yaml_nodes=5)), pytest.raises(LimitExceeded, match="--max-yaml-nodes"):
        # 1 mapping + 2 keys + 2 sequences of 2 (the alias counted again) = 9 nodes
        load_bounded_yaml("a: &x [1, 2]\nb: *x\n")


def test_time_limit_interrupts_running_code():
    started = time.monotonic()
    with pytest.raises(DocumentTookTooLong, match="--document-seconds"), time_limit(0.2):
        while True:
            pass
    assert time.monotonic() - started < 2


def test_limits_are_recorded_with_the_run(tmp_path):
    (tmp_path / "a").mkdir()
    (tmp_path / "a" / "n.txt").write_text(TEXT, encoding="utf-8")
    db = tmp_path / "s.sqlite"
    assert run_cli(["run", str(tmp_path / "a"), "--db", str(db), "--max-parts", "77", "--quiet"]).exit_status == 0
    [(config,)] = _rows(db, "select config from runs")
    assert json.loads(config)["read_limits"]["max_parts"] == 77


# JSON records --------------------------------------------------------------------------------


def test_positional_keys_and_ids_do_not_collide(tmp_path):
    path = tmp_path / "records.json"
    path.write_text('[{"text": "A first. A second."}, {"id": "1", "text": "C first. C second."}, '
                    '{"id": 7, "text": "D first. D second."}]', encoding="utf-8")
    keys = [document.record_key.split("#")[1] for document in read_file(path)]
    assert keys == ["@1", "1", "7"]


def test_json_lines_split_on_newline_only_and_export_escapes_line_separators(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    records = [{"id": "a", "text": "First part\u2028still the same record. Second sentence here."},
               {"id": "b", "text": "Another\u0085record entirely. It has two sentences."}]
    (archive / "log.jsonl").write_text("\n".join(json.dumps(r, ensure_ascii=False) for r in records) + "\n",
                                       encoding="utf-8")
    db = tmp_path / "s.sqlite"
    result = run_cli(["run", str(archive), "--db", str(db), "--quiet", "--methods", "lead"])
    assert result.exit_status == 0, result.stderr
    assert sorted(key.rsplit("#", 1)[1] for (key,) in _rows(db, "select record_key from documents")) == ["a", "b"]
    out = tmp_path / "export.jsonl"
    assert run_cli(["export", "--db", str(db), "--format", "jsonl", "--out", str(out)]).exit_status == 0
    raw = out.read_text(encoding="utf-8")
    assert "\u2028" not in raw and "\u0085" not in raw
    assert [json.loads(line)["method"] for line in raw.splitlines()] == ["lead", "lead"]


def test_strict_json_has_no_nan_or_infinity():
    text = strict_dumps({"f1": float("nan"), "scores": [float("inf"), 0.5], "text": "a\u2029b"})
    assert json.loads(text, parse_constant=lambda name: pytest.fail(f"non-standard constant {name}")) == {
        "f1": None, "scores": [None, 0.5], "text": "a\u2029b"}
    assert "\u2029" not in text


# terminal and Markdown ----------------------------------------------------------------------


def test_documents_cannot_send_control_sequences_to_the_terminal(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    hostile = ("Valve \x1b]0;owned\x07report \x1b[2J one. The pump <script>alert(1)</script> failed twice. "
               "Crews \x1b[31mfixed\x1b[0m it in a day.")
    (archive / "esc.txt").write_text(hostile, encoding="utf-8")
    db = tmp_path / "s.sqlite"
    assert run_cli(["run", str(archive), "--db", str(db), "--quiet"]).exit_status == 0
    with sqlite3.connect(db) as connection:
        summary_id = connection.execute("select id from summaries limit 1").fetchone()[0]
        connection.execute("insert into scores (summary_id, metric, precision, recall, f1) values (?, 'rouge1', ?, ?, ?)",
                           [summary_id, float("-inf"), float("inf"), float("inf")])
    for args in (["show", "1", "--db", str(db)], ["show", "1", "--highlight", "--db", str(db)],
                 ["find", "pump", "--db", str(db)]):
        result = run_cli(args)
        assert result.exit_status == 0, result.stderr
        assert "\x1b" not in result.stdout and "\x07" not in result.stdout
        assert "\\x1b" in result.stdout
    shown = run_cli(["show", "1", "--json", "--db", str(db)])
    record = json.loads(shown.stdout, parse_constant=lambda name: pytest.fail(f"non-standard constant {name}"))
    assert record["document"]["id"] == 1
    out = tmp_path / "out.md"
    assert run_cli(["export", "--db", str(db), "--format", "md", "--out", str(out)]).exit_status == 0
    markdown = out.read_text(encoding="utf-8")
    assert "<script>" not in markdown and "&lt;script&gt;" in markdown


# missing means missing ---------------------------------------------------------------------------


def test_an_absent_root_leaves_its_documents_as_they_were(tmp_path):
    first, second = tmp_path / "first", tmp_path / "second"
    for folder in (first, second):
        folder.mkdir()
        (folder / "n.txt").write_text(TEXT + f" Folder {folder.name}.", encoding="utf-8")
    db = tmp_path / "s.sqlite"
    assert run_cli(["run", str(first), str(second), "--db", str(db), "--quiet"]).exit_status == 0
    (second / "n.txt").rename(tmp_path / "n.txt")
    second.rmdir()  # an unmounted share
    result = run_cli(["run", str(first), str(second), "--db", str(db), "--quiet"])
    assert result.exit_status == 3 and len(result.error_lines) == 1
    assert "no such file or directory; documents stored from it are left as they were" in result.stderr
    assert sorted(status for (status,) in _rows(db, "select status from documents")) == ["active", "active"]


@pytest.fixture
def nobody_folder():
    try:
        nobody = pwd.getpwnam("nobody").pw_uid
    except KeyError:
        pytest.skip("no 'nobody' user to drop privileges to")
    if os.geteuid() != 0:
        pytest.skip("dropping privileges needs root; as a normal user the folder modes apply directly")
    folder = Path(tempfile.mkdtemp(prefix="walk-", dir="/tmp"))
    folder.chmod(0o777)
    yield folder, nobody
    for path in [folder, *folder.rglob("*")]:
        if path.is_dir() and not path.is_symlink():
            path.chmod(0o777)
    import shutil

    shutil.rmtree(folder, ignore_errors=True)


def test_unlistable_and_unsearchable_folders_are_named_and_their_documents_kept(nobody_folder):
    folder, nobody = nobody_folder
    archive = folder / "archive"
    for name in ("open", "locked", "listonly"):
        (archive / name).mkdir(parents=True)
        (archive / name / "n.txt").write_text(TEXT + f" Kept in {name}.", encoding="utf-8")
    for path in [archive, *archive.rglob("*")]:
        path.chmod(0o777 if path.is_dir() else 0o666)
    db = folder / "s.sqlite"
    first = run_cli(["run", str(archive), "--db", str(db), "--quiet"], as_user=nobody)
    assert first.exit_status == 0, first.stderr
    (archive / "locked").chmod(0o000)
    (archive / "listonly").chmod(0o444)
    (archive / "open" / "later.txt").write_text("A new file arrived. It is read as usual.", encoding="utf-8")
    (archive / "open" / "later.txt").chmod(0o666)
    result = run_cli(["run", str(archive), "--db", str(db), "--quiet"], as_user=nobody)
    assert result.exit_status == 3, result.stderr
    assert result.error_lines == [
        f"error: {archive / 'listonly'}: folder can be listed but not searched (permission denied)",
        f"error: {archive / 'locked'}: cannot list folder (Permission denied)",
    ]
    statuses = dict(_rows(db, "select record_key, status from documents"))
    assert set(statuses.values()) == {"active"} and len(statuses) == 4


def test_read_only_commands_work_on_a_store_in_a_folder_they_cannot_write(nobody_folder):
    folder, nobody = nobody_folder
    archive = folder / "archive"
    archive.mkdir()
    (archive / "n.txt").write_text(TEXT, encoding="utf-8")
    db = folder / "store" / "s.sqlite"
    db.parent.mkdir()
    assert run_cli(["run", str(archive), "--db", str(db), "--quiet"]).exit_status == 0
    db.parent.chmod(0o755)  # root's folder: nobody can read it, not write it
    db.chmod(0o644)
    assert run_cli(["find", "reservoir", "--db", str(db)], as_user=nobody).exit_status == 0
    assert run_cli(["show", "1", "--db", str(db)], as_user=nobody).exit_status == 0
    out = folder / "out.csv"
    assert run_cli(["export", "--db", str(db), "--format", "csv", "--out", str(out)], as_user=nobody).exit_status == 0
    refused = run_cli(["run", str(archive), "--db", str(db), "--quiet"], as_user=nobody)
    assert refused.exit_status == 1 and len(refused.stderr.splitlines()) == 1
    assert "cannot write beside the store" in refused.stderr


def test_job_file_sets_limits_and_the_link_policy(tmp_path):
    archive = tmp_path / "archive"
    archive.mkdir()
    outside = tmp_path / "outside.txt"
    outside.write_text(TEXT, encoding="utf-8")
    os.symlink(outside, archive / "linked.txt")
    job = tmp_path / "night.toml"
    job.write_text('paths = ["archive"]\ndb = "s.sqlite"\nfollow_links_outside = true\nmax_parts = 12\n'
                   "document_seconds = 30\n", encoding="utf-8")
    result = run_cli(["run", "--job", str(job), "--quiet"])
    assert result.exit_status == 0, result.stderr
    [(config,)] = _rows(tmp_path / "s.sqlite", "select config from runs")
    config = json.loads(config)
    assert config["follow_links_outside"] is True
    assert (config["read_limits"]["max_parts"], config["read_limits"]["document_seconds"]) == (12, 30)
    assert _rows(tmp_path / "s.sqlite", "select record_key from documents") == [(str(archive / "linked.txt"),)]
