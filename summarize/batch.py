"""The batch runner: ingest an archive, split, summarize with each method, store.

    report = run_archive(["archive/"], "store.sqlite", methods=["lead", "tfidf"])

Each document is written in its own small transaction, so an interrupted run loses
at most the document in flight, and a rerun does only what is missing (document
content hash + method + parameter hash).
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable, Iterable
from dataclasses import asdict, dataclass, field
from pathlib import Path

from store.writes import Store
from summarize.budget import Budget
from summarize.document import Document, Segmentation, param_hash
from summarize.extractive import DEFAULT_BUDGET, EXTRACTIVE_METHODS
from summarize.ingest import IngestProblem, RecordFields, iter_archive
from summarize.split import split_document

# Exit statuses of `summarize run` (documented in the README).
EXIT_OK = 0
EXIT_FAILED = 1
EXIT_SOME_FILES_FAILED = 3


@dataclass
class RunReport:
    """What a run did, for the command line and for the ``runs.counts`` column."""

    run_id: int
    documents_seen: int = 0
    documents_added: int = 0
    duplicates: int = 0
    summaries_added: int = 0
    summaries_skipped: int = 0
    errors: list[str] = field(default_factory=list)
    skipped_files: list[str] = field(default_factory=list)
    failed_summaries: list[str] = field(default_factory=list)
    seconds: float = 0.0

    @property
    def exit_status(self) -> int:
        return EXIT_SOME_FILES_FAILED if self.errors or self.failed_summaries else EXIT_OK

    def counts(self) -> dict:
        return {
            "documents_seen": self.documents_seen,
            "documents_added": self.documents_added,
            "duplicates": self.duplicates,
            "summaries_added": self.summaries_added,
            "summaries_skipped": self.summaries_skipped,
            "files_failed": len(self.errors),
            "files_skipped": len(self.skipped_files),
            "summaries_failed": len(self.failed_summaries),
            "seconds": round(self.seconds, 3),
        }


def build_methods(names: Iterable[str], budget: Budget, mmr_lambda: float | None = None, **extra) -> list:
    """Instantiate the named methods with a shared budget."""
    methods = []
    for name in names:
        if name not in EXTRACTIVE_METHODS:
            known = ", ".join(sorted(EXTRACTIVE_METHODS))
            raise ValueError(f"unknown method {name!r} (known: {known})")
        cls = EXTRACTIVE_METHODS[name]
        kwargs = {"budget": budget}
        if name in ("tfidf", "textrank"):
            kwargs["mmr_lambda"] = mmr_lambda
        methods.append(cls(**kwargs))
    return methods


def _say(message: str) -> None:
    print(message, file=sys.stderr, flush=True)


def run_archive(
    paths: Iterable[str | Path],
    db_path: str,
    methods: Iterable[str] = ("lead", "tfidf", "textrank"),
    budget: Budget = DEFAULT_BUDGET,
    mmr_lambda: float | None = None,
    fields: RecordFields = RecordFields(),
    progress: Callable[[str], None] | None = _say,
    summarizers: list | None = None,
) -> RunReport:
    """Summarize every document under ``paths`` into the store at ``db_path``.

    ``summarizers`` may pass ready-made method objects instead of names (they must
    offer ``name``, ``get_params``, ``fit`` and ``summarize``).
    """
    paths = [str(p) for p in paths]
    started = time.perf_counter()
    active = summarizers if summarizers is not None else build_methods(methods, budget, mmr_lambda)
    store = Store(db_path)
    config = {
        "paths": paths,
        "methods": {m.name: m.get_params() for m in active},
        "record_fields": asdict(fields),
    }
    run_id = store.begin_run("run", config)
    report = RunReport(run_id=run_id)
    status = "failed"
    try:
        documents: list[tuple[Document, Segmentation]] = []
        for item in iter_archive(paths, fields):
            if isinstance(item, IngestProblem):
                store.record_problem(run_id, item.path, item.kind, item.reason)
                if item.kind == "error":
                    report.errors.append(str(item))
                    if progress:
                        progress(f"error: {item}")
                else:
                    report.skipped_files.append(str(item))
                continue
            try:
                segmentation = split_document(item)
            except Exception as error:  # a splitter fault on one file must not stop the batch
                reason = f"could not split into sentences ({error})"
                store.record_problem(run_id, item.record_key, "error", reason)
                report.errors.append(f"{item.record_key}: {reason}")
                continue
            documents.append((item, segmentation))
        report.documents_seen = len(documents)
        if progress:
            progress(f"read {len(documents)} documents, {len(report.errors)} unreadable files")

        # Archive-wide statistics (TF-IDF's IDF) are fitted once, on every document read.
        texts = [document.text for document, _ in documents]
        for method in active:
            method.fit(texts)

        for number, (document, segmentation) in enumerate(documents, 1):
            document_id, added = store.add_document(document, segmentation, run_id)
            report.documents_added += int(added)
            row = store.db["documents"].get(document_id)
            if row["status"] == "duplicate":
                report.duplicates += 1
                continue
            for method in active:
                params_hash = param_hash(method.name, method.get_params())
                if store.has_summary(document_id, method.name, params_hash):
                    report.summaries_skipped += 1
                    continue
                try:
                    summary = method.summarize(document, segmentation)
                except Exception as error:  # one document's failure is recorded; the run goes on
                    reason = f"{method.name} failed: {error}"
                    store.record_problem(run_id, document.record_key, "error", reason)
                    report.failed_summaries.append(f"{document.record_key}: {reason}")
                    continue
                store.add_summary(document_id, run_id, summary)
                report.summaries_added += 1
            if progress and (number % 25 == 0 or number == len(documents)):
                progress(f"summarized {number}/{len(documents)} documents")
        status = "completed"
    finally:
        report.seconds = time.perf_counter() - started
        store.finish_run(run_id, status, report.counts())
        store.close()
    return report

