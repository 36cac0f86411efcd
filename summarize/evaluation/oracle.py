"""The extractive oracle: the best the source sentences allow against a reference.

It is an upper bound for the extractive methods, not a method: it reads the
reference summary, which no real summarizer has.
"""

from __future__ import annotations

import math
import time
from collections import Counter
from dataclasses import dataclass, field

import numpy as np

from store.records import Document, Segmentation, Summary
from summarize.evaluation.rouge import RougeMetric
from summarize.methods.budget import Budget, count_words
from summarize.methods.contract import ParamsFromFields
from summarize.methods.extractive import DEFAULT_BUDGET, build_summary, selectable_sentences


def word_limit(budget: Budget, sentence_words: list[int]) -> float:
    """The word limit a budget sets for a document (infinite for a sentence budget),
    computed as :meth:`Budget.select` computes it."""
    if budget.words is not None:
        return budget.words
    if budget.ratio is not None:
        return max(1, math.ceil(budget.ratio * sum(sentence_words)))
    return math.inf


@dataclass
class OracleSummarizer(ParamsFromFields):
    """Greedy extractive oracle under a budget.

    Starting from an empty selection ``S``, repeatedly add the sentence ``s`` that
    maximises ``J(S ∪ {s}) = (F1_ROUGE-1 + F1_ROUGE-2) / 2`` against the reference
    (Porter stemming on), among sentences that keep ``S`` within the budget; stop when
    no sentence raises ``J`` or the budget is spent. This greedy search is common
    practice for extractive oracles (e.g. Nallapati et al. 2017 build SummaRuNNer's
    labels this way; Liu & Lapata 2019 do the same with the sum of ROUGE-1 and
    ROUGE-2); it has no single published formula and is not guaranteed optimal.

    The budget is the one the compared methods get: a sentence budget caps the number
    of sentences; a word or ratio budget caps the words, and, as in
    :meth:`Budget.select`, the first sentence is taken even when every candidate is
    longer than the budget, so no document gets an empty summary. Candidates are those
    the extractive methods may choose (no headings, at least ``min_words`` words).
    A sentence's score is its gain in ``J`` when it was added.
    """

    budget: Budget = DEFAULT_BUDGET
    min_words: int = 4
    objective: str = field(default="mean of ROUGE-1 and ROUGE-2 F1, Porter stemming", init=False)
    name: str = field(default="oracle", init=False)

    def fit(self, texts: list[str]) -> OracleSummarizer:
        return self

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        if not document.reference_summary:
            raise ValueError(f"{document.record_key}: the oracle needs a reference summary")
        started = time.perf_counter()
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(s) for s in texts]
        candidates = selectable_sentences(segmentation, words, self.min_words, texts)
        metric = RougeMetric(metrics=("rouge1", "rouge2"), stemming=True)
        search = _OverlapSearch([metric.tokens(t) for t in texts], metric.tokens(document.reference_summary))
        limit = word_limit(self.budget, words)
        chosen: list[int] = []
        used = 0
        current = 0.0
        gains = np.zeros(len(texts))
        while self.budget.sentences is None or len(chosen) < self.budget.sentences:
            remaining = [i for i in candidates if i not in chosen]
            fitting = [i for i in remaining if used + words[i] <= limit]
            if not chosen and not fitting:
                fitting = remaining
            if not fitting:
                break
            values = search.objectives(fitting)
            best = int(np.argmax(values))  # the first maximum: ties go to the earlier sentence
            if chosen and values[best] <= current:
                break
            index = fitting[best]
            gains[index] = values[best] - current
            search.add(index)
            chosen.append(index)
            used += words[index]
            current = float(values[best])
        summary = build_summary(
            self.name, self.get_params(), document, segmentation, sorted(chosen), gains, started
        )
        summary.details["objective"] = current
        return summary


def sentence_objectives(sentence_texts: list[str], reference: str) -> np.ndarray:
    """The oracle's objective ``J`` of each sentence on its own: the mean of its
    ROUGE-1 and ROUGE-2 F1 against ``reference`` (Porter stemming), as the first
    step of :class:`OracleSummarizer`'s greedy search computes it."""
    if not sentence_texts:
        return np.zeros(0)
    metric = RougeMetric(metrics=("rouge1", "rouge2"), stemming=True)
    search = _OverlapSearch([metric.tokens(t) for t in sentence_texts], metric.tokens(reference))
    return search.objectives(list(range(len(sentence_texts))))


def _bigrams(tokens: list[str]) -> list[tuple[str, str]]:
    return list(zip(tokens, tokens[1:]))


def _f1(overlap: np.ndarray, predicted: np.ndarray, reference: int) -> np.ndarray:
    # rouge-score's definitions: P = overlap / max(|C|, 1), R = overlap / max(|R|, 1).
    precision = overlap / np.maximum(predicted, 1)
    recall = overlap / max(reference, 1)
    total = precision + recall
    return np.divide(2 * precision * recall, total, out=np.zeros_like(total), where=total > 0)


class _OverlapSearch:
    """Clipped n-gram overlap of a growing selection with the reference, for every
    candidate sentence at once.

    The selection's text is its sentences in document order, tokens concatenated as
    rouge-score concatenates them, so the bigrams across two neighbouring selected
    sentences count too; adding a sentence between two selected ones replaces their
    junction bigram by two new ones. Only n-grams of the reference can overlap, so
    counts are kept over the reference's n-grams alone; the selection's lengths give
    the precision denominators. The values equal rouge-score's F1 on the joined text.
    """

    def __init__(self, sentence_tokens: list[list[str]], reference_tokens: list[str]):
        self.tokens = sentence_tokens
        self.reference_unigrams = Counter(reference_tokens)
        self.reference_bigrams = Counter(_bigrams(reference_tokens))
        self.unigram_index = {g: k for k, g in enumerate(self.reference_unigrams)}
        self.bigram_index = {g: k for k, g in enumerate(self.reference_bigrams)}
        self.reference_length = len(reference_tokens)
        self.unigram_limit = np.array(list(self.reference_unigrams.values()), dtype=float)
        self.bigram_limit = np.array(list(self.reference_bigrams.values()), dtype=float)
        n = len(sentence_tokens)
        self.sentence_unigrams = np.zeros((n, len(self.unigram_index)))
        self.sentence_bigrams = np.zeros((n, len(self.bigram_index)))
        for i, tokens in enumerate(sentence_tokens):
            for token in tokens:
                if token in self.unigram_index:
                    self.sentence_unigrams[i, self.unigram_index[token]] += 1
            for bigram in _bigrams(tokens):
                if bigram in self.bigram_index:
                    self.sentence_bigrams[i, self.bigram_index[bigram]] += 1
        self.unigrams = np.zeros(len(self.unigram_index))
        self.bigrams = np.zeros(len(self.bigram_index))
        self.length = 0
        self.selected: list[int] = []  # sentences with tokens, in document order

    def _junction_changes(self, index: int) -> dict[int, int]:
        """Reference-bigram count changes at the junctions when ``index`` joins."""
        if not self.tokens[index]:
            return {}
        before = [i for i in self.selected if i < index]
        after = [i for i in self.selected if i > index]
        previous = self.tokens[before[-1]][-1] if before else None
        following = self.tokens[after[0]][0] if after else None
        changes: dict[int, int] = {}
        for bigram, delta in (
            ((previous, self.tokens[index][0]), 1),
            ((self.tokens[index][-1], following), 1),
            ((previous, following), -1),
        ):
            if None not in bigram and bigram in self.bigram_index:
                key = self.bigram_index[bigram]
                changes[key] = changes.get(key, 0) + delta
        return changes

    def objectives(self, candidates: list[int]) -> np.ndarray:
        """(F1 of ROUGE-1 + F1 of ROUGE-2) / 2 of the selection plus each candidate."""
        rows = np.asarray(candidates)
        unigram_overlap = np.minimum(self.unigrams + self.sentence_unigrams[rows], self.unigram_limit).sum(axis=1)
        counts = self.bigrams + self.sentence_bigrams[rows]
        bigram_overlap = np.minimum(counts, self.bigram_limit).sum(axis=1)
        for row, index in enumerate(candidates):
            for key, delta in self._junction_changes(index).items():
                was = min(counts[row, key], self.bigram_limit[key])
                bigram_overlap[row] += min(counts[row, key] + delta, self.bigram_limit[key]) - was
        lengths = self.length + np.array([len(self.tokens[i]) for i in candidates], dtype=float)
        rouge1 = _f1(unigram_overlap, lengths, self.reference_length)
        rouge2 = _f1(bigram_overlap, np.maximum(lengths - 1, 0), self.reference_length - 1)
        return (rouge1 + rouge2) / 2

    def add(self, index: int) -> None:
        for key, delta in self._junction_changes(index).items():
            self.bigrams[key] += delta
        self.unigrams += self.sentence_unigrams[index]
        self.bigrams += self.sentence_bigrams[index]
        self.length += len(self.tokens[index])
        if self.tokens[index]:
            self.selected = sorted(self.selected + [index])
