"""How long a summary may be, and how ranked sentences are cut to that length."""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import asdict, dataclass

from store.errors import UsageError

_WORD = re.compile(r"\w+(?:[-'’]\w+)*")

REFERENCE = "reference"
FIXED_GRAMMAR = "'3' (sentences), '80w' (words) or '10%' (of the document)"
GRAMMAR = "'3' (sentences), '80w' (words), '10%' (of the document) or 'reference' (each reference summary's length)"


class BudgetError(UsageError, ValueError):
    """A budget outside the grammar, or one a command cannot use."""


def count_words(text: str) -> int:
    return len(_WORD.findall(text))


@dataclass(frozen=True)
class Budget:
    """A summary length limit: exactly one of ``sentences``, ``words`` or ``ratio``.

    ``ratio`` is a fraction of the document's words (``0.1`` keeps about a tenth).
    Word budgets take whole sentences, best first, and stop at the first one that
    would overrun the budget; the first chosen sentence is always kept, even when it alone is longer, so no
    document gets an empty summary.
    """

    sentences: int | None = None
    words: int | None = None
    ratio: float | None = None

    def __post_init__(self) -> None:
        given = [v for v in (self.sentences, self.words, self.ratio) if v is not None]
        if len(given) != 1:
            raise ValueError("a budget takes exactly one of sentences, words or ratio")
        if self.sentences is not None and self.sentences < 1:
            raise ValueError(f"sentences must be at least 1, got {self.sentences}")
        if self.words is not None and self.words < 1:
            raise ValueError(f"words must be at least 1, got {self.words}")
        if self.ratio is not None and not 0 < self.ratio <= 1:
            raise ValueError(f"ratio must be in (0, 1], got {self.ratio}")

    @classmethod
    def parse(cls, spec: str | int) -> Budget:
        """The budget grammar every command shares: ``3`` sentences, ``80w`` words,
        ``10%`` of the document's words. ``reference`` (each reference summary's length)
        is a matched budget, for scoring: see :func:`parse_budget`."""
        value = str(spec).strip().lower()
        if value == REFERENCE:
            raise BudgetError(f"budget {spec!r}: {REFERENCE!r} matches each reference summary's length and is "
                              "used by score, compare and report; here give " + FIXED_GRAMMAR)
        try:
            if value.endswith("%"):
                return cls(ratio=float(value[:-1]) / 100)
            if value.endswith("w"):
                return cls(words=int(value[:-1]))
            return cls(sentences=int(value))
        except ValueError as error:
            reason = "" if "invalid literal" in str(error) or "could not convert" in str(error) else f" ({error})"
            raise BudgetError(f"budget {spec!r}: expected {GRAMMAR}{reason}") from None

    def as_dict(self) -> dict:
        return {k: v for k, v in asdict(self).items() if v is not None}

    def __str__(self) -> str:
        if self.sentences is not None:
            return f"{self.sentences} sentence{'s' if self.sentences != 1 else ''}"
        if self.words is not None:
            return f"{self.words} words"
        return f"{self.ratio:.0%} of the document's words"

    def spec(self) -> str:
        """The budget in the command-line grammar (``3``, ``80w``, ``10%``)."""
        if self.sentences is not None:
            return str(self.sentences)
        if self.words is not None:
            return f"{self.words}w"
        return f"{self.ratio * 100:g}%"

    def select(self, ranked: Iterable[int], sentence_words: Sequence[int]) -> list[int]:
        """Take indices from ``ranked`` (best first) until the budget is spent; return
        them in document order."""
        chosen: list[int] = []
        if self.sentences is not None:
            for index in ranked:
                if len(chosen) == self.sentences:
                    break
                chosen.append(index)
            return sorted(chosen)
        limit = self.words if self.words is not None else max(
            1, math.ceil(self.ratio * sum(sentence_words))
        )
        used = 0
        for index in ranked:
            if chosen and used + sentence_words[index] > limit:
                break
            chosen.append(index)
            used += sentence_words[index]
            if used >= limit:
                break
        return sorted(chosen)
