"""Review-site latency on a large store, as Markdown tables.

    python -m bench.site_latency                      # 100,000 documents
    python -m bench.site_latency --documents 5000     # quicker
    python -m bench.site_latency --store big.sqlite   # reuse (or keep) the generated store

The store is generated through the store's own write methods (``Store.add_document``,
``Store.add_summary``), a few thousand documents per transaction: reports made of the
demo archive's sentences (bench.archives), with the sentence spans known from the
generation (no sentence splitter run), a lead and a TF-IDF-like summary of three
sentences each, a reference summary on one document in ten and a flag on one in
fifty, spread over twenty folders, four formats and three years.

Then, through Flask's test client (the whole request: routing, store queries,
template rendering; no network), searches of each kind and document pages, each
timed one at a time: median and 95th percentile. The first request of each kind is
not counted (cold caches). The load average is printed: the machine may be shared.
"""

from __future__ import annotations

import argparse
import os
import random
import statistics
import time
from collections import Counter
from pathlib import Path

from bench.archives import demo_sentences
from store.records import Document, Flag, Segmentation, SourceLink, Span, Summary, SummarySentence
from store.search import parse_query
from store.store import Store
from summarize.output.site.app import create_app

DEMO_ARCHIVE = Path(__file__).resolve().parent.parent / "demo_archive"
FOLDERS = [f"unit{n:02d}" for n in range(20)]
FORMATS = ("txt", "pdf", "docx", "md")
PER_TRANSACTION = 2000
REQUESTS = 200
TARGETS_MS = {"search": 150, "document page": 250}


def _document(rng: random.Random, sentences: list[str], number: int) -> tuple[Document, Segmentation]:
    folder = FOLDERS[number % len(FOLDERS)]
    fmt = FORMATS[number % len(FORMATS)]
    title = f"Field report {number:06d}: " + " ".join(rng.choice(sentences).split()[:6])
    parts, spans, paragraph_of, position = [], [], [], 0
    count = rng.randint(8, 24)
    for index in range(count):
        sentence = rng.choice(sentences)
        if index and index % 4 == 0:
            parts.append("\n\n")
            position += 2
        elif index:
            parts.append(" ")
            position += 1
        parts.append(sentence)
        spans.append(Span(position, position + len(sentence)))
        paragraph_of.append(index // 4)
        position += len(sentence)
    text = "".join(parts)
    paragraphs = tuple(Span(spans[p * 4].start, spans[min(p * 4 + 3, count - 1)].end) for p in range(paragraph_of[-1] + 1))
    path = f"/archive/{folder}/FR-{number:06d}.{fmt}"
    reference = " ".join(rng.choice(sentences) for _ in range(2)) if number % 10 == 0 else None
    document = Document(
        record_key=path, path=path, text=text, format=fmt, sha256=f"{number:064x}", size=len(text),
        title=title, date=f"{2023 + number % 3}-{1 + number % 12:02d}-{1 + number % 28:02d}",
        reference_summary=reference, reference_source="sidecar:bench" if reference else None,
    )
    segmentation = Segmentation(paragraphs, tuple(spans), tuple(paragraph_of), tuple(False for _ in spans))
    return document, segmentation


def _summary(method: str, text: str, spans: list[Span], flagged: bool) -> Summary:
    return Summary(
        method=method,
        params={"budget": {"sentences": 3}},
        sentences=[SummarySentence(span.slice(text), 1.0, (SourceLink(span, 1.0),)) for span in spans],
        flags=[Flag("unsupported-number", "bench flag", 0)] if flagged else [],
    )


def generate(path: Path, documents: int, seed: int = 11) -> float:
    """Write a store of ``documents`` documents at ``path``; returns seconds taken."""
    sentences = demo_sentences(DEMO_ARCHIVE)
    rng = random.Random(seed)
    started = time.perf_counter()
    store = Store(str(path))
    run_id = store.runs.begin("bench", {"documents": documents})
    for first in range(0, documents, PER_TRANSACTION):
        with store.transaction():
            for number in range(first, min(first + PER_TRANSACTION, documents)):
                document, segmentation = _document(rng, sentences, number)
                document_id, _, _ = store.add_document(document, segmentation, run_id)
                spans = list(segmentation.sentences)
                store.add_summary(document_id, run_id, _summary("lead", document.text, spans[:3], False))
                picked = sorted(rng.sample(spans, 3))
                store.add_summary(document_id, run_id, _summary("tfidf", document.text, picked, number % 50 == 0))
    store.runs.finish(run_id, "finished", {})
    store.close()
    return time.perf_counter() - started


def _words_by_frequency(sentences: list[str]) -> dict[str, list[str]]:
    """Words of the sentences reports are made of, grouped by how many sentences hold
    them: rare, middling and common (each report draws 8 to 24 of them)."""
    counts: Counter = Counter()
    for sentence in sentences:
        counts.update({word.lower() for word in sentence.split() if word.isalpha() and len(word) > 3})
    ranked = [word for word, _ in counts.most_common()]
    third = max(1, len(ranked) // 3)
    return {"common": ranked[:third // 4], "middling": ranked[third : 2 * third], "rare": ranked[2 * third :]}


def _with_filters(word: str, folder: int) -> str:
    """A word in one folder, of the format that folder's documents have (see _document)."""
    return f"{word} folder:{FOLDERS[folder]} format:{FORMATS[folder % len(FORMATS)]} from:2024"


def _queries(words: dict[str, list[str]], rng: random.Random, count: int) -> dict[str, list[str]]:
    def pick(tier: str) -> str:
        return rng.choice(words[tier])

    kinds = {
        "one rare word": lambda: pick("rare"),
        "one common word": lambda: pick("common"),
        "two words (AND)": lambda: f"{pick('middling')} {pick('common')}",
        "phrase": lambda: f'"{pick("common")} {pick("common")}"',
        "A OR B": lambda: f"{pick('middling')} OR {pick('rare')}",
        "A NOT B": lambda: f"{pick('common')} NOT {pick('middling')}",
        "prefix*": lambda: pick("middling")[:4] + "*",
        "record number": lambda: f"FR-{rng.randrange(100000):06d}",
        "word + filters": lambda: _with_filters(pick("common"), rng.randrange(len(FOLDERS))),
        "filters only": lambda: f"folder:{FOLDERS[rng.choice((0, 10))]} has:reference",
    }
    return {kind: [make() for _ in range(count)] for kind, make in kinds.items()}


def _timed(client, urls: list[str]) -> list[float]:
    client.get(urls[0], headers={"Host": "127.0.0.1"})
    times = []
    for url in urls:
        started = time.perf_counter()
        response = client.get(url, headers={"Host": "127.0.0.1"})
        times.append(1000 * (time.perf_counter() - started))
        assert response.status_code == 200, (url, response.status_code)
    return times


def _row(name: str, times: list[float]) -> str:
    ordered = sorted(times)
    p95 = ordered[min(len(ordered) - 1, int(round(0.95 * len(ordered))) - 1)]
    return f"| {name} | {len(times)} | {statistics.median(times):.1f} | {p95:.1f} |"


def measure(path: Path, requests: int, seed: int = 5) -> list[str]:
    from urllib.parse import quote

    rng = random.Random(seed)
    client = create_app(path).test_client()
    words = _words_by_frequency(demo_sentences(DEMO_ARCHIVE))
    queries = _queries(words, rng, max(10, requests // 10))
    lines = ["| request | n | median ms | p95 ms |", "|---|---:|---:|---:|"]
    every_search = []
    for kind, texts in queries.items():
        times = _timed(client, [f"/?q={quote(text)}" for text in texts])
        every_search += times
        lines.append(_row(f"search: {kind}", times))
    lines.append(_row(f"**search, all kinds** (target p95 < {TARGETS_MS['search']})", every_search))
    with Store(str(path), read_only=True) as store:
        documents = store.queries.search(parse_query("status:active"), limit=1).total
    pages = _timed(client, [f"/document/{rng.randint(1, documents)}" for _ in range(requests)])
    lines.append(_row(f"**document page** (target p95 < {TARGETS_MS['document page']})", pages))
    return lines


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--documents", type=int, default=100_000)
    parser.add_argument("--store", type=Path, default=None, help="Store to generate (kept) or reuse if it exists.")
    parser.add_argument("--requests", type=int, default=REQUESTS, help="Document pages timed (searches: a tenth per kind).")
    args = parser.parse_args(argv)
    path = args.store or Path(f"bench_site_{args.documents}.sqlite")
    if path.exists():
        print(f"reusing {path}")
    else:
        seconds = generate(path, args.documents)
        print(f"generated {args.documents:,} documents in {seconds:.0f} s")
    size = sum(p.stat().st_size for p in path.parent.glob(path.name + "*"))
    print(f"store: {size / 2**20:.0f} MiB on disk; load average {os.getloadavg()[0]:.2f}\n")
    print("\n".join(measure(path, args.requests)))


if __name__ == "__main__":
    main()
