"""Loading an encoder-decoder summarization checkpoint from local files, and its identity.

A checkpoint is a directory in the Hugging Face layout (``config.json``, weights,
tokenizer files), named either by its path or by a repository id that is already in
the local Hugging Face cache. Nothing is ever fetched here: every call passes
``local_files_only=True``, so a run works the same with or without a network.

Safety: weights are read from ``*.safetensors`` files, which hold tensors only. A
checkpoint that has only pickle weights (``pytorch_model*.bin``) is refused unless the
caller opts in with ``allow_pickle=True``, because unpickling can run code;
``trust_remote_code`` is always off, so no Python file shipped with a checkpoint runs.

Every check runs before any document is touched and fails with a
:class:`ModelLoadError` whose message is one line naming the directory and the problem.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from store.errors import SummarizerError
from summarize.reading.walk import special_kind

# Files that can hold a tokenizer's vocabulary (fast tokenizers, SentencePiece models
# of T5 and PEGASUS, byte-level BPE of BART); one of them must be present.
TOKENIZER_VOCABULARY_FILES = ("tokenizer.json", "spiece.model", "sentencepiece.bpe.model", "vocab.json")
TOKENIZER_FILES = TOKENIZER_VOCABULARY_FILES + (
    "merges.txt",
    "tokenizer_config.json",
    "special_tokens_map.json",
    "added_tokens.json",
)
SAFETENSORS_PATTERN = "*.safetensors"
PICKLE_PATTERN = "pytorch_model*.bin"
# Tokenizers that declare no limit report this sentinel (transformers' VERY_LARGE_INTEGER).
_NO_LIMIT = 10**12
_DEFAULT_WINDOW = 512
_REPO_ID = re.compile(r"^[A-Za-z0-9][\w.-]*(/[\w.-]+)?$")


class ModelLoadError(SummarizerError):
    """A checkpoint that cannot be used; the message is one line naming it and why."""


@dataclass
class Checkpoint:
    """A loaded model with its tokenizer and the facts a run records about it.

    ``identity`` holds content hashes, model type and parameter count (what makes two
    checkpoints the same model); ``path`` is where it was found; ``input_window`` is
    the longest input, in tokens including special tokens, the model accepts;
    ``recommended`` holds the generation settings and task prefix the checkpoint
    itself suggests (``task_specific_params["summarization"]`` and its generation
    config), in this program's names.
    """

    path: Path
    model: Any
    tokenizer: Any
    config: Any
    identity: dict
    input_window: int
    recommended: dict


def _first_line(error: BaseException) -> str:
    text = str(error).strip() or type(error).__name__
    return text.splitlines()[0]


def sha256_file(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def resolve_checkpoint(name: str | Path) -> Path:
    """A checkpoint directory: ``name`` itself when it exists, else the snapshot of
    repository ``name`` in the local Hugging Face cache (never downloaded)."""
    path = Path(name).expanduser()
    if path.is_dir():
        return path.resolve()
    if path.exists():
        raise ModelLoadError(f"{name}: not a directory (a model checkpoint is a directory with config.json)")
    if _REPO_ID.match(str(name)):
        from huggingface_hub import snapshot_download
        from huggingface_hub.errors import LocalEntryNotFoundError

        try:
            return Path(snapshot_download(str(name), local_files_only=True)).resolve()
        except LocalEntryNotFoundError:
            raise ModelLoadError(
                f"{name}: no such model directory, and no snapshot of that name in the local Hugging Face cache"
            ) from None
    raise ModelLoadError(f"{name}: no such model directory")


def _read_config_json(path: Path) -> dict:
    config_file = path / "config.json"
    if not config_file.is_file():
        raise ModelLoadError(f"{path}: no config.json (not a model checkpoint directory)")
    try:
        data = json.loads(config_file.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as error:
        raise ModelLoadError(f"{config_file}: unreadable model configuration ({_first_line(error)})") from None
    if not isinstance(data, dict):
        raise ModelLoadError(f"{config_file}: unreadable model configuration (not a JSON object)")
    return data


def _weight_files(path: Path, allow_pickle: bool) -> tuple[list[Path], bool]:
    """The weight files to load and whether they are pickles; safetensors win."""
    safetensors_files = sorted(path.glob(SAFETENSORS_PATTERN))
    if safetensors_files:
        from safetensors import safe_open

        for file in safetensors_files:
            try:
                with safe_open(str(file), framework="pt") as handle:
                    handle.keys()
            except Exception as error:  # the safetensors library raises its own error types
                raise ModelLoadError(f"{file}: unreadable weights file ({_first_line(error)})") from None
        return safetensors_files, False
    pickle_files = sorted(path.glob(PICKLE_PATTERN))
    if pickle_files and not allow_pickle:
        raise ModelLoadError(
            f"{path}: only pickle weights ({pickle_files[0].name}), which can run code when loaded; "
            "use a checkpoint with .safetensors weights, or pass --allow-pickle-weights if you trust its source"
        )
    if pickle_files:
        return pickle_files, True
    raise ModelLoadError(f"{path}: no weights file (expected model.safetensors)")


def _check_encoder_decoder(path: Path, config: Any) -> None:
    from transformers.models.auto.modeling_auto import MODEL_FOR_SEQ_TO_SEQ_CAUSAL_LM_MAPPING_NAMES

    model_type = getattr(config, "model_type", None)
    if not getattr(config, "is_encoder_decoder", False) or model_type not in MODEL_FOR_SEQ_TO_SEQ_CAUSAL_LM_MAPPING_NAMES:
        raise ModelLoadError(
            f"{path}: model type {model_type!r} is not an encoder-decoder text model "
            "(summarization needs e.g. t5, bart or pegasus)"
        )


def input_window(tokenizer: Any, config: Any) -> int:
    """Longest input in tokens: the tokenizer's ``model_max_length`` capped by the
    position table of the configuration (``max_position_embeddings`` or
    ``n_positions``); 512 when neither says."""
    limits = [
        value
        for value in (
            getattr(tokenizer, "model_max_length", None),
            getattr(config, "max_position_embeddings", None),
            getattr(config, "n_positions", None),
        )
        if isinstance(value, int) and 0 < value < _NO_LIMIT
    ]
    return min(limits) if limits else _DEFAULT_WINDOW


# Checkpoint setting names -> this program's names. ``max_length``/``min_length``
# count decoder tokens, which for an encoder-decoder are the new tokens.
_SETTING_NAMES = {
    "num_beams": "num_beams",
    "max_length": "max_new_tokens",
    "min_length": "min_new_tokens",
    "max_new_tokens": "max_new_tokens",
    "min_new_tokens": "min_new_tokens",
    "no_repeat_ngram_size": "no_repeat_ngram_size",
    "length_penalty": "length_penalty",
    "early_stopping": "early_stopping",
}


def recommended_settings(config: Any, generation_config: Any) -> dict:
    """Generation settings the checkpoint suggests: its generation config's
    non-default values, overridden by ``task_specific_params["summarization"]`` (where
    T5 and BART checkpoints keep their summarization settings and T5 its prefix)."""
    found: dict = {}
    sources = [generation_config.to_diff_dict() if generation_config is not None else {}]
    task_params = getattr(config, "task_specific_params", None) or {}
    sources.append(task_params.get("summarization") or {})
    for source in sources:
        for key, value in source.items():
            if key in _SETTING_NAMES and value is not None:
                found[_SETTING_NAMES[key]] = value
            elif key == "prefix" and isinstance(value, str):
                found["prefix"] = value
    return found


@contextmanager
def _quiet_transformers():
    """Silence load reports and progress bars: an overnight log should hold one line
    per event, and load problems are reported by this module."""
    from transformers.utils import logging as hf_logging

    verbosity = hf_logging.get_verbosity()
    bars = hf_logging.is_progress_bar_enabled()
    hf_logging.set_verbosity_error()
    hf_logging.disable_progress_bar()
    try:
        yield
    finally:
        hf_logging.set_verbosity(verbosity)
        if bars:
            hf_logging.enable_progress_bar()


@contextmanager
def _offline():
    """Hugging Face libraries in offline mode for the duration: on top of
    ``local_files_only``, any lookup they would make on their own is refused too."""
    from huggingface_hub import constants

    previous_constant, previous_variable = constants.HF_HUB_OFFLINE, os.environ.get("HF_HUB_OFFLINE")
    constants.HF_HUB_OFFLINE = True
    os.environ["HF_HUB_OFFLINE"] = "1"
    try:
        yield
    finally:
        constants.HF_HUB_OFFLINE = previous_constant
        if previous_variable is None:
            os.environ.pop("HF_HUB_OFFLINE", None)
        else:
            os.environ["HF_HUB_OFFLINE"] = previous_variable


def load_checkpoint(name: str | Path, allow_pickle: bool = False) -> Checkpoint:
    """Check and load a checkpoint (float32, evaluation mode) with its tokenizer."""
    with _offline():
        return _load_checkpoint(name, allow_pickle)


def _check_regular_files(path: Path) -> None:
    """Every file of the checkpoint is opened by some library: a FIFO would block it
    for ever and a device would never end, so anything but regular files is refused."""
    for entry in sorted(path.iterdir()):
        try:
            mode = entry.stat().st_mode
        except OSError as error:
            raise ModelLoadError(f"{entry}: cannot read ({error.strerror or error})") from None
        kind = special_kind(mode)
        if kind is not None:
            raise ModelLoadError(f"{entry}: is {kind}, not a regular file; not read")


def _load_checkpoint(name: str | Path, allow_pickle: bool) -> Checkpoint:
    path = resolve_checkpoint(name)
    _check_regular_files(path)
    config_data = _read_config_json(path)
    weight_files, pickled = _weight_files(path, allow_pickle)
    if not any((path / file).is_file() for file in TOKENIZER_VOCABULARY_FILES):
        raise ModelLoadError(
            f"{path}: no tokenizer (expected tokenizer.json, spiece.model or vocab.json with merges.txt)"
        )
    import torch
    from transformers import AutoConfig, AutoModelForSeq2SeqLM, AutoTokenizer

    with _quiet_transformers():
        try:
            config = AutoConfig.from_pretrained(path, local_files_only=True, trust_remote_code=False)
        except Exception as error:  # transformers raises ValueError, KeyError, OSError... for bad configs
            raise ModelLoadError(f"{path / 'config.json'}: unusable model configuration ({_first_line(error)})") from None
        _check_encoder_decoder(path, config)
        try:
            tokenizer = AutoTokenizer.from_pretrained(path, local_files_only=True, trust_remote_code=False)
        except Exception as error:
            raise ModelLoadError(f"{path}: unreadable tokenizer ({_first_line(error)})") from None
        try:
            model, loading = AutoModelForSeq2SeqLM.from_pretrained(
                path,
                config=config,
                local_files_only=True,
                use_safetensors=not pickled,
                trust_remote_code=False,
                dtype=torch.float32,
                output_loading_info=True,
            )
        except Exception as error:
            raise ModelLoadError(f"{path}: could not load the weights ({_first_line(error)})") from None
    missing = sorted(loading.get("missing_keys") or [])
    if missing:
        # transformers would fill these with random values: a summary from such a
        # model is noise, so it is refused.
        raise ModelLoadError(f"{path}: weights do not match the configuration ({len(missing)} missing, e.g. {missing[0]})")
    model.eval()
    tokenizer.padding_side = "right"
    identity = {
        "model_type": config.model_type,
        "config_sha256": sha256_file(path / "config.json"),
        "weights_sha256": {file.name: sha256_file(file) for file in weight_files},
        "weights_format": "pickle" if pickled else "safetensors",
        "tokenizer_sha256": {
            file: sha256_file(path / file) for file in TOKENIZER_FILES if (path / file).is_file()
        },
        "parameters": int(model.num_parameters()),
        "architecture": (config_data.get("architectures") or [type(model).__name__])[0],
    }
    return Checkpoint(
        path=path,
        model=model,
        tokenizer=tokenizer,
        config=config,
        identity=identity,
        input_window=input_window(tokenizer, config),
        recommended=recommended_settings(config, getattr(model, "generation_config", None)),
    )
