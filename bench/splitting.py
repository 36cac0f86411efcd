"""Sentence splitting, the previous way and the current way, side by side in one run.

    python -m bench.splitting                  # 150 long documents
    python -m bench.splitting --documents 50   # quicker

"Previous" is pySBD called on every unit of running text, as the splitter did before
the report rules (``PysbdOnly`` below: same units, same span search); "current" is
``SentenceSplitter``, which consults pySBD only where its own rules cannot decide.
Both split the same documents (long technical reports generated from the demo
archive's sentences, hard-wrapped at 78 columns), and the whole run (read, split,
store, lead + TF-IDF + TextRank, store) is timed with each. Also: how often each
gets the Golden Rules and the report-style cases of the tests right, and the cost of
text without sentence punctuation.
"""

from __future__ import annotations

import argparse
import random
import tempfile
import textwrap
import time
from functools import lru_cache
from pathlib import Path

import pysbd

from bench.archives import demo_sentences
from bench.operations import DEMO_ARCHIVE, load, table
from store.records import Document, Span
from summarize.reading.ingest import iter_archive
from summarize.reading.sentences import SentenceSplitter
from summarize.reading.split import split_document
from summarize.runs.runner import run_archive

# One try each: the previous splitter alone takes minutes on 150 long reports.
TRIES = 1


@lru_cache(maxsize=1)
def _pysbd() -> pysbd.Segmenter:
    return pysbd.Segmenter(language="en", clean=False)


class PysbdOnly:
    """The previous splitter: every unit handed whole to pySBD, sentences found back
    in the text by a forward search."""

    def get_params(self) -> dict:
        return {"splitter": "pysbd only"}

    def spans(self, text: str, start: int = 0, end: int | None = None) -> list[Span]:
        end = len(text) if end is None else end
        flat = text[start:end].replace("\n", " ")
        spans, cursor = [], 0
        for piece in _pysbd().segment(flat):
            core = piece.strip()
            if not core:
                continue
            found = flat.find(core, cursor)
            spans.append(Span(start + found, start + found + len(core)))
            cursor = found + len(core)
        return spans


def build_long_reports(folder: Path, count: int, sentences: list[str], seed: int = 3) -> None:
    """``count`` plain-text reports of 150 to 250 sentences, hard-wrapped at 78 columns."""
    rng = random.Random(seed)
    folder.mkdir(parents=True, exist_ok=True)
    for number in range(count):
        paragraphs, left = [], rng.randint(150, 250)
        while left > 0:
            size = min(left, rng.randint(3, 6))
            paragraphs.append(textwrap.fill(" ".join(rng.choice(sentences) for _ in range(size)), 78))
            left -= size
        (folder / f"technical_report_{number:04d}.txt").write_text(
            f"Technical report {number:04d}\n\n" + "\n\n".join(paragraphs) + "\n"
        )


def _best(function, tries: int = TRIES) -> float:
    best = float("inf")
    for _ in range(tries):
        started = time.perf_counter()
        function()
        best = min(best, time.perf_counter() - started)
    return best


def bench_split(documents: list[Document], old: PysbdOnly, new: SentenceSplitter) -> str:
    counts = {}

    def run(splitter):
        def once():
            counts[id(splitter)] = sum(len(split_document(d, splitter).sentences) for d in documents)
        return once

    old_seconds, new_seconds = _best(run(old)), _best(run(new))
    characters = sum(len(d.text) for d in documents)
    rows = [
        ["previous (pySBD on every unit)", f"{old_seconds:.2f}", f"{counts[id(old)]:,}",
         f"{characters / old_seconds / 1e3:.0f}", "1.00"],
        ["current (report rules, pySBD where unsure)", f"{new_seconds:.2f}", f"{counts[id(new)]:,}",
         f"{characters / new_seconds / 1e3:.0f}", f"{old_seconds / new_seconds:.2f}"],
    ]
    return (
        f"### Splitting {len(documents)} long technical reports ({characters / 1e6:.1f} M characters; "
        f"best of {TRIES}; {load()})\n\n"
        + table(["splitter", "seconds", "sentences", "k characters / s", "speed-up"], rows)
    )


def bench_run(archive: Path, workdir: Path, old: PysbdOnly, new: SentenceSplitter) -> str:
    results = {}
    for label, splitter in (("previous", old), ("current", new)):
        best, summarized = float("inf"), 0
        for attempt in range(TRIES):
            db = workdir / f"run-{label}-{attempt}.sqlite"
            started = time.perf_counter()
            report = run_archive(
                [archive], str(db), methods=["lead", "tfidf", "textrank"], splitter=splitter,
            )
            best = min(best, time.perf_counter() - started)
            summarized = report.documents_summarized
        results[label] = (best, summarized)
    old_seconds, count = results["previous"]
    new_seconds, _ = results["current"]
    rows = [
        ["previous splitter", f"{old_seconds:.2f}", f"{count / old_seconds:.1f}", "1.00"],
        ["current splitter", f"{new_seconds:.2f}", f"{count / new_seconds:.1f}", f"{old_seconds / new_seconds:.2f}"],
    ]
    return (
        f"### Whole run, lead + TF-IDF + TextRank ({count} long technical reports, 1 process, best of {TRIES})\n\n"
        + table(["run", "seconds", "documents / s", "× previous"], rows)
    )


def bench_accuracy(old: PysbdOnly, new: SentenceSplitter) -> str:
    from tests.report_sentence_cases import REPORT_CASES
    from tests.test_split import GOLDEN_RULES

    def rate(splitter, cases) -> str:
        right = sum([span.slice(text) for span in splitter.spans(text)] == expected for _, text, expected in cases)
        return f"{right}/{len(cases)} ({right / len(cases):.0%})"

    rows = [
        ["Golden Rules (recalled from memory)", rate(old, GOLDEN_RULES), rate(new, GOLDEN_RULES)],
        ["report-style cases (common practice)", rate(old, REPORT_CASES), rate(new, REPORT_CASES)],
    ]
    return "### Sentence boundaries right\n\n" + table(["cases", "previous", "current"], rows)


def bench_unpunctuated(old: PysbdOnly, new: SentenceSplitter) -> str:
    words = "quay wall fender berth crane bollard ladder harbour north".split()
    rng = random.Random(5)
    rows = []
    for size in (16_000, 32_000, 64_000, 1_000_000):
        text = " ".join(rng.choice(words) for _ in range(size // 5))[:size]
        splitters = [("previous", old), ("current", new)] if size <= 64_000 else [("current", new)]
        for label, splitter in splitters:
            started = time.perf_counter()
            spans = splitter.spans(text)
            seconds = time.perf_counter() - started
            longest = max(len(span) for span in spans)
            rows.append([label, f"{size:,}", f"{seconds:.2f}", f"{longest:,}"])
    return (
        "### Text without sentence punctuation (previous: grows with the square of the length; "
        f"current: pieces of at most {new.max_piece:,} characters)\n\n"
        + table(["splitter", "characters", "seconds", "longest sentence"], rows)
    )


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--documents", type=int, default=150)
    args = parser.parse_args(argv)
    old, new = PysbdOnly(), SentenceSplitter()
    sentences = demo_sentences(DEMO_ARCHIVE)
    with tempfile.TemporaryDirectory(prefix="bench-splitting-") as folder:
        workdir = Path(folder)
        archive = workdir / "archive"
        build_long_reports(archive, args.documents, sentences)
        documents = [item for item in iter_archive([archive]) if isinstance(item, Document)]
        print(bench_split(documents, old, new), "\n", flush=True)
        print(bench_run(archive, workdir, old, new), "\n", flush=True)
    print(bench_accuracy(old, new), "\n", flush=True)
    print(bench_unpunctuated(old, new), flush=True)


if __name__ == "__main__":
    main()
