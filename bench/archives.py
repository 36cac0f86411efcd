"""Synthetic archives of any size, made of the demo archive's own sentences.

    sentences = demo_sentences("demo_archive")
    build_archive("big", 10_000, sentences, seed=7)

Each generated report is a plain-text file: a title line, then paragraphs of three
to six sentences drawn (seeded) from the demo reports, so the text has the demo's
vocabulary and sentence lengths. The same seed gives byte-identical files, which
load tests and benchmarks rely on to compare runs.
"""

from __future__ import annotations

import random
from pathlib import Path

from summarize.reading.ingest import iter_archive
from summarize.reading.split import split_document

FILES_PER_FOLDER = 1000
MIN_WORDS = 6


def demo_sentences(archive: str | Path) -> list[str]:
    """The prose sentences of every readable document under ``archive``, in archive
    order, duplicates dropped; headings and fragments under six words left out."""
    seen: dict[str, None] = {}
    for document in iter_archive([archive]):
        if not hasattr(document, "text"):
            continue
        segmentation = split_document(document)
        for span, heading in zip(segmentation.sentences, segmentation.sentence_is_heading):
            sentence = " ".join(span.slice(document.text).split())
            if not heading and len(sentence.split()) >= MIN_WORDS:
                seen.setdefault(sentence)
    if not seen:
        raise ValueError(f"{archive}: no sentences to build an archive from")
    return list(seen)


def report_text(rng: random.Random, sentences: list[str], number: int, sentence_count: int) -> str:
    """One synthetic report of ``sentence_count`` sentences."""
    paragraphs, left = [], sentence_count
    while left > 0:
        size = min(left, rng.randint(3, 6))
        paragraphs.append(" ".join(rng.choice(sentences) for _ in range(size)))
        left -= size
    return f"Field report {number:06d}\n\n" + "\n\n".join(paragraphs) + "\n"


def build_archive(
    folder: str | Path,
    count: int,
    sentences: list[str],
    seed: int = 0,
    sentences_per_report: tuple[int, int] = (8, 30),
) -> list[Path]:
    """Write ``count`` reports under ``folder`` (a thousand per subfolder, so no
    folder gets huge); returns their paths in archive order."""
    rng = random.Random(seed)
    folder = Path(folder)
    paths = []
    for number in range(count):
        subfolder = folder / f"batch_{number // FILES_PER_FOLDER:04d}"
        if number % FILES_PER_FOLDER == 0:
            subfolder.mkdir(parents=True, exist_ok=True)
        path = subfolder / f"report_{number:06d}.txt"
        path.write_text(report_text(rng, sentences, number, rng.randint(*sentences_per_report)), encoding="utf-8")
        paths.append(path)
    return paths
