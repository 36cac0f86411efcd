"""`summarize run` with the seq2seq method, and `summarize fetch-model`, end to end
through the command line on tiny checkpoints built here."""

from __future__ import annotations

import json
import sqlite3

import pytest
from click.testing import CliRunner
from tiny_checkpoints import build_gpt2, colour_report

from summarize.cli import main


@pytest.fixture(scope="session")
def trained_model_dir(trained_t5):
    return trained_t5[0]


@pytest.fixture
def archive(tmp_path):
    folder = tmp_path / "archive"
    folder.mkdir()
    for colour in ("red", "amber"):
        (folder / f"tower_{colour}.txt").write_text(colour_report(colour) + "\n", encoding="utf-8")
    return folder


def _error_line(result) -> str:
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, result.stderr
    return lines[0]


def test_an_unusable_model_stops_the_run_before_any_document(archive, tmp_path):
    db = tmp_path / "store.sqlite"
    missing = tmp_path / "no-such-model"
    result = CliRunner().invoke(
        main, ["run", str(archive), "--db", str(db), "--methods", "lead,seq2seq", "--model", str(missing)]
    )
    assert result.exit_code == 1
    line = _error_line(result)
    assert line.startswith("error: ") and str(missing) in line
    assert not db.exists()  # the store was never opened


def test_a_decoder_only_model_is_refused_on_the_command_line(archive, tmp_path):
    gpt2 = build_gpt2(tmp_path / "gpt2")
    result = CliRunner().invoke(
        main, ["run", str(archive), "--db", str(tmp_path / "s.sqlite"), "--methods", "seq2seq", "--model", str(gpt2)]
    )
    assert result.exit_code == 1
    assert "not an encoder-decoder" in _error_line(result)


def test_seq2seq_without_a_model_is_a_usage_error(archive, tmp_path):
    result = CliRunner().invoke(main, ["run", str(archive), "--db", str(tmp_path / "s.sqlite"), "--methods", "seq2seq"])
    assert result.exit_code == 2 and "--model" in result.stderr


@pytest.mark.slow
def test_run_with_seq2seq_options(archive, trained_model_dir, tmp_path):
    db = tmp_path / "store.sqlite"
    result = CliRunner().invoke(
        main,
        [
            "run", str(archive), "--db", str(db), "--methods", "lead,seq2seq", "--model", str(trained_model_dir),
            "--seq2seq-profile", "fast", "--no-quantize", "--threads", "1", "--batch-size", "2",
            "--max-input-tokens", "48", "--long-mode", "chunks", "--quiet", "--json",
        ],
    )
    assert result.exit_code == 0, result.stderr
    assert json.loads(result.stdout)["summaries_added"] == 4
    with sqlite3.connect(db) as conn:
        config = json.loads(conn.execute("select config from runs").fetchone()[0])
        flags = set(conn.execute("select kind, detail from flags").fetchall())
    params = config["methods"]["seq2seq"]
    assert params["profile"] == "fast" and params["quantize"] is None and params["generation"]["num_beams"] == 1
    assert params["input_window"] == 48 and params["long_mode"] == "chunks"
    assert config["runtime"]["seq2seq"] == {"model_path": str(trained_model_dir.resolve()), "batch_size": 2, "threads": 1}
    # The fast profile's minimum length makes the model write on past what it learned;
    # the learned codes, absent from the reports, are flagged in any case.
    assert {("unsupported-number", "41"), ("unsupported-number", "17")} <= flags


def test_fetch_model_without_network_fails_with_advice(tmp_path, monkeypatch):
    from huggingface_hub import constants

    monkeypatch.setattr(constants, "HF_HUB_OFFLINE", True)  # fails as a missing network does, sending nothing
    result = CliRunner().invoke(main, ["fetch-model", "fictional-lab/tiny-t5", "--dest", str(tmp_path / "m")])
    assert result.exit_code == 1
    line = _error_line(result)
    assert line.startswith("error: could not reach the model hub: ") and line.endswith("pass --model DIR")
