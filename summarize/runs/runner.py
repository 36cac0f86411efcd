"""The batch runner: ingest an archive, split, summarize with each method, store.

    report = run_archive(["archive/"], "store.sqlite", methods=["lead", "tfidf"])

Two passes, one direction:

1. *Read*: every file is read, and split and stored unless the same record with the
   same content hash is already stored; splitting runs wherever the summaries will
   (here, worker processes, Dask). Unreadable files are recorded with their reason;
   stored records whose file has gone are marked ``missing``, never deleted.
2. *Summarize*: archive-wide statistics are fitted on the documents read (TF-IDF's
   IDF), then every (document, method, parameter hash) not yet stored is computed —
   here, in worker processes, or on a Dask cluster — and written by this process
   alone.

Both passes commit documents in groups (up to ``group_documents`` documents or
``group_seconds`` seconds per transaction, whichever comes first), so an interrupted
run loses at most the group in flight, and a rerun does only what is missing. Each
pass reports the writer's load (busy share, results waiting for it) in its progress
output and in the run record's counts (``writer``). The run stops cleanly between
documents at its time budget or on SIGINT/SIGTERM, and says how much remains.
"""

from __future__ import annotations

import logging
import os
import time
from array import array
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import asdict, dataclass, field
from itertools import groupby
from pathlib import Path

from store.id_sets import IdSet
from store.lock import describe_holder
from store.records import Document, param_hash
from store.runs import recorded_run
from store.store import Store
from store.write_groups import DEFAULT_GROUP_DOCUMENTS, DEFAULT_GROUP_SECONDS
from summarize.methods.budget import Budget
from summarize.methods.contract import BatchCapable, NeedsLoading, ResolvedAtRunTime, SkipsDocuments
from summarize.methods.registry import DEFAULT_BUDGET, RUNNABLE, MethodSettings, build_method, check_names
from summarize.reading.exclusions import ArchiveExclusions
from summarize.reading.ingest import ArchiveFiles, IngestProblem, ReadLimits, RecordFields, archive_files
from summarize.reading.sentences import SentenceSplitter
from summarize.reading.split import DEFAULT_SPLITTER
from summarize.runs.executors import FileReading, check_scheduler, make_executor
from summarize.runs.known_failures import FailureSorter
from summarize.runs.pending import PendingSummaries
from summarize.runs.progress import ProgressCallback, ProgressTracker
from summarize.runs.remaining import ReadingTracker, documents_remaining, file_of
from summarize.runs.stopping import StopConditions
from summarize.runs.writer_load import WriterLoad

# Exit statuses of `summarize run` beyond an error's own (the README's table).
EXIT_OK = 0
EXIT_SOME_FILES_FAILED = 3
EXIT_STOPPED_EARLY = 4


@dataclass
class RunReport:
    """What a run did, for the command line and for the ``runs.counts`` column."""

    run_id: int
    documents_seen: int = 0
    documents_added: int = 0
    duplicates: int = 0
    missing: int = 0
    summaries_added: int = 0
    summaries_skipped: int = 0
    documents_remaining: int = 0
    files_unread: int = 0
    unread: list[str] = field(default_factory=list)
    stop_reason: str | None = None
    errors: list[str] = field(default_factory=list)
    skipped_files: list[str] = field(default_factory=list)
    failed_summaries: list[str] = field(default_factory=list)
    known_failures: list[str] = field(default_factory=list)
    strict_exit: bool = False
    warnings: list[str] = field(default_factory=list)
    references_changed: list[str] = field(default_factory=list)
    seconds: float = 0.0
    documents_summarized: int = 0
    writer: dict = field(default_factory=dict)

    @property
    def exit_status(self) -> int:
        """``errors`` and ``failed_summaries`` are new failures; known ones (unchanged
        content that failed before) count only for a strict run."""
        if self.stop_reason:
            return EXIT_STOPPED_EARLY
        failed = self.errors or self.failed_summaries or (self.strict_exit and self.known_failures)
        return EXIT_SOME_FILES_FAILED if failed else EXIT_OK

    def counts(self) -> dict:
        return {
            "documents_seen": self.documents_seen,
            "documents_added": self.documents_added,
            "duplicates": self.duplicates,
            "missing": self.missing,
            "summaries_added": self.summaries_added,
            "summaries_skipped": self.summaries_skipped,
            "documents_summarized": self.documents_summarized,
            "documents_remaining": self.documents_remaining,
            "files_unread": self.files_unread,
            "files_failed": len(self.errors),
            "files_skipped": len(self.skipped_files),
            "summaries_failed": len(self.failed_summaries),
            "known_failures": len(self.known_failures),
            "warnings": len(self.warnings),
            "references_changed": len(self.references_changed),
            "stop_reason": self.stop_reason,
            "seconds": round(self.seconds, 3),
            "documents_per_second": round(self.documents_summarized / self.seconds, 3) if self.seconds else None,
            "writer": self.writer,
        }


def build_methods(
    names: Iterable[str],
    budget: Budget = DEFAULT_BUDGET,
    mmr_lambda: float | None = None,
    seq2seq_options: dict | None = None,
) -> list:
    """The named methods (from the registry) with a shared budget; ``seq2seq`` takes
    its model and generation settings from ``seq2seq_options``."""
    settings = MethodSettings(budget=budget, mmr_lambda=mmr_lambda, seq2seq=seq2seq_options or {})
    return [build_method(name, settings, usable=RUNNABLE) for name in check_names(list(names), RUNNABLE)]


def _under(record_key: str, roots: list[str]) -> bool:
    path = record_key.split("#", 1)[0]
    return any(path == root or path.startswith(root.rstrip(os.sep) + os.sep) for root in roots)


def _read_archive(
    store, run_id, paths, fields, report, progress, stop, workers, scheduler, reading, splitter, grouping
) -> array:
    """Pass 1. Returns the ids of the current, non-duplicate documents seen; a stopped
    pass sets ``report.unread`` to the files it did not read to the end.

    This process walks the archive and writes the store; reading the files and
    splitting their documents into sentences go to the executor (Dask workers get
    documents this process read), and come back in archive order.
    """
    # Held per document: 8 bytes in document_ids, one bit in seen. Everything else
    # is per file in flight, or per failure (few), so memory does not grow with the archive.
    seen = IdSet()
    split_failed: set[str] = set()
    files_failed: set[str] = set()
    unlisted: list[str] = []
    document_ids = array("q")
    tracker = ReadingTracker()
    failures = FailureSorter(store, run_id, report, progress)

    def counted(document_id: int, added: bool, status: str) -> None:
        seen.add(document_id)
        report.documents_seen += 1
        report.documents_added += int(added)
        if status == "duplicate":
            report.duplicates += 1
        else:
            document_ids.append(document_id)

    def problem(item: IngestProblem) -> None:
        if item.unlisted:
            unlisted.append(item.path)
        if item.kind == "error":
            files_failed.add(file_of(item.path))
            failures.file_failed(item.path, item.reason)
        elif item.kind == "warning":
            # The document itself is read; the warning is told, the exit status unchanged.
            store.runs.record_problem(run_id, item.path, item.kind, item.reason)
            report.warnings.append(str(item))
            progress.message(f"warning: {item}", logging.WARNING)
        else:
            store.runs.record_problem(run_id, item.path, item.kind, item.reason)
            report.skipped_files.append(str(item))

    def known(document: Document) -> None:
        document_id, added, status = store.add_document(document, None, run_id)
        counted(document_id, added, status)
        if status != "duplicate":
            change = store.refresh_reference(document_id, document, run_id)
            if change:
                report.references_changed.append(f"{document.record_key}: reference summary {change}")
                progress.message(f"{document.record_key}: reference summary {change}; earlier scores kept as history")

    files = ArchiveFiles(paths, reading.get("follow_links_outside", False), reading.get("exclude", ()))
    file_reading = FileReading(fields, reading["limits"], files.walk, splitter)

    def entries() -> Iterator:
        for entry in files:
            if not isinstance(entry, IngestProblem):
                tracker.handed_out()
            yield entry
        tracker.walk_ended()

    def store_item(item: Document | IngestProblem, segmentation) -> None:
        if isinstance(item, IngestProblem):
            problem(item)
        elif segmentation is None:
            known(item)
        elif isinstance(segmentation, Exception):
            split_failed.add(item.record_key)
            failures.document_failed(item.record_key, item.sha256, str(segmentation))
        else:
            counted(*store.add_document(item, segmentation, run_id))
        tracker.done(item.path)
        groups.document_written()

    progress.start(None, "files read")
    load = WriterLoad()
    load.start()
    with make_executor([], workers=workers, scheduler=scheduler) as executor, store.write_groups(**grouping) as groups:
        for entry, read in executor.read_archive(entries(), stop, file_reading):
            if not isinstance(entry, IngestProblem):
                tracker.returned()
            # A file's items come together (its documents and problems), so a file whose
            # every item is stored or recorded is known to be read to its end.
            for file, items in groupby(read, key=lambda pair: file_of(pair[0].path)):
                items = list(items)
                tracker.starting(file, len(items))
                if any(isinstance(item, Document) for item, _ in items):
                    progress.advance()
                for item, segmentation in items:
                    if isinstance(item, Document):
                        if store.find_document(item.record_key, item.sha256) is not None:
                            segmentation = None  # stored before: nothing to split or store again
                        elif segmentation is None:
                            if stop.reason():
                                break  # read here and not split yet: the file stays unread
                            segmentation = file_reading.split(item)
                    with load.writing(executor.results_waiting):
                        store_item(item, segmentation)
                    if load.due():
                        progress.message(load.line("reading"))
    load.stop()
    report.writer["reading"] = {**load.counts(), "groups": groups.groups_committed}
    progress.close()
    if report.documents_added:
        progress.message(load.line("reading"))
    # An executor that stops early leaves this walk unfinished without a word: only
    # a walk that reached its end, with nothing still out, has read the archive.
    if not tracker.everything_read:
        follow = reading.get("follow_links_outside", False)
        report.unread = tracker.unread(archive_files(paths, follow, reading.get("exclude", ())))
        report.files_unread = len(report.unread)
        return document_ids
    roots = [os.path.abspath(p) for p in paths]
    excluded = ArchiveExclusions.load(roots, reading.get("exclude", ())).excludes
    gone = []
    for stored in store.documents.active():
        # A file that is still there but failed to read (or split) this time keeps its
        # last good version; a document under a folder that could not be listed (or an
        # absent root) may well be there; an excluded file is left as it was: nothing
        # says it is gone.
        key = stored.record_key
        if stored.id in seen or key in split_failed or file_of(key) in files_failed or not _under(key, roots):
            continue
        if not _under(key, unlisted) and not excluded(file_of(key)):
            gone.append(stored.id)
    for document_id in gone:
        store.mark_missing(document_id)
        report.missing += 1
    return document_ids


def run_archive(
    paths: Iterable[str | Path],
    db_path: str,
    methods: Iterable[str] = ("lead", "tfidf", "textrank"),
    budget: Budget = DEFAULT_BUDGET,
    mmr_lambda: float | None = None,
    fields: RecordFields = RecordFields(),
    seq2seq_options: dict | None = None,
    summarizers: list | None = None,
    workers: int = 1,
    scheduler: str | None = None,
    stop: StopConditions | None = None,
    lock_wait_seconds: float = 0.0,
    progress: ProgressCallback | None = None,
    config_extra: dict | None = None,
    limits: ReadLimits = ReadLimits(),
    follow_links_outside: bool = False,
    exclude: Sequence[str] = (),
    strict_exit: bool = False,
    splitter: SentenceSplitter | None = None,
    group_documents: int = DEFAULT_GROUP_DOCUMENTS,
    group_seconds: float = DEFAULT_GROUP_SECONDS,
) -> RunReport:
    """Summarize every document under ``paths`` into the store at ``db_path``.

    ``summarizers`` may pass ready-made method objects instead of names (they must
    offer ``name``, ``get_params``, ``fit`` and ``summarize``). ``limits`` bound what
    one file may cost (``summarize.reading.limits``); links leading out of ``paths``
    are followed only with ``follow_links_outside``; ``exclude`` patterns leave paths
    out (``summarize.reading.exclusions``); ``strict_exit`` makes known failures count
    in the exit status as new ones do; ``splitter`` cuts new documents into
    sentences (default: the report abbreviations, nothing added); ``group_documents``
    and ``group_seconds`` bound each transaction of stored documents. Raises
    :class:`~store.lock.StoreLocked` when another run holds the store.
    """
    paths = [str(p) for p in paths]
    started = time.perf_counter()
    progress = ProgressTracker(progress)
    stop = stop or StopConditions()
    active = summarizers if summarizers is not None else build_methods(methods, budget, mmr_lambda, seq2seq_options)
    # A model that cannot be loaded stops the run here, before the store is touched.
    for method in active:
        if isinstance(method, NeedsLoading):
            method.load()
    if scheduler:
        check_scheduler(scheduler)
    config = {
        "paths": paths,
        "methods": {m.name: m.get_params() for m in active},
        "runtime": {m.name: m.runtime_settings() for m in active if isinstance(m, NeedsLoading)},
        "record_fields": asdict(fields),
        "sentences": (splitter or DEFAULT_SPLITTER).get_params(),
        "read_limits": asdict(limits),
        "follow_links_outside": follow_links_outside,
        "workers": workers,
        "scheduler": scheduler,
        "deadline": stop.deadline().isoformat(timespec="minutes") if stop.deadline() else None,
        "exclude": list(exclude),
        "strict_exit": strict_exit,
        "write_groups": {"documents": group_documents, "seconds": group_seconds},
        **(config_extra or {}),
    }
    with recorded_run(db_path, "run", config, lock_wait_seconds, progress.message) as run, stop:
        if run.lock.stale_holder:
            progress.message(
                f"took over the lock left by {describe_holder(run.lock.stale_holder)}, which is no longer running"
            )
        if run.earlier_interrupted:
            progress.message(
                f"{run.earlier_interrupted} earlier run(s) had been interrupted; doing what they left undone"
            )
        store, run_id = run.store, run.run_id
        report = RunReport(run_id=run_id, strict_exit=strict_exit)
        try:
            reading = {"limits": limits, "follow_links_outside": follow_links_outside, "exclude": exclude}
            grouping = {"max_documents": group_documents, "max_seconds": group_seconds}
            read_ids = _read_archive(
                store, run_id, paths, fields, report, progress, stop, workers, scheduler, reading, splitter, grouping
            )
            # A copy read before its original was made the original's duplicate since.
            document_ids = store.still_active(read_ids)
            report.duplicates += len(read_ids) - len(document_ids)
            progress.message(
                f"read {report.documents_seen} documents ({report.documents_added} new, "
                f"{report.duplicates} duplicates), {len(report.errors)} unreadable files"
            )
            if not stop.reason():
                active = _resolve_run_time_methods(store, run_id, active, config, progress)
            if stop.reason():
                report.documents_remaining = documents_remaining(
                    _pending(store, document_ids, active, report),
                    report.unread,
                    store.documents.current() if report.unread else (),
                    store.failures.failed_files() if report.unread else set(),
                    lambda ids: _pending(store, ids, active),
                )
            else:
                _summarize_all(
                    store, run_id, document_ids, active, report, progress, stop, workers, scheduler, grouping
                )
            report.stop_reason = stop.reason()
            if report.stop_reason:
                unread = (
                    f" (with those of {report.files_unread} files not read yet, as the store last held them)"
                    if report.files_unread
                    else ""
                )
                progress.message(
                    f"{report.stop_reason}: {report.documents_remaining} documents remain to summarize{unread}; "
                    "rerun the same command to finish them"
                )
            run.status = "stopped" if report.stop_reason else "completed"
        finally:
            report.seconds = time.perf_counter() - started
            run.counts = report.counts()
            progress.close()
    return report


def _resolve_run_time_methods(store: Store, run_id: int, active: list, config: dict, progress: ProgressTracker) -> list:
    """Methods that depend on the store (a trained model, a choice by held-out ROUGE)
    become concrete once the archive is read; the run's configuration records what
    each became and why."""
    deferred = [method for method in active if isinstance(method, ResolvedAtRunTime)]
    if not deferred:
        return active
    resolved: list = []
    for method in active:
        concrete = method.resolve(store, run_id, progress.message) if isinstance(method, ResolvedAtRunTime) else method
        if not any(m.name == concrete.name and m.get_params() == concrete.get_params() for m in resolved):
            resolved.append(concrete)
    config["decisions"] = {method.name: method.decision for method in deferred}
    config["methods"] = {method.name: method.get_params() for method in resolved}
    store.runs.update_config(run_id, config)
    return resolved


def _pending(store: Store, document_ids: Iterable[int], active: list, report: RunReport | None = None) -> PendingSummaries:
    """Method names still to run, per document (one query per method); counts the
    summaries already stored as skipped in ``report``, when given."""
    done = {
        method.name: store.documents_with_summary(method.name, param_hash(method.name, method.get_params()))
        for method in active
    }

    def lacking(document_id: int) -> frozenset[str]:
        names = frozenset(
            method.name
            for method in active
            if document_id not in done[method.name]
            and not (isinstance(method, SkipsDocuments) and document_id in method.skipped_document_ids)
        )
        if report is not None:
            report.summaries_skipped += len(active) - len(names)
        return names

    return PendingSummaries((document_id, lacking(document_id)) for document_id in document_ids)


def _summarize_all(store, run_id, document_ids, active, report, progress, stop, workers, scheduler, grouping) -> None:
    """Pass 2: fit archive statistics, then compute and store what is missing."""
    todo = _pending(store, document_ids, active, report)
    failures = FailureSorter(store, run_id, report, progress)
    if not todo:
        progress.message("nothing to summarize: every summary is already stored")
        return
    for method in active:
        method.fit(store.documents.texts(document_ids))
    # Methods that generate in batches (seq2seq) run in this process, after the others.
    batched = [m for m in active if isinstance(m, BatchCapable)]
    per_document = [m for m in active if not isinstance(m, BatchCapable)]
    per_document_names = {m.name for m in per_document}
    progress.start(len(todo), "documents summarized")

    def finished(document_id: int, names: set[str]) -> None:
        if todo.finish(document_id, names):
            report.documents_summarized += 1
            progress.advance()

    # Read from the store as workers take them: only the documents in flight are in memory.
    jobs = (
        (document_id, store.documents.load(document_id), sorted(todo.names(document_id) & per_document_names))
        for document_id in document_ids
        if todo.names(document_id) & per_document_names
    )
    load = WriterLoad()
    load.start()
    with make_executor(per_document, workers=workers, scheduler=scheduler) as executor, store.write_groups(**grouping) as groups:
        for document_id, document, outcomes in executor.map_documents(jobs, stop):
            with load.writing(executor.results_waiting):
                _store_outcomes(store, run_id, document_id, document, outcomes, report, failures)
                groups.document_written()
            finished(document_id, {name for name, _ in outcomes})
            if load.due():
                progress.message(load.line("summarizing"))
    load.stop()
    report.writer["summarizing"] = {**load.counts(), "groups": groups.groups_committed}
    for method in batched:
        wanted = todo.wanting(method.name)
        size = method.batch_documents
        for start in range(0, len(wanted), size):
            if stop.reason():
                break
            chunk = wanted[start : start + size]
            loaded = [store.documents.load(document_id) for document_id in chunk]
            for document_id, (document, _), outcome in zip(chunk, loaded, method.summarize_many(loaded)):
                _store_outcomes(store, run_id, document_id, document, [(method.name, outcome)], report, failures)
                finished(document_id, {method.name})
    progress.close()
    if load.samples:
        progress.message(load.line("summarizing"))
    report.documents_remaining = len(todo)


def _store_outcomes(store, run_id, document_id, document, outcomes, report, failures: FailureSorter) -> None:
    """One nested transaction for all of a document's new summaries (and failures),
    inside the group being written."""
    with store.transaction():
        for method_name, outcome in outcomes:
            if isinstance(outcome, Exception):
                reason = f"{method_name} failed: {outcome}"
                failures.document_failed(document.record_key, document.sha256, reason, method_name)
                continue
            store.add_summary(document_id, run_id, outcome)
            report.summaries_added += 1
