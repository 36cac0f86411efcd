"""What a seq2seq model reads of a long document: whole sentences that fit its input
window, counted in the model's own tokens.

Two procedures:

* ``select_salient`` (extract-then-generate, as in Liu et al. 2018 and Pilault et al.
  2020): take sentences in order of salience, skipping any that would overrun the
  window, then restore document order. The whole document goes in when it fits.
* ``consecutive_chunks``: cut the document into consecutive runs of sentences, each
  filling at most one window, so every sentence is read once.

A sentence longer than the whole window is cut at a word boundary (the only case where
a sentence is not read whole); the pieces are kept as spans, so what the model read is
always known exactly. Sentence token counts are summed to plan, then every planned
input is encoded as it will be fed to the model and shrunk until it fits.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from store.records import Span

_WORD = re.compile(r"\S+")


@dataclass(frozen=True)
class ModelInput:
    """One input for the model: ``text`` is the document pieces at ``spans`` joined by
    single spaces; ``sentences`` are the indices of the document sentences involved."""

    text: str
    spans: tuple[Span, ...]
    sentences: tuple[int, ...]

    @property
    def chars(self) -> int:
        return sum(len(span) for span in self.spans)


class TokenCounter:
    """Token counts under the model's tokenizer, with the task prefix and special
    tokens included exactly as the model will receive them."""

    def __init__(self, tokenizer, prefix: str = ""):
        self.tokenizer = tokenizer
        self.prefix = prefix

    def input_tokens(self, text: str) -> int:
        # verbose=False: over-long candidates are expected here, while planning.
        return len(self.tokenizer(self.prefix + text, verbose=False)["input_ids"])

    def piece_tokens(self, texts: Sequence[str]) -> list[int]:
        if not texts:
            return []
        encoded = self.tokenizer(list(texts), add_special_tokens=False, verbose=False)["input_ids"]
        return [len(ids) for ids in encoded]


def _input(text: str, parts: Sequence[tuple[int, Span]]) -> ModelInput:
    spans = tuple(span for _, span in parts)
    return ModelInput(
        text=" ".join(span.slice(text) for span in spans),
        spans=spans,
        sentences=tuple(dict.fromkeys(index for index, _ in parts)),
    )


def _word_pieces(text: str, index: int, span: Span, fits: Callable[[str], bool]) -> list[tuple[int, Span]]:
    """Cut one sentence into consecutive word runs, each the longest that fits."""
    words = [(span.start + m.start(), span.start + m.end()) for m in _WORD.finditer(span.slice(text))]
    pieces: list[tuple[int, Span]] = []
    first = 0
    while first < len(words):
        low, high = first + 1, len(words)
        if not fits(text[words[first][0] : words[first][1]]):
            raise ValueError("the model's input window cannot hold a single word")
        while low < high:  # largest last word index whose run still fits
            middle = (low + high + 1) // 2
            if fits(text[words[first][0] : words[middle - 1][1]]):
                low = middle
            else:
                high = middle - 1
        pieces.append((index, Span(words[first][0], words[low - 1][1])))
        first = low
    return pieces


def _fitted(text: str, parts: list[tuple[int, Span]], fits: Callable[[str], bool]) -> list[ModelInput]:
    """Inputs covering ``parts`` in order, each verified to fit: halve a run that does
    not fit; cut a lone sentence that does not fit into word runs."""
    candidate = _input(text, parts)
    if fits(candidate.text):
        return [candidate]
    if len(parts) > 1:
        middle = len(parts) // 2
        return _fitted(text, parts[:middle], fits) + _fitted(text, parts[middle:], fits)
    index, span = parts[0]
    return [_input(text, [piece]) for piece in _word_pieces(text, index, span, fits)]


def _fits_in(counter: TokenCounter, window: int) -> Callable[[str], bool]:
    def fits(candidate: str) -> bool:
        return counter.input_tokens(candidate) <= window

    return fits


def select_salient(
    text: str,
    sentences: Sequence[Span],
    salience: Sequence[float],
    counter: TokenCounter,
    window: int,
) -> ModelInput:
    """The most salient sentences that fit in ``window`` tokens, in document order."""
    if not sentences:
        raise ValueError("the document has no sentences")
    fits = _fits_in(counter, window)
    fixed = counter.input_tokens("")
    costs = counter.piece_tokens([span.slice(text) for span in sentences])
    ranked = sorted(range(len(sentences)), key=lambda i: (-salience[i], i))
    if fixed + sum(costs) <= window:
        chosen = list(range(len(sentences)))
    else:
        chosen, used = [], fixed
        for index in ranked:
            if used + costs[index] <= window:
                chosen.append(index)
                used += costs[index]
        chosen.sort()
    if not chosen:
        best = ranked[0]
        return _input(text, _word_pieces(text, best, sentences[best], fits)[:1])
    # Joined text can tokenise a little longer than the sum of its sentences: drop
    # the least salient chosen sentence until the real input fits.
    rank_of = {index: rank for rank, index in enumerate(ranked)}
    while len(chosen) > 1 and not fits(_input(text, [(i, sentences[i]) for i in chosen]).text):
        chosen.remove(max(chosen, key=rank_of.__getitem__))
    return _fitted(text, [(i, sentences[i]) for i in chosen], fits)[0]


def consecutive_chunks(
    text: str,
    sentences: Sequence[Span],
    counter: TokenCounter,
    window: int,
) -> list[ModelInput]:
    """Consecutive runs of sentences, each filling at most ``window`` tokens."""
    if not sentences:
        raise ValueError("the document has no sentences")
    fits = _fits_in(counter, window)
    fixed = counter.input_tokens("")
    costs = counter.piece_tokens([span.slice(text) for span in sentences])
    runs: list[list[tuple[int, Span]]] = [[]]
    used = fixed
    for index, span in enumerate(sentences):
        if runs[-1] and used + costs[index] > window:
            runs.append([])
            used = fixed
        runs[-1].append((index, span))
        used += costs[index]
    return [model_input for run in runs for model_input in _fitted(text, run, fits)]
