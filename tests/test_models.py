"""Loading checkpoints: the real loading path on tiny checkpoints built here, and the
one-line refusals for everything that is not a usable summarization model."""

from __future__ import annotations

import hashlib
import shutil
import socket

import pytest
import torch
from tiny_checkpoints import build_gpt2

from store.records import param_hash
from summarize.methods.seq2seq.fetch import CheckpointFetchError, fetch_checkpoint
from summarize.methods.seq2seq.models import ModelLoadError, input_window, load_checkpoint, recommended_settings


@pytest.fixture
def no_network(monkeypatch):
    """Any attempt to open a network connection fails the test."""

    def refuse(*args, **kwargs):
        raise AssertionError("network access attempted")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)


def _one_line(error: pytest.ExceptionInfo) -> str:
    message = str(error.value)
    assert "\n" not in message
    return message


def test_t5_loads_offline_with_its_identity(tiny_t5, no_network):
    checkpoint = load_checkpoint(tiny_t5)
    # Reference values computed here with hashlib and torch, independently of the loader.
    assert checkpoint.identity["config_sha256"] == hashlib.sha256((tiny_t5 / "config.json").read_bytes()).hexdigest()
    assert checkpoint.identity["weights_sha256"] == {
        "model.safetensors": hashlib.sha256((tiny_t5 / "model.safetensors").read_bytes()).hexdigest()
    }
    unique = {id(p): p.numel() for p in checkpoint.model.parameters()}
    assert checkpoint.identity["parameters"] == sum(unique.values())
    assert checkpoint.identity["model_type"] == "t5"
    assert checkpoint.identity["weights_format"] == "safetensors"
    assert checkpoint.input_window == 64  # the tokenizer's model_max_length, as saved
    assert not checkpoint.model.training


def test_bart_window_is_capped_by_its_position_table(tiny_bart):
    checkpoint = load_checkpoint(tiny_bart)
    assert checkpoint.identity["model_type"] == "bart"
    assert checkpoint.input_window == min(
        checkpoint.tokenizer.model_max_length, checkpoint.config.max_position_embeddings
    )


def test_window_falls_back_when_nothing_declares_one():
    class Unbounded:
        model_max_length = int(1e30)  # transformers' sentinel for "no limit"

    class NoPositions:
        pass

    assert input_window(Unbounded(), NoPositions()) == 512  # common practice: the T5/PEGASUS training length


def test_identity_changes_with_the_weights(tiny_t5, tmp_path):
    other = tmp_path / "other"
    shutil.copytree(tiny_t5, other)
    first = load_checkpoint(tiny_t5)
    first.model.shared.weight.data[0, 0] += 1.0
    first.model.save_pretrained(other, safe_serialization=True)
    second = load_checkpoint(other)
    assert second.identity["config_sha256"] == first.identity["config_sha256"]
    assert second.identity["weights_sha256"] != first.identity["weights_sha256"]
    assert param_hash("seq2seq", {"model": first.identity}) != param_hash("seq2seq", {"model": second.identity})


def _pickle_only_copy(source, target):
    target.mkdir()
    for name in ("config.json", "tokenizer.json", "tokenizer_config.json"):
        shutil.copy(source / name, target / name)
    model = load_checkpoint(source).model
    torch.save(model.state_dict(), target / "pytorch_model.bin")
    return model


def test_pickle_only_checkpoint_needs_the_opt_in(tiny_t5, tmp_path):
    pickled = tmp_path / "pickled"
    original = _pickle_only_copy(tiny_t5, pickled)
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(pickled)
    assert "pickle" in _one_line(refused) and "--allow-pickle-weights" in str(refused.value)
    accepted = load_checkpoint(pickled, allow_pickle=True)
    assert accepted.identity["weights_format"] == "pickle"
    for name, tensor in original.state_dict().items():
        assert torch.equal(accepted.model.state_dict()[name], tensor), name


def test_decoder_only_model_is_refused(tmp_path):
    gpt2 = build_gpt2(tmp_path / "gpt2")
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(gpt2)
    assert "'gpt2'" in _one_line(refused) and "encoder-decoder" in str(refused.value)


def test_missing_tokenizer_is_refused(tiny_t5, tmp_path):
    bare = tmp_path / "bare"
    bare.mkdir()
    for name in ("config.json", "model.safetensors"):
        shutil.copy(tiny_t5 / name, bare / name)
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(bare)
    assert "no tokenizer" in _one_line(refused)


def test_missing_directory_is_refused(tmp_path):
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(tmp_path / "nowhere" / "model")
    assert "no such model directory" in _one_line(refused)


def test_corrupt_config_is_refused(tiny_t5, tmp_path):
    broken = tmp_path / "broken-config"
    shutil.copytree(tiny_t5, broken)
    (broken / "config.json").write_text('{"model_type": "t5", "d_model": ', encoding="utf-8")
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(broken)
    assert "config.json" in _one_line(refused) and "unreadable" in str(refused.value)


def test_corrupt_weights_are_refused(tiny_t5, tmp_path):
    broken = tmp_path / "broken-weights"
    shutil.copytree(tiny_t5, broken)
    (broken / "model.safetensors").write_bytes(b"\x00\x01 not a tensor file" * 8)
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(broken)
    assert "model.safetensors" in _one_line(refused) and "unreadable weights" in str(refused.value)


def test_weights_missing_a_tensor_are_refused(tiny_t5, tmp_path):
    from safetensors.torch import load_file, save_file

    partial = tmp_path / "partial"
    shutil.copytree(tiny_t5, partial)
    tensors = load_file(partial / "model.safetensors")
    tensors.pop("decoder.final_layer_norm.weight")
    save_file(tensors, partial / "model.safetensors", metadata={"format": "pt"})
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint(partial)
    assert "decoder.final_layer_norm.weight" in _one_line(refused)


def test_repository_id_is_found_in_the_local_cache_only(tiny_t5, tmp_path, monkeypatch, no_network):
    from huggingface_hub import constants

    # The hub cache layout: models--OWNER--NAME/{refs/main, snapshots/COMMIT/...}.
    cache = tmp_path / "hub"
    commit = "0123456789abcdef0123456789abcdef01234567"
    repo = cache / "models--fictional-lab--tiny-t5"
    shutil.copytree(tiny_t5, repo / "snapshots" / commit)
    (repo / "refs").mkdir()
    (repo / "refs" / "main").write_text(commit)
    monkeypatch.setattr(constants, "HF_HUB_CACHE", str(cache))
    checkpoint = load_checkpoint("fictional-lab/tiny-t5")
    assert checkpoint.path == (repo / "snapshots" / commit).resolve()
    with pytest.raises(ModelLoadError) as refused:
        load_checkpoint("fictional-lab/not-cached")
    assert "local Hugging Face cache" in _one_line(refused)


def test_checkpoint_recommendations_are_read():
    from transformers import GenerationConfig, T5Config

    # task_specific_params["summarization"] as the released t5-small config.json has it
    # (values from memory).
    config = T5Config(
        task_specific_params={
            "summarization": {
                "early_stopping": True,
                "length_penalty": 2.0,
                "max_length": 200,
                "min_length": 30,
                "no_repeat_ngram_size": 3,
                "num_beams": 4,
                "prefix": "summarize: ",
            }
        }
    )
    assert recommended_settings(config, GenerationConfig()) == {
        "early_stopping": True,
        "length_penalty": 2.0,
        "max_new_tokens": 200,
        "min_new_tokens": 30,
        "no_repeat_ngram_size": 3,
        "num_beams": 4,
        "prefix": "summarize: ",
    }


def test_fetch_without_network_says_what_to_do(tmp_path, monkeypatch):
    from huggingface_hub import constants

    # Offline mode makes the real download path fail the way a missing network does,
    # without sending anything.
    monkeypatch.setattr(constants, "HF_HUB_OFFLINE", True)
    with pytest.raises(CheckpointFetchError) as refused:
        fetch_checkpoint("fictional-lab/tiny-t5", tmp_path / "dest")
    message = _one_line(refused)
    assert message.startswith("could not reach the model hub: ")
    assert message.endswith("copy a checkpoint directory onto this machine and pass --model DIR")


def test_fetch_reports_a_connection_failure(tmp_path, monkeypatch):
    import huggingface_hub
    from huggingface_hub.errors import LocalEntryNotFoundError

    def unreachable(*args, **kwargs):
        try:
            raise ConnectionError("Name or service not known")
        except ConnectionError as cause:
            raise LocalEntryNotFoundError("cannot find the requested files") from cause

    monkeypatch.setattr(huggingface_hub, "snapshot_download", unreachable)
    with pytest.raises(CheckpointFetchError) as refused:
        fetch_checkpoint("fictional-lab/tiny-t5", tmp_path / "dest")
    assert "could not reach the model hub: Name or service not known;" in _one_line(refused)



def test_loading_switches_the_hub_to_offline_mode_and_back(tiny_t5, monkeypatch):
    import os

    import transformers
    from huggingface_hub import constants
    from transformers.utils.hub import is_offline_mode

    monkeypatch.delenv("HF_HUB_OFFLINE", raising=False)
    monkeypatch.setattr(constants, "HF_HUB_OFFLINE", False)
    seen = []
    original = transformers.AutoTokenizer.from_pretrained

    def watching(*args, **kwargs):
        seen.append((is_offline_mode(), os.environ.get("HF_HUB_OFFLINE")))
        return original(*args, **kwargs)

    monkeypatch.setattr(transformers.AutoTokenizer, "from_pretrained", watching)
    load_checkpoint(tiny_t5)
    assert seen == [(True, "1")]
    assert constants.HF_HUB_OFFLINE is False and "HF_HUB_OFFLINE" not in os.environ
