"""ROUGE (Lin 2004) through Google's ``rouge-score`` package.

    ROUGE-N  = n-gram overlap:  P = |C ∩ R| / |C|,  R = |C ∩ R| / |R|  (counts clipped)
    ROUGE-L  = longest common subsequence over the whole text as one sequence:
               P = LCS(C, R) / |C|,  R = LCS(C, R) / |R|
    ROUGE-Lsum = summary-level LCS: for each reference sentence r, the union LCS
               with all candidate sentences;  R = Σ_r |∪LCS(r, C)| / |R|,
               P = Σ_r |∪LCS(r, C)| / |C|
    F1 = 2PR / (P + R)   (Lin's F with β = 1)

Tokens are rouge-score's: lower case, runs of ``[a-z0-9]``; with stemming on, the
Porter stemmer (via NLTK) is applied to tokens longer than three characters, as the
original ROUGE-1.5.5 script's ``-m`` option does. ROUGE-Lsum needs sentence
boundaries: both sides are passed as sentences joined by ``"\\n"``; reference texts
are split with :func:`summarize.reading.split.sentence_spans`, the splitter used for the
documents themselves.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from types import SimpleNamespace

from nltk.stem import porter
from rouge_score import rouge_scorer, tokenize
from rouge_score.tokenizers import Tokenizer

from summarize.reading.split import sentence_spans

METRICS = ("rouge1", "rouge2", "rougeL", "rougeLsum")
METRIC_LABELS = {"rouge1": "ROUGE-1", "rouge2": "ROUGE-2", "rougeL": "ROUGE-L", "rougeLsum": "ROUGE-Lsum"}


@dataclass(frozen=True)
class RougeValue:
    precision: float
    recall: float
    f1: float


class CachedStemmingTokenizer(Tokenizer):
    """rouge-score's own tokenizer (``rouge_score.tokenize.tokenize``), with each
    distinct word stemmed once: NLTK's Porter stemmer dominates the cost on long
    documents, and a word always stems the same way."""

    def __init__(self, stemming: bool = True):
        self.stemmer = _CACHED_PORTER if stemming else None

    def tokenize(self, text: str) -> list[str]:
        return tokenize.tokenize(text, self.stemmer)


# Shared by every tokenizer: the stem of a word does not depend on who asks.
_CACHED_PORTER = SimpleNamespace(stem=lru_cache(maxsize=200_000)(porter.PorterStemmer().stem))


def reference_sentences(text: str) -> list[str]:
    """A reference summary as sentences, split like the documents are."""
    return [span.slice(text).replace("\n", " ") for span in sentence_spans(text)]


@dataclass
class RougeMetric:
    """ROUGE-1/2/L/Lsum precision, recall and F1 of a candidate against one reference.

    ``stemming`` (default on) applies the Porter stemmer; published worked examples
    that assume exact tokens need it off. ``metrics`` is any subset of :data:`METRICS`.
    """

    metrics: tuple[str, ...] = METRICS
    stemming: bool = True

    def _scorer(self) -> rouge_scorer.RougeScorer:
        if not hasattr(self, "scorer_"):
            unknown = set(self.metrics) - set(METRICS)
            if unknown:
                raise ValueError(f"unknown ROUGE metrics {sorted(unknown)} (known: {', '.join(METRICS)})")
            self.scorer_ = rouge_scorer.RougeScorer(list(self.metrics), tokenizer=self._tokenizer())
        return self.scorer_

    def score(self, candidate_sentences: list[str], reference_sentences: list[str]) -> dict[str, RougeValue]:
        """Scores of a candidate given as sentences against a reference given as sentences."""
        # Line breaks inside a sentence would read as sentence boundaries for Lsum.
        candidate = "\n".join(s.replace("\n", " ") for s in candidate_sentences)
        reference = "\n".join(s.replace("\n", " ") for s in reference_sentences)
        raw = self._scorer().score(reference, candidate)
        return {name: RougeValue(raw[name].precision, raw[name].recall, raw[name].fmeasure) for name in self.metrics}

    def tokens(self, text: str) -> list[str]:
        """The tokens ROUGE compares (stemmed when ``stemming`` is on)."""
        return self._tokenizer().tokenize(text)

    def _tokenizer(self) -> CachedStemmingTokenizer:
        if not hasattr(self, "tokenizer_"):
            self.tokenizer_ = CachedStemmingTokenizer(self.stemming)
        return self.tokenizer_
