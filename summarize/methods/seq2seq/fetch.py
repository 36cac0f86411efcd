"""Copying a checkpoint from the Hugging Face Hub into a local directory, once, on a
machine with a network; runs then load it from that directory with no network.

Only what summarization needs is fetched: the configuration and generation
configuration, tokenizer files, and safetensors weights (pickle weights only when
asked for), all from the repository's top folder.
"""

from __future__ import annotations

from pathlib import Path

from store.errors import SummarizerError

FETCH_PATTERNS = ["*.json", "*.safetensors", "*.model", "*.txt"]
PICKLE_PATTERNS = ["pytorch_model*.bin"]
# Sub-folders hold other exports of the same model (ONNX, other frameworks).
IGNORE_PATTERNS = ["*/*"]
_NO_NETWORK_HINT = "copy a checkpoint directory onto this machine and pass --model DIR"


class CheckpointFetchError(SummarizerError):
    """A fetch that did not produce a usable checkpoint; one line saying why."""


def fetch_checkpoint(repo_id: str, dest_dir: str | Path, allow_pickle: bool = False, revision: str | None = None) -> Path:
    """Download ``repo_id`` (at ``revision``) into ``dest_dir`` and return its path."""
    from huggingface_hub import snapshot_download
    from huggingface_hub.errors import (
        GatedRepoError,
        HfHubHTTPError,
        LocalEntryNotFoundError,
        RepositoryNotFoundError,
        RevisionNotFoundError,
    )

    patterns = FETCH_PATTERNS + (PICKLE_PATTERNS if allow_pickle else [])
    try:
        path = Path(
            snapshot_download(
                repo_id,
                revision=revision,
                local_dir=str(dest_dir),
                allow_patterns=patterns,
                ignore_patterns=IGNORE_PATTERNS,
            )
        )
    except (RepositoryNotFoundError, GatedRepoError):
        raise CheckpointFetchError(f"{repo_id}: no such repository on the model hub, or access to it is restricted") from None
    except RevisionNotFoundError:
        raise CheckpointFetchError(f"{repo_id}: no revision {revision!r} on the model hub") from None
    except LocalEntryNotFoundError as error:
        # Raised when the hub cannot be reached (no network, or HF_HUB_OFFLINE set).
        cause = error.__cause__ or error
        reason = str(cause).strip().splitlines()[0] if str(cause).strip() else type(cause).__name__
        raise CheckpointFetchError(f"could not reach the model hub: {reason}; {_NO_NETWORK_HINT}") from None
    except HfHubHTTPError as error:
        raise CheckpointFetchError(f"{repo_id}: the model hub refused the download ({str(error).splitlines()[0]})") from None
    except OSError as error:
        raise CheckpointFetchError(f"{repo_id}: download into {dest_dir} failed ({error})") from None
    except Exception as error:
        # A connection lost during the download surfaces as the HTTP client's own
        # error type (httpx or its successor), which is not re-exported.
        if not type(error).__module__.startswith("httpx"):
            raise
        raise CheckpointFetchError(f"could not reach the model hub: {error}; {_NO_NETWORK_HINT}") from None
    if not (path / "config.json").is_file():
        raise CheckpointFetchError(f"{repo_id}: the repository has no config.json; it is not a model checkpoint")
    if not any(path.glob("*.safetensors")) and not (allow_pickle and any(path.glob("pytorch_model*.bin"))):
        raise CheckpointFetchError(
            f"{repo_id}: the repository has no safetensors weights; "
            "pass --allow-pickle-weights to fetch pytorch_model.bin if you trust its source"
        )
    return path
