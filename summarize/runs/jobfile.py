"""Job files: an overnight job's settings in TOML, so the nightly command stays short.

    # night.toml
    paths = ["/archive/incoming", "/archive/2025"]
    db = "/var/lib/summaries/archive.sqlite"
    methods = ["lead", "tfidf", "textrank"]
    budget = "80w"
    workers = 2
    until = "06:30"
    log = "/var/log/summaries/night.log"
    exclude = ["drafts", "*.tmp"]
    abbreviation = ["Harb.", "Mstr."]   # never end a sentence before a number or a name

    [seq2seq]
    model = "/models/flan-t5-small"
    profile = "fast"

    [aspects.cause]              # the analyst's own aspects (summarize aspects --job)
    question = "What caused it?"
    phrases = ["root cause", "because", "due to"]

Keys are the long option names of ``summarize run`` with dashes written as
underscores; a flag given on the command line overrides the job file, except
``--exclude``, whose patterns are added to the job file's.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

from store.errors import UsageError


class JobFileError(UsageError, ValueError):
    """A job file that cannot be read, or a setting in it that is unknown or of the wrong type."""

RUN_KEYS = {
    "paths": list,
    "db": str,
    "methods": (list, str),
    "budget": (str, int),
    "mmr": float,
    "workers": int,
    "scheduler": str,
    "until": str,
    "max_minutes": (int, float),
    "wait_lock": (int, float),
    "group_documents": int,
    "group_seconds": (int, float),
    "log": str,
    "text_field": str,
    "title_field": str,
    "summary_field": str,
    "date_field": str,
    "id_field": str,
    "max_file_mb": (int, float),
    "max_unpacked_mb": (int, float),
    "max_parts": int,
    "max_metadata_kb": (int, float),
    "max_yaml_nodes": int,
    "document_seconds": (int, float),
    "follow_links_outside": bool,
    "exclude": list,
    "strict_exit": bool,
    "abbreviation": list,
    "seq2seq": dict,
    "aspects": dict,
}


def load_job(path: str | Path) -> dict:
    """Read and check a job file; relative paths in it are taken from its folder."""
    path = Path(path)
    try:
        with open(path, "rb") as handle:
            job = tomllib.load(handle)
    except FileNotFoundError:
        raise JobFileError(f"{path}: job file not found") from None
    except tomllib.TOMLDecodeError as error:
        raise JobFileError(f"{path}: not valid TOML ({error})") from None
    for key, value in job.items():
        if key not in RUN_KEYS:
            raise JobFileError(f"{path}: unknown setting {key!r} (known: {', '.join(sorted(RUN_KEYS))})")
        if not isinstance(value, RUN_KEYS[key]):
            raise JobFileError(f"{path}: setting {key!r} has the wrong type ({type(value).__name__})")
    if not all(isinstance(pattern, str) for pattern in job.get("exclude", [])):
        raise JobFileError(f"{path}: setting 'exclude' must be a list of patterns (strings)")
    base = path.parent
    if "paths" in job:
        job["paths"] = [str(base / p) for p in job["paths"]]
    for key in ("db", "log"):
        if key in job:
            job[key] = str(base / job[key])
    if isinstance(job.get("methods"), list):
        job["methods"] = ",".join(job["methods"])
    if "budget" in job:
        job["budget"] = str(job["budget"])
    return job
