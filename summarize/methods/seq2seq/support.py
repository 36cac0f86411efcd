"""Provenance for generated sentences: the source sentences that best support each one.

Each generated sentence and each document sentence becomes a TF-IDF vector under the
archive-fitted vectorizer (Salton & Buckley 1988; rows l2-normalised), and their
cosine is the support. A generated sentence keeps its ``max_links`` best-supporting
source sentences whose cosine is at least ``min_similarity`` (ties go to the earlier
sentence); a sentence with none above the threshold keeps no link, which tells a
reader it has no clear source. Aligning summary sentences to the source sentence most
similar to them is how extractive oracle labels are usually built (Nallapati et al.
2017 used ROUGE for it); TF-IDF cosine is used here because it discounts the terms
every report of the archive shares.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from store.records import Document, Segmentation, SourceLink


def supporting_sources(
    generated: Sequence[str],
    document: Document,
    segmentation: Segmentation,
    vectorizer,
    max_links: int = 2,
    min_similarity: float = 0.1,
) -> list[tuple[SourceLink, ...]]:
    """For each generated sentence, its supporting source spans, best first."""
    if not generated:
        return []
    if not segmentation.sentences:
        return [() for _ in generated]
    source = vectorizer.transform(segmentation.sentence_texts(document.text))
    summary = vectorizer.transform(list(generated))
    similarity = np.asarray((summary @ source.T).toarray())
    links: list[tuple[SourceLink, ...]] = []
    for row in similarity:
        ranked = sorted(range(len(row)), key=lambda i: (-row[i], i))[:max_links]
        links.append(
            tuple(
                SourceLink(segmentation.sentences[i], round(float(row[i]), 6))
                for i in ranked
                if row[i] >= min_similarity and row[i] > 0
            )
        )
    return links
