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


def extractive_fragments(article: list[str], summary: list[str]) -> list[list[str]]:
    """Greedy fragments ``F(A, S)`` as Grusky et al. (2018) define them.

    Their pseudo-code scans every article position for each summary position; an
    index of where each token occurs in the article visits only the positions that
    can start a match, which gives the same fragments.
    """
    positions: dict[str, list[int]] = defaultdict(list)
    for index, token in enumerate(article):
        positions[token].append(index)
    fragments: list[list[str]] = []
    i = 0
    while i < len(summary):
        best_length = 0
        next_start = 0  # the pseudo-code resumes its article scan after a match
        for j in positions.get(summary[i], ()):
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


def novel_ngram_ratio(source: list[str], summary_sentences: list[list[str]], n: int) -> float:
    """Share of the summary's n-grams (within sentences) absent from the source."""
    source_ngrams = {tuple(source[k : k + n]) for k in range(len(source) - n + 1)}
    summary_ngrams = [
        tuple(sentence[k : k + n]) for sentence in summary_sentences for k in range(len(sentence) - n + 1)
    ]
    if not summary_ngrams:
        return 0.0
    return sum(ngram not in source_ngrams for ngram in summary_ngrams) / len(summary_ngrams)


@dataclass(frozen=True)
class Extractiveness:
    coverage: float
    density: float
    compression: float
    novel_unigrams: float
    novel_bigrams: float


def extractiveness(source_text: str, summary_sentences: list[str]) -> Extractiveness:
    """Coverage, density, compression and novel 1-/2-gram ratios of one summary."""
    article = tokens(source_text)
    sentences = [tokens(s) for s in summary_sentences]
    summary = [token for sentence in sentences for token in sentence]
    if not summary:
        return Extractiveness(0.0, 0.0, 0.0, 0.0, 0.0)
    fragments = extractive_fragments(article, summary)
    return Extractiveness(
        coverage=sum(len(f) for f in fragments) / len(summary),
        density=sum(len(f) ** 2 for f in fragments) / len(summary),
        compression=len(article) / len(summary),
        novel_unigrams=novel_ngram_ratio(article, sentences, 1),
        novel_bigrams=novel_ngram_ratio(article, sentences, 2),
    )
