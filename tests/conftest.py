"""Shared fixtures: tiny seq2seq checkpoints built once per test session (configs and
tokenizers made on the spot, saved as a real checkpoint directory would be)."""

from __future__ import annotations

import pytest
import torch
from tiny_checkpoints import build_bart, build_pegasus, build_t5, build_trained_t5


@pytest.fixture(scope="session")
def tiny_t5(tmp_path_factory):
    return build_t5(tmp_path_factory.getbasetemp() / "tiny-t5")


@pytest.fixture(scope="session")
def tiny_bart(tmp_path_factory):
    return build_bart(tmp_path_factory.getbasetemp() / "tiny-bart")


@pytest.fixture(scope="session")
def tiny_pegasus(tmp_path_factory):
    return build_pegasus(tmp_path_factory.getbasetemp() / "tiny-pegasus")


@pytest.fixture(scope="session")
def trained_t5(tmp_path_factory):
    """A tiny T5 trained on a colour-to-code mapping: ``(directory, training losses)``."""
    torch.set_num_threads(1)
    return build_trained_t5(tmp_path_factory.getbasetemp() / "trained-t5")
