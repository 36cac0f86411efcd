"""Costs of an overnight run, side by side on this machine, as Markdown tables.

    python -m bench.operations                  # 1k and 10k documents
    python -m bench.operations --sizes 1000     # quicker
    python -m bench.operations --sizes 1000,10000,100000

1. The whole extractive run (read, split, store, fit, lead + TF-IDF + TextRank,
   store) against its floor: reading, sentence splitting and TF-IDF vectorizing the
   same text, with nothing stored.
2. Two worker processes against one.
3. Cost per document at growing archive sizes.
4. TextRank time and peak memory on documents of 10 to 5,000 sentences.

Archives are generated from the demo archive's sentences (bench.archives). Every
run starts from an empty store. Wall-clock times; the load average is printed
because the machine may be shared.
"""

from __future__ import annotations

import argparse
import gc
import io
import os
import random
import resource
import tempfile
import time
import tracemalloc
from pathlib import Path

from sklearn.feature_extraction.text import TfidfVectorizer

from bench.archives import build_archive, demo_sentences
from store.records import Document, Segmentation, Span
from summarize.methods.extractive import TextRankSummarizer
from summarize.reading.ingest import iter_archive
from summarize.reading.split import split_document
from summarize.runs.progress import TerminalProgress
from summarize.runs.runner import run_archive

DEMO_ARCHIVE = Path(__file__).resolve().parents[1] / "demo_archive"
TEXTRANK_SIZES = (10, 100, 1000, 5000)
# Side-by-side timings take the best of a few tries: on a shared machine the
# slowest try measures the neighbours.
TRIES = 3


def table(header: list[str], rows: list[list]) -> str:
    lines = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    lines += ["| " + " | ".join(str(cell) for cell in row) + " |" for row in rows]
    return "\n".join(lines)


def load() -> str:
    one, five, fifteen = os.getloadavg()
    return f"load average {one:.1f} / {five:.1f} / {fifteen:.1f} on {os.cpu_count()} CPUs"


def timed_run(archive: Path, db: Path, workers: int = 1, tries: int = 1) -> tuple[float, int]:
    """Best seconds for a full run into an empty store, and documents summarized."""
    best = float("inf")
    for _ in range(tries):
        for old in db.parent.glob(db.name + "*"):
            old.unlink()
        gc.collect()
        started = time.perf_counter()
        report = run_archive([archive], str(db), workers=workers, progress=TerminalProgress(stream=io.StringIO()))
        best = min(best, time.perf_counter() - started)
        if report.exit_status != 0 or report.documents_remaining:
            raise RuntimeError(f"benchmark run did not finish cleanly: {report.counts()}")
    return best, report.documents_summarized


def floor_seconds(archive: Path) -> tuple[float, dict]:
    """Reading, splitting and TF-IDF vectorizing every document, nothing stored
    (best of ``TRIES``)."""
    return min((_floor_once(archive) for _ in range(TRIES)), key=lambda result: result[0])


def _floor_once(archive: Path) -> tuple[float, dict]:
    gc.collect()
    started = time.perf_counter()
    documents = [item for item in iter_archive([archive]) if isinstance(item, Document)]
    read = time.perf_counter()
    segmentations = [split_document(document) for document in documents]
    split = time.perf_counter()
    vectorizer = TfidfVectorizer(stop_words="english").fit(document.text for document in documents)
    for document, segmentation in zip(documents, segmentations):
        vectorizer.transform(segmentation.sentence_texts(document.text))
    done = time.perf_counter()
    return done - started, {"read": read - started, "split": split - read, "tfidf": done - split}


def bench_floor(workdir: Path, archive: Path) -> str:
    floor, parts = floor_seconds(archive)
    pipeline, documents = timed_run(archive, workdir / "floor.sqlite", tries=TRIES)
    rows = [
        ["floor: read", f"{parts['read']:.2f}", ""],
        ["floor: split into sentences", f"{parts['split']:.2f}", ""],
        ["floor: TF-IDF fit + vectorize sentences", f"{parts['tfidf']:.2f}", ""],
        ["**floor total**", f"{floor:.2f}", "1.00"],
        ["**whole run** (3 methods, stored)", f"{pipeline:.2f}", f"{pipeline / floor:.2f}"],
    ]
    return f"### Whole run against its floor ({documents} documents, 1 process, best of {TRIES}; {load()})\n\n" + table(
        ["what", "seconds", "× floor"], rows
    )


def cpu_seconds() -> tuple[float, float]:
    """CPU seconds used so far by this process, and by its finished children."""
    own = resource.getrusage(resource.RUSAGE_SELF)
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime, children.ru_utime + children.ru_stime


def bench_workers(workdir: Path, archive: Path) -> str:
    rows, base = [], None
    for workers in (1, 2):
        before = cpu_seconds()
        seconds, documents = timed_run(archive, workdir / f"workers{workers}.sqlite", workers=workers, tries=TRIES)
        after = cpu_seconds()
        main_cpu, worker_cpu = ((a - b) / TRIES for a, b in zip(after, before))
        base = base or seconds
        # On an idle machine with 2 cores a run takes at least its busiest process's CPU
        # time and at least half of all CPU time.
        idle_bound = max(main_cpu, (main_cpu + worker_cpu) / 2) if workers == 2 else main_cpu
        rows.append([str(workers), f"{seconds:.2f}", f"{documents / seconds:.1f}", f"{base / seconds:.2f}",
                     f"{main_cpu:.1f} / {worker_cpu:.1f}", f"{idle_bound:.1f}"])
    note = ("\n\nCPU seconds are averages over the tries; the last column is the shortest wall time "
            "those CPU seconds allow on two otherwise idle cores.")
    return f"### Worker processes ({documents} documents, best of {TRIES}; {load()})\n\n" + table(
        ["--workers", "seconds", "documents/s", "speed-up", "CPU s: main / workers", "idle 2-core bound, s"], rows
    ) + note


def bench_scaling(workdir: Path, sentences: list[str], sizes: list[int]) -> str:
    rows, base = [], None
    for size in sizes:
        archive = workdir / f"scale_{size}"
        build_archive(archive, size, sentences, seed=size)
        before = cpu_seconds()[0]
        seconds, documents = timed_run(archive, workdir / f"scale_{size}.sqlite")
        cpu_per_document = 1000 * (cpu_seconds()[0] - before) / documents
        per_document = 1000 * seconds / documents
        base = base or (per_document, cpu_per_document)
        store_mb = sum(f.stat().st_size for f in workdir.glob(f"scale_{size}.sqlite*")) / 1e6
        rows.append([f"{size:,}", f"{seconds:.1f}", f"{per_document:.2f}", f"{per_document / base[0]:.2f}",
                     f"{cpu_per_document:.2f}", f"{cpu_per_document / base[1]:.2f}", f"{store_mb:.0f}"])
    return f"### Cost per document by archive size (1 process; {load()})\n\n" + table(
        ["documents", "seconds", "ms per document", "× smallest", "CPU ms per document", "× smallest", "store MB"],
        rows,
    ) + "\n\nCPU time (this process) is less disturbed than wall time by other work on a shared machine."


def long_document(sentences: list[str], count: int, seed: int) -> tuple[Document, Segmentation]:
    """A document of ``count`` demo sentences in paragraphs of five, with exact spans."""
    rng = random.Random(seed)
    text, spans, owners, paragraphs = "", [], [], []
    paragraphs_start = 0
    for index in range(count):
        if index % 5 == 0:
            if index:
                paragraphs.append(Span(paragraphs_start, len(text)))
                text += "\n\n"
            paragraphs_start = len(text)
        elif text:
            text += " "
        sentence = rng.choice(sentences)
        spans.append(Span(len(text), len(text) + len(sentence)))
        owners.append(len(paragraphs))
        text += sentence
    paragraphs.append(Span(paragraphs_start, len(text)))
    document = Document(record_key=f"long-{count}", path=f"long-{count}.txt", text=text, format="txt",
                        sha256="0" * 64, size=len(text))
    return document, Segmentation(paragraphs=tuple(paragraphs), sentences=tuple(spans),
                                  sentence_paragraph=tuple(owners), sentence_is_heading=(False,) * count)


def bench_textrank(sentences: list[str]) -> str:
    rows, previous = [], None
    for label, method in (("textrank", TextRankSummarizer()), ("textrank --mmr 0.7", TextRankSummarizer(mmr_lambda=0.7))):
        for count in TEXTRANK_SIZES:
            document, segmentation = long_document(sentences, count, seed=count)
            gc.collect()
            started = time.perf_counter()
            method.summarize(document, segmentation)
            seconds = time.perf_counter() - started
            tracemalloc.start()
            method.summarize(document, segmentation)
            peak = tracemalloc.get_traced_memory()[1] / 1e6
            tracemalloc.stop()
            growth = f"{peak / previous[1]:.1f}× for {count // previous[0]}× sentences" if previous else ""
            previous = (count, peak) if count != TEXTRANK_SIZES[-1] else None
            rows.append([label, f"{count:,}", f"{seconds * 1000:.0f}", f"{peak:.1f}", f"{1e3 * peak / count:.1f}", growth])
    return "### TextRank by document length (peak memory by tracemalloc)\n\n" + table(
        ["method", "sentences", "ms", "peak MB", "KB per sentence", "memory growth"], rows
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="1000,10000", help="archive sizes for the per-document cost")
    parser.add_argument("--documents", type=int, default=1000, help="archive size for the floor and workers tables")
    parser.add_argument("--only", choices=["floor", "workers", "scaling", "textrank"], action="append")
    args = parser.parse_args()
    sizes = [int(size) for size in args.sizes.split(",")]
    only = set(args.only or ["floor", "workers", "scaling", "textrank"])
    sentences = demo_sentences(DEMO_ARCHIVE)
    print(f"_{load()}; archives built from {len(sentences)} demo sentences_\n")
    with tempfile.TemporaryDirectory(prefix="bench-operations-") as folder:
        workdir = Path(folder)
        archive = workdir / "archive"
        if only & {"floor", "workers"}:
            build_archive(archive, args.documents, sentences, seed=1)
        if "floor" in only:
            print(bench_floor(workdir, archive), "\n", flush=True)
        if "workers" in only:
            print(bench_workers(workdir, archive), "\n", flush=True)
        if "scaling" in only:
            print(bench_scaling(workdir, sentences, sizes), "\n", flush=True)
        if "textrank" in only:
            print(bench_textrank(sentences), "\n", flush=True)
    print(f"_peak RSS of this process {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB_")


if __name__ == "__main__":
    main()
