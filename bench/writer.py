"""The single writer's ceiling beside one worker's rate, side by side in one run.

    python -m bench.writer                     # 1,000 documents
    python -m bench.writer --documents 2000

Every result, from local workers or a Dask cluster, is stored by one process, so the
documents per second that process can store is the ceiling of any run. Here it is
measured with precomputed results: the archive is read, split and summarized (lead,
TF-IDF, TextRank) before the clock starts; the timed part is only the writes a run
makes (document, sentences, three summaries with their sentences and source spans),
through the same ``Store`` calls, into an empty store. It is timed with documents
committed one per transaction and in groups of several sizes, beside whole runs with
one and with two worker processes (read, split, summarize, store) on the same archive.
"""

from __future__ import annotations

import argparse
import gc
import tempfile
import time
from pathlib import Path

from bench.archives import build_archive, demo_sentences
from bench.operations import DEMO_ARCHIVE, TRIES, load, table, timed_run
from store.records import Document
from store.store import Store
from summarize.reading.ingest import iter_archive
from summarize.reading.split import split_document
from summarize.runs.runner import build_methods

METHODS = ("lead", "tfidf", "textrank")
GROUP_SIZES = (1, 20, 200)


def precomputed(archive: Path) -> list:
    """(document, segmentation, summaries) for every document: what workers send back."""
    documents = [item for item in iter_archive([archive]) if isinstance(item, Document)]
    methods = build_methods(METHODS)
    for method in methods:
        method.fit(document.text for document in documents)
    results = []
    for document in documents:
        segmentation = split_document(document)
        results.append((document, segmentation, [method.summarize(document, segmentation) for method in methods]))
    return results


def write_seconds(results: list, db: Path, group_documents: int) -> float:
    """Best seconds to store every precomputed result into an empty store."""
    best = float("inf")
    for _ in range(TRIES):
        for old in db.parent.glob(db.name + "*"):
            old.unlink()
        store = Store(str(db))
        run_id = store.runs.begin("bench", {})
        gc.collect()
        started = time.perf_counter()
        with store.write_groups(max_documents=group_documents, max_seconds=3600) as groups:
            for document, segmentation, summaries in results:
                with store.transaction():
                    document_id, _, _ = store.add_document(document, segmentation, run_id)
                    for summary in summaries:
                        store.add_summary(document_id, run_id, summary)
                groups.document_written()
        best = min(best, time.perf_counter() - started)
        store.db.close()
    return best


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--documents", type=int, default=1000)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as folder:
        archive = Path(folder) / "archive"
        build_archive(archive, args.documents, demo_sentences(DEMO_ARCHIVE), seed=1)
        results = precomputed(archive)
        rows = []
        worker_seconds, summarized = timed_run(archive, Path(folder) / "run.sqlite", workers=1, tries=TRIES)
        worker_rate = summarized / worker_seconds
        two_seconds, _ = timed_run(archive, Path(folder) / "run2.sqlite", workers=2, tries=TRIES)
        for size in GROUP_SIZES:
            seconds = write_seconds(results, Path(folder) / f"writer_{size}.sqlite", size)
            rate = len(results) / seconds
            label = "one per transaction" if size == 1 else f"groups of {size}"
            rows.append([f"writer alone, {label}", f"{seconds:.2f}", f"{rate:.0f}", f"{rate / worker_rate:.1f}"])
        rows.append(["one worker process, whole run", f"{worker_seconds:.2f}", f"{worker_rate:.0f}", "1.0"])
        rows.append(["two worker processes, whole run", f"{two_seconds:.2f}", f"{summarized / two_seconds:.0f}",
                     f"{worker_seconds / two_seconds:.2f}"])
    print(f"#### Writer ceiling, one and two workers, {len(results):,} documents, "
          f"lead + TF-IDF + TextRank (best of {TRIES}; {load()})\n")
    print(table(["what", "seconds", "documents / s", "× one worker"], rows))


if __name__ == "__main__":
    main()
