"""Digests across stored documents: make one from a selection, rerun it when the
archive changes, read it back.

Python API (the ``summarize digest`` commands call these):

    make_digest(db_path, DocumentSelection(query="pump", since="2025"), name="pumps-2025", aspect=None)
    rerun_digest(db_path, "pumps-2025")
    read_digest(db_path, "pumps-2025")      list_digests(db_path)
"""

from __future__ import annotations

import hashlib
import json
import time
from collections.abc import Callable
from dataclasses import dataclass

from store import Store
from store.aspect_records import Digest, DigestListing, DocumentSelection, StoredDigest
from store.digests import DigestNotFound, digest_fingerprint
from store.errors import SummarizerError
from store.runs import recorded_run, writable_store
from summarize.methods.aspects.definitions import Aspect
from summarize.methods.budget import Budget
from summarize.methods.digests import DigestSummarizer


class EmptySelection(SummarizerError):
    """A digest's selection matches no stored document."""


class UnknownDigest(SummarizerError):
    """No digest of that name is stored."""


@dataclass
class DigestOutcome:
    name: str
    digest_id: int
    version: int
    added: bool
    documents: int
    seconds: float
    record: StoredDigest

    def as_dict(self) -> dict:
        return {"name": self.name, "digest_id": self.digest_id, "version": self.version, "added": self.added,
                "documents": self.documents, "seconds": round(self.seconds, 3), "digest": self.record.as_dict()}


def digest_settings(summarizer: DigestSummarizer, aspect: Aspect | None) -> dict:
    return summarizer.get_params() | {"aspect": aspect.as_dict() if aspect else None}


def summarizer_from_settings(settings: dict) -> tuple[DigestSummarizer, Aspect | None]:
    """The summarizer and aspect a stored digest was made with."""
    values = {k: v for k, v in settings.items() if k not in ("method", "aspect", "budget")}
    summarizer = DigestSummarizer(budget=Budget(**settings["budget"]), **values)
    entry = settings.get("aspect")
    aspect = Aspect(entry["name"], entry["question"], tuple(entry["phrases"]), tuple(entry["labels"])) if entry else None
    return summarizer, aspect


def default_name(selection: DocumentSelection, settings: dict) -> str:
    canonical = json.dumps({"selection": selection.as_dict(), "settings": settings}, sort_keys=True)
    return "digest-" + hashlib.sha256(canonical.encode("utf-8")).hexdigest()[:8]


def make_digest(
    db_path: str,
    selection: DocumentSelection,
    name: str | None = None,
    aspect: Aspect | None = None,
    summarizer: DigestSummarizer | None = None,
    lock_wait_seconds: float = 0.0,
    progress: Callable[[str], None] | None = None,
) -> DigestOutcome:
    """Make (or, when nothing changed, keep) the digest ``name`` of the documents
    ``selection`` names. A changed archive or changed settings store a new version;
    an unchanged one writes nothing (``added`` is False)."""
    started = time.perf_counter()
    summarizer = summarizer or DigestSummarizer()
    settings = digest_settings(summarizer, aspect)
    name = name or default_name(selection, settings)
    with writable_store(db_path, lock_wait_seconds, progress) as (store, _lock):
        documents = store.digests.select(selection)
        if not documents:
            raise EmptySelection(f"{db_path}: the selection ({selection.describe() or 'everything'}) matches no document")
        latest = store.digests.latest(name)
        if latest and latest.fingerprint == digest_fingerprint(documents, selection.as_dict(), settings):
            return DigestOutcome(name, latest.id, latest.version, False, len(documents),
                                 time.perf_counter() - started, store.digests.record(name))
    config = {"name": name, "selection": selection.as_dict(), "settings": settings}
    with recorded_run(db_path, "digest", config, lock_wait_seconds, progress) as run:
        store = run.store
        # Resolved again under this run's lock: the archive may have changed in between.
        documents = store.digests.select(selection)
        if progress:
            progress(f"digest {name}: {len(documents)} documents")
        loaded = [(document_id, *store.documents.load(document_id)) for document_id, _ in documents]
        sentences, details = summarizer.summarize(loaded, aspect)
        digest = Digest(name, selection.as_dict(), settings, documents, sentences, details)
        digest_id, version, added = store.digests.add(digest, run.run_id)
        run.counts = {"digest_id": digest_id, "version": version, "added": added, "documents": len(documents)}
        return DigestOutcome(name, digest_id, version, added, len(documents), time.perf_counter() - started,
                             store.digests.record(name))


def rerun_digest(db_path: str, name: str, lock_wait_seconds: float = 0.0,
                 progress: Callable[[str], None] | None = None) -> DigestOutcome:
    """Make the digest ``name`` again with its stored selection and settings."""
    with Store(db_path, read_only=True) as store:
        latest = store.digests.latest(name)
    if latest is None:
        raise UnknownDigest(f"{db_path}: no digest named {name!r}")
    summarizer, aspect = summarizer_from_settings(latest.settings)
    selection = DocumentSelection(**latest.selection)
    return make_digest(db_path, selection, name, aspect, summarizer, lock_wait_seconds, progress)


def read_digest(db_path: str, name: str, version: int | None = None) -> StoredDigest:
    with Store(db_path, read_only=True) as store:
        try:
            return store.digests.record(name, version)
        except DigestNotFound as error:
            raise UnknownDigest(f"{db_path}: {error}") from None


def list_digests(db_path: str) -> list[DigestListing]:
    with Store(db_path, read_only=True) as store:
        return store.digests.newest()
