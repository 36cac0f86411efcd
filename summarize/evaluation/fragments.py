"""How extractive a summary is: extractive fragments (Grusky, Naaman & Artzi 2018).

For article tokens ``A`` and summary tokens ``S``, the extractive fragments
``F(A, S)`` are found greedily: walking through ``S``, at each position take the
longest token run shared with ``A`` that starts there, then continue after it (a
position starting no shared run is skipped). Then

    coverage(A, S)    = (1/|S|) · Σ_{f ∈ F} |f|     share of summary words copied
    density(A, S)     = (1/|S|) · Σ_{f ∈ F} |f|²    average length of the copied run
                                                    a summary word belongs to
    compression(A, S) = |A| / |S|

The novel n-gram ratio is the share of a summary's n-grams that occur nowhere in the
source (common practice in abstractive-summarization papers, e.g. See et al. 2017;
no single definition). Here n-grams do not cross summary sentence boundaries, so a
purely extractive summary has ratio 0 whichever sentences it joins.

Tokens are rouge-score's without stemming (lower case, runs of ``[a-z0-9]``), so the
fragments speak of the same words ROUGE counts.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass

from rouge_score.tokenizers import DefaultTokenizer

_TOKENIZER = DefaultTokenizer(use_stemmer=False)


def tokens(text: str) -> list[str]:
    return _TOKENIZER.tokenize(text)


class IndexedSource:
    """A source's tokens with where each occurs and its n-gram sets, built once per
    document so that several summaries of it are measured cheaply."""

    def __init__(self, text: str):
        self.tokens = tokens(text)
        self.positions: dict[str, list[int]] = defaultdict(list)
        for index, token in enumerate(self.tokens):
            self.positions[token].append(index)
        self._ngrams: dict[int, set[tuple[str, ...]]] = {}

    def ngrams(self, n: int) -> set[tuple[str, ...]]:
        if n not in self._ngrams:
            self._ngrams[n] = set(zip(*(self.tokens[k:] for k in range(n))))
        return self._ngrams[n]


def extractive_fragments(source: IndexedSource, summary: list[str]) -> list[list[str]]:
    """Greedy fragments ``F(A, S)`` as Grusky et al. (2018) define them.

    Their pseudo-code scans every article position for each summary position; the
    index of where each token occurs in the article visits only the positions that
    can start a match, which gives the same fragments.
    """
    article = source.tokens
    fragments: list[list[str]] = []
    i = 0
    while i < len(summary):
        best_length = 0
        next_start = 0  # the pseudo-code resumes its article scan after a match
        for j in source.positions.get(summary[i], ()):
            if j < next_start:
                continue
            length = 0
            while (
                i + length < len(summary)
                and j + length < len(article)
                and summary[i + length] == article[j + length]
            ):
                length += 1
            best_length = max(best_length, length)
            next_start = j + length
        if best_length:
            fragments.append(summary[i : i + best_length])
        i += max(best_length, 1)
    return fragments


def novel_ngram_ratio(source: IndexedSource, summary_sentences: list[list[str]], n: int) -> float:
    """Share of the summary's n-grams (within sentences) absent from the source."""
    summary_ngrams = [ngram for sentence in summary_sentences for ngram in zip(*(sentence[k:] for k in range(n)))]
    if not summary_ngrams:
        return 0.0
    known = source.ngrams(n)
    return sum(ngram not in known for ngram in summary_ngrams) / len(summary_ngrams)


@dataclass(frozen=True)
class Extractiveness:
    coverage: float
    density: float
    compression: float
    novel_unigrams: float
    novel_bigrams: float


def extractiveness(source: str | IndexedSource, summary_sentences: list[str]) -> Extractiveness:
    """Coverage, density, compression and novel 1-/2-gram ratios of one summary."""
    source = source if isinstance(source, IndexedSource) else IndexedSource(source)
    sentences = [tokens(s) for s in summary_sentences]
    summary = [token for sentence in sentences for token in sentence]
    if not summary:
        return Extractiveness(0.0, 0.0, 0.0, 0.0, 0.0)
    fragments = extractive_fragments(source, summary)
    return Extractiveness(
        coverage=sum(len(f) for f in fragments) / len(summary),
        density=sum(len(f) ** 2 for f in fragments) / len(summary),
        compression=len(source.tokens) / len(summary),
        novel_unigrams=novel_ngram_ratio(source, sentences, 1),
        novel_bigrams=novel_ngram_ratio(source, sentences, 2),
    )
