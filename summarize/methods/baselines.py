"""Chance-level baseline: what any method must beat to show it reads the text."""

from __future__ import annotations

import hashlib
import time
from dataclasses import dataclass, field

import numpy as np

from store.records import Document, Segmentation, Summary
from summarize.methods.budget import Budget, count_words
from summarize.methods.contract import ParamsFromFields
from summarize.methods.extractive import DEFAULT_BUDGET, build_summary, selectable_sentences


@dataclass
class RandomSummarizer(ParamsFromFields):
    """Random selection: candidate sentences in a seeded random order, cut to the
    budget by :meth:`Budget.select` and returned in document order.

    Common practice as a lower bound; no published formula. The order is drawn from a
    generator seeded with ``seed`` and the document's text, so a document gets the
    same selection whatever else is in the batch. Candidates are those the extractive
    methods may choose (no headings, at least ``min_words`` words).
    """

    budget: Budget = DEFAULT_BUDGET
    min_words: int = 4
    seed: int = 0
    name: str = field(default="random", init=False)

    def fit(self, texts: list[str]) -> RandomSummarizer:
        return self

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        started = time.perf_counter()
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(s) for s in texts]
        candidates = selectable_sentences(segmentation, words, self.min_words, texts)
        text_key = int.from_bytes(hashlib.sha256(document.text.encode("utf-8")).digest()[:8], "big")
        order = np.random.default_rng([self.seed, text_key]).permutation(len(candidates))
        ranked = [candidates[k] for k in order]
        chosen = self.budget.select(ranked, words)
        scores = np.zeros(len(words))
        for rank, index in enumerate(ranked):
            scores[index] = 1.0 / (1 + rank)
        return build_summary(self.name, self.get_params(), document, segmentation, chosen, scores, started)
