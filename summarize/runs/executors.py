"""Where per-document work runs: in this process, in local worker processes, or on an
existing Dask distributed cluster. Only the calling process ever writes the store.

Two kinds of work are sent out, several documents to a task (``batch``), so that the
cost of handing work over is paid once per batch:

1. *Reading* (pass 1): each file of the walk is read (parsed, decoded, reflowed) and
   its documents are split into sentences. Local worker processes read the files
   themselves: the calling process only walks the archive and stores. Dask workers
   may run on machines that do not see the archive, so there this process reads the
   files and the workers split the documents. Results come back in archive order,
   so which of two identical files is stored first, and so is the 'active' one,
   never depends on timing.
2. *Summarizing* (pass 2): each document with the fitted methods; results come back
   as they finish.

Every executor keeps a bounded number of documents in flight (about two batches per
worker), so a stop request is honoured after those few finish, and memory does not
grow with the archive. Work that never started when a stop came is cancelled.
"""

from __future__ import annotations

import gc
import os
import signal
import threading
import time
from abc import ABC, abstractmethod
from collections import deque
from collections.abc import Iterable, Iterator
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass
from pathlib import Path

from store.errors import SummarizerError
from store.records import Document, Segmentation
from summarize.reading.ingest import IngestProblem, ReadLimits, RecordFields, ingest_file
from summarize.reading.limits import DocumentTookTooLong, time_limit
from summarize.reading.sentences import SentenceSplitter
from summarize.reading.split import split_document
from summarize.reading.walk import ArchiveWalk, display_path


class ExecutorFailed(SummarizerError, RuntimeError):
    """Where the work runs failed as a whole: a worker process died, or a Dask
    scheduler is unreachable or has no workers."""


Job = tuple[int, tuple[Document, Segmentation], list[str]]
Outcome = tuple[int, Document, list[tuple[str, object]]]
# A read item and what splitting it gave: a segmentation, the splitter's failure, or
# None (a problem; or a document not split yet, which the caller splits if it is new).
ReadItem = tuple[Document | IngestProblem, Segmentation | Exception | None]

CONNECT_TIMEOUT = "10s"
PARENT_CHECK_SECONDS = 1.0
# Documents per task: enough to make handing work over cheap beside the work itself,
# few enough that a stop waits for little.
BATCH_DOCUMENTS = 8
_worker_methods: dict = {}


@dataclass(frozen=True)
class FileReading:
    """How a run reads and splits: sent with every reading task."""

    fields: RecordFields = RecordFields()
    limits: ReadLimits = ReadLimits()
    walk: ArchiveWalk | None = None
    splitter: SentenceSplitter | None = None

    def split(self, document: Document) -> Segmentation | Exception:
        return split_or_error(document, self.limits.document_seconds, self.splitter)


def summarize_document(methods: dict, document: Document, segmentation: Segmentation, names: list[str]) -> list:
    """Run the named methods on one document; a failure becomes that method's outcome
    (as a plain RuntimeError, which pickles across processes and hosts)."""
    outcomes = []
    for name in names:
        try:
            outcomes.append((name, methods[name].summarize(document, segmentation)))
        except Exception as error:
            outcomes.append((name, RuntimeError(f"{type(error).__name__}: {error}")))
    return outcomes


def summarize_batch(methods: dict, jobs: list[Job]) -> list[list]:
    return [summarize_document(methods, document, segmentation, names) for _, (document, segmentation), names in jobs]


def split_or_error(
    document: Document, seconds: float = 0.0, splitter: SentenceSplitter | None = None
) -> Segmentation | Exception:
    """The document's segmentation, or the splitter's failure as a plain RuntimeError;
    splitting longer than ``seconds`` (0: no limit) is such a failure."""
    try:
        with time_limit(seconds):
            return split_document(document, splitter)
    except DocumentTookTooLong as error:
        return RuntimeError(f"sentence splitting {error}")
    except Exception as error:  # one file's splitter fault must not stop the batch
        return RuntimeError(f"could not split into sentences ({type(error).__name__}: {error})")


def read_batch(entries: list[Path | list], reading: FileReading) -> list[list[ReadItem]]:
    """Per entry, its read items, every document split: a path is read here, a list
    holds the items of a file already read."""
    results = []
    for entry in entries:
        items = ingest_file(entry, reading.fields, reading.limits, reading.walk) if isinstance(entry, Path) else entry
        results.append([(item, reading.split(item) if isinstance(item, Document) else None) for item in items])
    return results


def _init_worker(methods: list, parent: int) -> None:
    global _worker_methods
    # What the worker inherited from the run (forked) stays shared: the collector
    # never visits it, so never writes to (and copies) its pages.
    gc.freeze()
    _worker_methods = {method.name: method for method in methods}
    # The run decides when to stop (a Ctrl-C reaches the whole process group): a
    # worker finishes its batch and is then shut down with the pool.
    for signum in (signal.SIGINT, signal.SIGTERM):
        signal.signal(signum, signal.SIG_IGN)
    threading.Thread(target=_exit_with_parent, args=(parent,), daemon=True).start()


def _exit_with_parent(parent: int) -> None:
    """A worker whose run was killed (kill -9 gives it no chance to stop its pool)
    would otherwise wait for work forever."""
    while os.getppid() == parent:
        time.sleep(PARENT_CHECK_SECONDS)
    os._exit(1)


def _summarize_in_worker(jobs: list[Job]) -> list[list]:
    return summarize_batch(_worker_methods, jobs)


class InProcessExecutor:
    results_waiting = 0  # each result is written as soon as it is computed

    def __init__(self, methods: list):
        self.methods = {method.name: method for method in methods}

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        pass

    def read_archive(
        self, entries: Iterable[Path | IngestProblem], stop, reading: FileReading
    ) -> Iterator[tuple[Path | IngestProblem, list[ReadItem]]]:
        """Each entry of the walk with its read items, in archive order; documents are
        left unsplit (the caller splits only the new ones)."""
        for entry in entries:
            if stop.reason():
                return
            if isinstance(entry, IngestProblem):
                yield entry, [(entry, None)]
            else:
                yield entry, [(item, None) for item in ingest_file(entry, reading.fields, reading.limits, reading.walk)]

    def map_documents(self, jobs: Iterable[Job], stop) -> Iterator[Outcome]:
        for document_id, (document, segmentation), names in jobs:
            if stop.reason():
                return
            yield document_id, document, summarize_document(self.methods, document, segmentation, names)


class _WindowedExecutor(ABC):
    """Shared submit/collect loops: at most ``window`` tasks of up to ``batch``
    documents in flight."""

    window = 4
    batch = BATCH_DOCUMENTS
    # Documents whose results are finished but not yet handed over, counted at each hand-over.
    results_waiting = 0
    # Whether the workers read the archive's files themselves (they see the same disk).
    reads_files = True

    @abstractmethod
    def _submit_reading(self, entries: list[Path | list], reading: FileReading):
        """Start reading and splitting a batch; return a future of :func:`read_batch`'s result."""

    @abstractmethod
    def _submit(self, jobs: list[Job]):
        """Start summarizing a batch of documents; return a future of one outcome list per job."""

    @abstractmethod
    def _wait_any(self, futures: set) -> set:
        """Block until at least one future is done; return the done ones."""

    def _cancel_unstarted(self, futures: list) -> list:
        """Cancel what has not started; return the futures still to wait for."""
        return [future for future in futures if not future.cancel()]

    @staticmethod
    def _result(future, failure):
        """The future's result; ``failure(error)`` when the worker or the transport
        failed (not the work itself, whose errors come back as results)."""
        try:
            return future.result()
        except BrokenProcessPool:
            raise ExecutorFailed("a worker process died (out of memory or killed); rerun to continue") from None
        except Exception as error:
            return failure(RuntimeError(f"worker failed: {type(error).__name__}: {error}"))

    def read_archive(
        self, entries: Iterable[Path | IngestProblem], stop, reading: FileReading
    ) -> Iterator[tuple[Path | IngestProblem, list[ReadItem]]]:
        """Each entry of the walk with its read items, in archive order, every
        document split. Entries sent out when a stop came and never started are
        dropped (the caller counts them as not read)."""
        # Each slot holds, in order, either a problem of the walk or a task of entries.
        slots: deque = deque()
        entries = iter(entries)
        exhausted = False
        while True:
            while not exhausted and sum(kind == "task" for kind, _, _ in slots) < self.window and not stop.reason():
                batch: list = []
                while len(batch) < self.batch:
                    entry = next(entries, None)
                    if entry is None:
                        exhausted = True
                        break
                    if isinstance(entry, IngestProblem):
                        if batch:
                            slots.append(("task", self._submit_reading(self._sent(batch, reading), reading), batch))
                            batch = []
                        slots.append(("ready", None, entry))
                        continue
                    batch.append(entry)
                if batch:
                    slots.append(("task", self._submit_reading(self._sent(batch, reading), reading), batch))
            if stop.reason():
                tasks = [future for kind, future, _ in slots if kind == "task"]
                still = set(self._cancel_unstarted(tasks))
                slots = deque(slot for slot in slots if slot[0] == "ready" or slot[1] in still)
            if not slots:
                return
            kind, future, batch = slots.popleft()
            if kind == "ready":
                yield batch, [(batch, None)]
                continue
            self.results_waiting = sum(
                len(waiting) for kind_, other, waiting in slots if kind_ == "task" and other.done()
            )
            results = self._result(future, lambda error, batch=batch: [[_failed_reading(entry, error)] for entry in batch])
            yield from zip(batch, results)

    def _sent(self, batch: list[Path], reading: FileReading) -> list:
        """What goes out for a batch of files: the paths, or (for workers that do not
        see the archive) each file's items as this process read them."""
        if self.reads_files:
            return batch
        return [ingest_file(path, reading.fields, reading.limits, reading.walk) for path in batch]

    def map_documents(self, jobs: Iterable[Job], stop) -> Iterator[Outcome]:
        in_flight: dict = {}
        jobs = iter(jobs)
        exhausted = False
        while True:
            while not exhausted and len(in_flight) < self.window and not stop.reason():
                batch = []
                while len(batch) < self.batch:
                    job = next(jobs, None)
                    if job is None:
                        exhausted = True
                        break
                    batch.append(job)
                if batch:
                    in_flight[self._submit(batch)] = batch
            if stop.reason():
                in_flight = {future: in_flight[future] for future in self._cancel_unstarted(list(in_flight))}
            if not in_flight:
                return
            for future in self._wait_any(set(in_flight)):
                batch = in_flight.pop(future)
                self.results_waiting = sum(len(other) for f, other in in_flight.items() if f.done())
                outcomes = self._result(
                    future, lambda error, batch=batch: [[(name, error) for name in names] for _, _, names in batch]
                )
                for (document_id, (document, _), _), outcome in zip(batch, outcomes):
                    yield document_id, document, outcome


def _failed_reading(path: Path, error: Exception) -> ReadItem:
    """What a batch lost to a failed worker or transport gives for one of its files."""
    return IngestProblem(display_path(path), str(error), "error"), None


class ProcessExecutor(_WindowedExecutor):
    """Local worker processes; the fitted methods are sent to each worker once."""

    def __init__(self, methods: list, workers: int):
        self.methods = methods
        self.workers = workers
        self.window = 2 * workers

    def __enter__(self):
        # Workers are forked from this process and share its pages until either side
        # writes to them. This process's own collections would write to every object
        # it holds (the collector's bookkeeping lives in each object), copying those
        # pages for the workers: frozen objects are never visited. They are unfrozen
        # when the pool is gone. (gc.freeze's documented use before fork().)
        gc.freeze()
        try:
            self.pool = ProcessPoolExecutor(
                max_workers=self.workers, initializer=_init_worker, initargs=(self.methods, os.getpid())
            )
        except BaseException:
            gc.unfreeze()
            raise
        return self

    def __exit__(self, *exc) -> None:
        self.pool.shutdown(wait=True, cancel_futures=True)
        gc.unfreeze()

    def _submit_reading(self, entries, reading):
        return self.pool.submit(read_batch, entries, reading)

    def _submit(self, jobs):
        return self.pool.submit(_summarize_in_worker, jobs)

    def _wait_any(self, futures):
        return wait(futures, return_when=FIRST_COMPLETED).done


def connect_scheduler(address: str):
    """A Dask client for the scheduler at ``address``, or a one-line :class:`ExecutorFailed`."""
    from distributed import Client

    try:
        return Client(address, timeout=CONNECT_TIMEOUT)
    except OSError as error:
        raise ExecutorFailed(f"cannot reach the Dask scheduler at {address}: {error}") from None


def check_scheduler(address: str) -> None:
    """Fail before a long run starts rather than after reading the whole archive."""
    connect_scheduler(address).close()


class DaskExecutor(_WindowedExecutor):
    """An existing Dask distributed cluster at ``address`` (``tcp://host:8786``).

    The fitted methods are scattered to every worker once; documents are submitted
    a window of batches at a time; results come back to this process, which alone
    writes. The workers need not see the archive: this process reads the files.
    """

    reads_files = False

    def __init__(self, methods: list, address: str):
        self.methods = methods
        self.address = address

    def __enter__(self):
        self.client = connect_scheduler(self.address)
        try:
            self.client.wait_for_workers(1, timeout=60)
        except TimeoutError:
            self.client.close()
            raise ExecutorFailed(f"the Dask scheduler at {self.address} has no workers") from None
        # Two batches per worker thread: every thread stays busy, little waits at a stop.
        self.window = max(2, 2 * sum(self.client.nthreads().values()))
        if self.methods:
            by_name = {method.name: method for method in self.methods}
            [self.methods_future] = self.client.scatter([by_name], broadcast=True)
        return self

    def __exit__(self, *exc) -> None:
        self.client.close()

    def _cancel_unstarted(self, futures: list) -> list:
        # Dask does not say which tasks have started; the window holds only about two
        # batches per worker thread, so they are all finished and kept.
        return futures

    def _submit_reading(self, entries, reading):
        return self.client.submit(read_batch, entries, reading, pure=False)

    def _submit(self, jobs):
        return self.client.submit(summarize_batch, self.methods_future, jobs, pure=False)

    def _wait_any(self, futures):
        from distributed import wait as dask_wait

        return dask_wait(list(futures), return_when="FIRST_COMPLETED").done


def make_executor(methods: list, workers: int = 1, scheduler: str | None = None):
    """Pick the executor for a run's ``--workers`` / ``--scheduler`` settings
    (``methods`` may be empty when only reading is sent out)."""
    if scheduler:
        return DaskExecutor(methods, scheduler)
    if workers > 1:
        return ProcessExecutor(methods, workers)
    return InProcessExecutor(methods)
