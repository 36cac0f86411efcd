"""The Python API: the README's example runs, `import summarize` stays cheap, and the
library reports progress through its callback, never by printing.

Common practice, no external source.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
from pathlib import Path

import summarize
from summarize.runs.progress import ProgressEvent

ROOT = Path(__file__).resolve().parent.parent


def test_the_readme_python_example_runs(tmp_path, monkeypatch, capsys):
    example = re.search(r"```python\n(.*?)```", (ROOT / "README.md").read_text(encoding="utf-8"), re.S).group(1)
    (tmp_path / "demo_archive").symlink_to(ROOT / "demo_archive", target_is_directory=True)
    monkeypatch.chdir(tmp_path)
    exec(compile(example, "README.md", "exec"), {})
    printed = capsys.readouterr()
    assert printed.err == ""
    lines = printed.out.splitlines()
    assert [line.split()[0] for line in lines[:4]] == ["lead", "textrank", "tfidf", "oracle"]
    assert "'lead · 80 words'" in lines[-1] and "'textrank · reference length'" in lines[-1]


def test_import_summarize_loads_nothing_heavy():
    probe = (
        "import sys, summarize; "
        "print(sorted(m for m in ('sklearn', 'torch', 'scipy', 'transformers', 'summarize.api') if m in sys.modules))"
    )
    loaded = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True, cwd=ROOT)
    assert loaded.stdout.strip() == "[]"


def test_every_exported_name_resolves():
    for name in summarize.__all__:
        assert getattr(summarize, name) is not None, name
    assert {"run", "score", "compare", "report", "train", "choose", "find", "show", "export"} <= set(summarize.__all__)
    assert {"LeadSummarizer", "TextRankSummarizer", "Seq2SeqSummarizer", "HouseStyleSummarizer"} <= set(summarize.__all__)


def test_the_library_reports_through_the_callback_and_never_prints(tmp_path, capsys):
    shutil.copytree(ROOT / "demo_archive" / "audits", tmp_path / "audits")
    db = tmp_path / "store.sqlite"
    events: list[ProgressEvent] = []
    summarize.run([tmp_path / "audits"], db, summarize.RunSettings(methods=("lead",)), progress=events.append)
    summarize.score(db, methods=("lead", "oracle"), progress=events.append)
    summarize.compare(db)
    assert capsys.readouterr() == ("", "")
    kinds = {event.kind for event in events}
    assert {"start", "advance", "message", "close"} <= kinds
    assert any(event.kind == "message" and event.text.startswith("scored ") for event in events)
    silent = tmp_path / "silent.sqlite"
    summarize.run([tmp_path / "audits"], silent, summarize.RunSettings(methods=("lead",)))
    summarize.score(silent, methods=("lead",))
    assert capsys.readouterr() == ("", "")


def test_the_run_settings_are_stored_as_the_run_configuration(tmp_path):
    import json
    import sqlite3

    shutil.copytree(ROOT / "demo_archive" / "audits", tmp_path / "audits")
    db = tmp_path / "store.sqlite"
    settings = summarize.RunSettings(methods=("textrank",), budget="80w", mmr=0.7)
    summarize.run([tmp_path / "audits"], db, settings)
    with sqlite3.connect(db) as conn:
        config = json.loads(conn.execute("select config from runs where command = 'run'").fetchone()[0])
    assert config["settings"] == settings.as_config()
    assert summarize.RunSettings(**{**config["settings"], "methods": tuple(config["settings"]["methods"])}) == settings


def test_the_job_file_keys_are_the_run_settings():
    from dataclasses import fields

    from summarize.runs.jobfile import RUN_KEYS

    # Where the run reads and writes, its log, and the aspect definitions (read by the aspect commands).
    # Read limits and link policy bound what one file may cost, not how the run summarizes.
    read_limits = {"max_file_mb", "max_unpacked_mb", "max_parts", "max_metadata_kb", "max_yaml_nodes",
                   "document_seconds", "follow_links_outside"}
    # Which files a run reads and how it counts old failures: the archive's side, like paths.
    archive_side = {"exclude", "strict_exit", "abbreviation"}
    job_only = {"paths", "db", "log", "aspects"} | read_limits | archive_side
    assert set(RUN_KEYS) - job_only == {item.name for item in fields(summarize.RunSettings)}
