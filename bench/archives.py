"""Synthetic archives of any size, made of the demo archive's own sentences.

    sentences = demo_sentences("demo_archive")
    build_archive("big", 10_000, sentences, seed=7)

Each generated report is a plain-text file: a title line, then paragraphs of three
to six sentences drawn (seeded) from the demo reports, so the text has the demo's
vocabulary and sentence lengths. With ``reference_every=k`` every k-th report gets a
reference summary in a sidecar (the first sentence of each of its first three
paragraphs), so ``score`` and ``compare`` have work to do. The same seed gives
byte-identical files, which load tests and benchmarks rely on to compare runs.
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


def report_paragraphs(rng: random.Random, sentences: list[str], sentence_count: int) -> list[list[str]]:
    """The sentences of one synthetic report, in paragraphs of three to six."""
    paragraphs, left = [], sentence_count
    while left > 0:
        size = min(left, rng.randint(3, 6))
        paragraphs.append([rng.choice(sentences) for _ in range(size)])
        left -= size
    return paragraphs


def report_text(number: int, paragraphs: list[list[str]]) -> str:
    """One synthetic report: its title line, then its paragraphs."""
    return f"Field report {number:06d}\n\n" + "\n\n".join(" ".join(p) for p in paragraphs) + "\n"


def build_archive(
    folder: str | Path,
    count: int,
    sentences: list[str],
    seed: int = 0,
    sentences_per_report: tuple[int, int] = (8, 30),
    reference_every: int = 0,
) -> list[Path]:
    """Write ``count`` reports under ``folder`` (a thousand per subfolder, so no
    folder gets huge), every ``reference_every``-th with a reference sidecar (0:
    none); returns their paths in archive order."""
    rng = random.Random(seed)
    folder = Path(folder)
    paths = []
    for number in range(count):
        subfolder = folder / f"batch_{number // FILES_PER_FOLDER:04d}"
        if number % FILES_PER_FOLDER == 0:
            subfolder.mkdir(parents=True, exist_ok=True)
        path = subfolder / f"report_{number:06d}.txt"
        paragraphs = report_paragraphs(rng, sentences, rng.randint(*sentences_per_report))
        path.write_text(report_text(number, paragraphs), encoding="utf-8")
        if reference_every and number % reference_every == 0:
            reference = " ".join(paragraph[0] for paragraph in paragraphs[:3])
            path.with_name(path.stem + ".summary.txt").write_text(reference + "\n", encoding="utf-8")
        paths.append(path)
    return paths
