"""Where per-document work runs: in this process, in local worker processes, or on an
existing Dask distributed cluster. Only the calling process ever writes the store.

Two kinds of work are sent out: splitting a new document into sentences (pass 1;
results come back in archive order, so which of two identical files is stored first,
and so is the 'active' one, never depends on timing) and summarizing a document with
the fitted methods (pass 2; results come back as they finish).

Every executor keeps a bounded number of documents in flight (about two per worker),
so a stop request is honoured after those few finish, and memory does not grow with
the archive. Work that never started when a stop came is cancelled.
"""

from __future__ import annotations

import os
import signal
import threading
import time
from abc import ABC, abstractmethod
from collections import deque
from collections.abc import Iterable, Iterator
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool

from store.errors import SummarizerError
from store.records import Document, Segmentation
from summarize.reading.limits import DocumentTookTooLong, time_limit
from summarize.reading.sentences import SentenceSplitter
from summarize.reading.split import split_document


class ExecutorFailed(SummarizerError, RuntimeError):
    """Where the work runs failed as a whole: a worker process died, or a Dask
    scheduler is unreachable or has no workers."""


Job = tuple[int, tuple[Document, Segmentation], list[str]]
Outcome = tuple[int, Document, list[tuple[str, object]]]

CONNECT_TIMEOUT = "10s"
PARENT_CHECK_SECONDS = 1.0
_worker_methods: dict = {}


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


def _init_worker(methods: list, parent: int) -> None:
    global _worker_methods
    _worker_methods = {method.name: method for method in methods}
    # The run decides when to stop (a Ctrl-C reaches the whole process group): a
    # worker finishes its document and is then shut down with the pool.
    for signum in (signal.SIGINT, signal.SIGTERM):
        signal.signal(signum, signal.SIG_IGN)
    threading.Thread(target=_exit_with_parent, args=(parent,), daemon=True).start()


def _exit_with_parent(parent: int) -> None:
    """A worker whose run was killed (kill -9 gives it no chance to stop its pool)
    would otherwise wait for work forever."""
    while os.getppid() == parent:
        time.sleep(PARENT_CHECK_SECONDS)
    os._exit(1)


def _summarize_in_worker(document: Document, segmentation: Segmentation, names: list[str]) -> list:
    return summarize_document(_worker_methods, document, segmentation, names)


class InProcessExecutor:
    document_seconds = 0.0
    results_waiting = 0  # each result is written as soon as it is computed

    def __init__(self, methods: list):
        self.methods = {method.name: method for method in methods}

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        pass

    def split_documents(
        self, documents: Iterable[Document], stop, splitter: SentenceSplitter | None = None
    ) -> Iterator[tuple[Document, object]]:
        for document in documents:
            if stop.reason():
                return
            yield document, split_or_error(document, self.document_seconds, splitter)

    def map_documents(self, jobs: Iterable[Job], stop) -> Iterator[Outcome]:
        for document_id, (document, segmentation), names in jobs:
            if stop.reason():
                return
            yield document_id, document, summarize_document(self.methods, document, segmentation, names)


class _WindowedExecutor(ABC):
    """Shared submit/collect loops: at most ``window`` documents in flight."""

    window = 4
    document_seconds = 0.0
    # Results already finished but not yet handed over, counted at each hand-over.
    results_waiting = 0

    @abstractmethod
    def _submit_split(self, document: Document, splitter: SentenceSplitter | None):
        """Start splitting one document; return a future."""

    @abstractmethod
    def _submit(self, document: Document, segmentation: Segmentation, names: list[str]):
        """Start summarizing one document; return a future."""

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

    def split_documents(
        self, documents: Iterable[Document], stop, splitter: SentenceSplitter | None = None
    ) -> Iterator[tuple[Document, object]]:
        in_flight: deque = deque()
        documents = iter(documents)
        exhausted = False
        while True:
            while not exhausted and len(in_flight) < self.window and not stop.reason():
                document = next(documents, None)
                if document is None:
                    exhausted = True
                    break
                in_flight.append((document, self._submit_split(document, splitter)))
            if stop.reason():
                still = set(self._cancel_unstarted([future for _, future in in_flight]))
                in_flight = deque((document, future) for document, future in in_flight if future in still)
            if not in_flight:
                return
            document, future = in_flight.popleft()
            self.results_waiting = sum(other.done() for _, other in in_flight)
            yield document, self._result(future, lambda error: error)

    def map_documents(self, jobs: Iterable[Job], stop) -> Iterator[Outcome]:
        in_flight: dict = {}
        jobs = iter(jobs)
        exhausted = False
        while True:
            while not exhausted and len(in_flight) < self.window and not stop.reason():
                job = next(jobs, None)
                if job is None:
                    exhausted = True
                    break
                document_id, (document, segmentation), names = job
                in_flight[self._submit(document, segmentation, names)] = (document_id, document, names)
            if stop.reason():
                in_flight = {future: in_flight[future] for future in self._cancel_unstarted(list(in_flight))}
            if not in_flight:
                return
            for future in self._wait_any(set(in_flight)):
                document_id, document, names = in_flight.pop(future)
                self.results_waiting = sum(other.done() for other in in_flight)
                yield document_id, document, self._result(future, lambda error, names=names: [(name, error) for name in names])


class ProcessExecutor(_WindowedExecutor):
    """Local worker processes; the fitted methods are sent to each worker once."""

    def __init__(self, methods: list, workers: int):
        self.methods = methods
        self.workers = workers
        self.window = 2 * workers

    def __enter__(self):
        self.pool = ProcessPoolExecutor(
            max_workers=self.workers, initializer=_init_worker, initargs=(self.methods, os.getpid())
        )
        return self

    def __exit__(self, *exc) -> None:
        self.pool.shutdown(wait=True, cancel_futures=True)

    def _submit_split(self, document, splitter):
        return self.pool.submit(split_or_error, document, self.document_seconds, splitter)

    def _submit(self, document, segmentation, names):
        return self.pool.submit(_summarize_in_worker, document, segmentation, names)

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
    a window at a time; results come back to this process, which alone writes.
    """

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
        # Two documents per worker thread: every thread stays busy, little waits at a stop.
        self.window = max(2, 2 * sum(self.client.nthreads().values()))
        if self.methods:
            by_name = {method.name: method for method in self.methods}
            [self.methods_future] = self.client.scatter([by_name], broadcast=True)
        return self

    def __exit__(self, *exc) -> None:
        self.client.close()

    def _cancel_unstarted(self, futures: list) -> list:
        # Dask does not say which tasks have started; the window holds only about two
        # documents per worker thread, so they are all finished and kept.
        return futures

    def _submit_split(self, document, splitter):
        return self.client.submit(split_or_error, document, self.document_seconds, splitter, pure=False)

    def _submit(self, document, segmentation, names):
        return self.client.submit(summarize_document, self.methods_future, document, segmentation, names, pure=False)

    def _wait_any(self, futures):
        from distributed import wait as dask_wait

        return dask_wait(list(futures), return_when="FIRST_COMPLETED").done


def make_executor(methods: list, workers: int = 1, scheduler: str | None = None, document_seconds: float = 0.0):
    """Pick the executor for a run's ``--workers`` / ``--scheduler`` settings
    (``methods`` may be empty when only splitting is sent out). Splitting one
    document is limited to ``document_seconds`` (0: no limit)."""
    if scheduler:
        executor = DaskExecutor(methods, scheduler)
    elif workers > 1:
        executor = ProcessExecutor(methods, workers)
    else:
        executor = InProcessExecutor(methods)
    executor.document_seconds = document_seconds
    return executor
