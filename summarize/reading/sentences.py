"""Sentence boundaries inside one unit of running text, as exact character spans.

Every place where a sentence could end (terminal punctuation, closing quotes or
brackets, then white space and more text) is judged by rules of our own, in order:

1. a lower-case word next, a bracketed ellipsis ("[...]") or a spaced one (". . ."),
   and a list marker ("2.", "b.") are never a boundary; a full stop standing alone
   before a capital ("(Smith, 2007) . Then", tokenised text) is one;
2. after a title ("Dr.", "Cllr.") never a boundary; after another abbreviation of
   reports (``summarize.reading.abbreviations``: "approx.", "Tel.", "e.g." and the
   words the user adds) only a word that opens sentences ("The", "It") makes a
   boundary, never a number, a code or a name;
3. a single capital letter is an initial ("Ms. F. Lindqvist"), except a lone "I"
   after a lower-case word ("you and I. Did ...");
4. a multi-period abbreviation ("U.S.", "a.m.") ends a sentence only before a word
   that opens sentences; "etc.", "Co.", "Ltd." and month names end one before any
   capitalised word;
5. after any other word, number or address, a boundary.

A stretch that the rules cannot settle (an abbreviation only pySBD knows, followed
by a capital; list markers inside a line, "1) First 2) Second") is handed to pySBD
(Sadvilkar & Neumann 2020), a rule-based segmenter built around the "Golden Rules"
for English; its boundaries that the rules rule out are then undone.
Most text never reaches pySBD, which recompiles regular expressions on every call
and is slow on long stretches without punctuation.

No stretch longer than ``max_piece`` characters is handed to pySBD or returned as
one sentence: a longer run without sentence punctuation (a pasted log, a table
flattened to words) is cut at the last "; ", ", " or space before the limit, so the
work stays linear in the length of the text.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import cached_property, lru_cache

import pysbd
from pysbd.lang.english import English

from store.records import Span
from summarize.reading.abbreviations import MAY_END, NEVER_FINAL, SENTENCE_STARTERS, TITLES

_CANDIDATE = re.compile(r"[.!?\u2026]+[\"'\u201d\u2019)\]]*(?=\s+\S)")
_OPENERS = "\"'\u201c\u2018(["
_MULTI_PERIOD = re.compile(r"(?:[A-Za-z]\.)+[A-Za-z]")
# A list marker inside a line ("... item 2) Next", "• 10. Second"), which only pySBD splits before.
_INLINE_LIST_MARKER = re.compile(
    r"\s(?:\(?\d{1,2}\.?\)|\d{1,2}\.|[a-z][.)]|[\u2022\u25aa\u25e6\u2023])\s+[A-Z\u2022\d]"
)
# "2." or "b." standing alone: the marker of a list item, which belongs to what follows.
_LIST_MARKER = re.compile(r"[\u2022\u25aa\u25e6\u2023(]?(?:\d{1,2}|[a-z])")
_TITLES = frozenset(TITLES)
_LEADING_MARKER = re.compile(r"\s*[\u2022\u25aa\u25e6\u2023]?\s*\(?(?:\d{1,2}|[a-z])(?:\.\)|[.)])\s")
# "(b)" or "(iv)" after a full stop opens the next item of a list run into the line.
_BRACKETED_MARKER = re.compile(r"\((?:[a-z]|[ivx]{1,4}|\d{1,2})\)")
_PYSBD_ABBREVIATIONS = frozenset(English.Abbreviation.ABBREVIATIONS)
_PREFERRED_CUTS = ("; ", ", ", " ")
# How far a rule looks at the words around a possible boundary (a window, so that
# judging every possible boundary stays linear in the text's length).
_LOOK_AHEAD = 100

BOUNDARY, NOT_BOUNDARY, ABBREVIATION, UNSURE = "boundary", "not", "abbreviation", "unsure"


@lru_cache(maxsize=1)
def _library_segmenter() -> pysbd.Segmenter:
    return pysbd.Segmenter(language="en", clean=False)


def _normalised(abbreviation: str) -> str:
    return abbreviation.strip().lower().rstrip(".")


@dataclass
class SentenceSplitter:
    """Sentence spans of running text (see the module docstring for the rules).

    ``abbreviations`` are added to the report abbreviations that never end a sentence
    before a number, a lower-case word or a name (written with or without the final
    period, any case); ``max_piece`` bounds, in characters, both every stretch handed
    to pySBD and every sentence returned.
    """

    abbreviations: tuple[str, ...] = field(default_factory=tuple)
    max_piece: int = 2000

    def get_params(self) -> dict:
        return {"abbreviations": sorted(self._never_final - set(NEVER_FINAL)), "max_piece": self.max_piece}

    @cached_property
    def _never_final(self) -> frozenset[str]:
        return frozenset(NEVER_FINAL) | {_normalised(a) for a in self.abbreviations if a.strip()}

    def spans(self, text: str, start: int = 0, end: int | None = None) -> list[Span]:
        """Sentence spans of ``text[start:end]``, white space trimmed, offsets into ``text``."""
        end = len(text) if end is None else end
        # A line break is white space here; a same-length replacement keeps offsets valid.
        flat = text[start:end].replace("\n", " ")
        spans: list[Span] = []
        for piece_start, piece_end in self._stretches(flat):
            for low, high in self._bounded(flat, piece_start, piece_end):
                trimmed = _trimmed(flat, low, high)
                if trimmed is not None:
                    spans.append(Span(start + trimmed[0], start + trimmed[1]))
        return spans

    def verdict(self, flat: str, match: re.Match) -> str:
        """What the rules say of one possible boundary (a ``_CANDIDATE`` match)."""
        token_start = flat.rfind(" ", 0, match.start()) + 1
        token = flat[token_start : match.end()]
        core = flat[token_start : match.start()].lstrip(_OPENERS)
        following = flat[match.end() : match.end() + _LOOK_AHEAD].lstrip()
        next_token = following.split(" ", 1)[0]
        next_word = next_token.lstrip(_OPENERS).rstrip(".,;:!?\"')]\u201d\u2019")
        first = next_word[:1]
        if core and _BRACKETED_MARKER.fullmatch(next_token):
            return BOUNDARY
        if not core:
            return self._detached_verdict(flat, match, following, first)
        if "[" in token or first.islower():
            return NOT_BOUNDARY
        if not match.group().startswith("."):
            return BOUNDARY
        lower = core.lower()
        if _LIST_MARKER.fullmatch(core) and (
            self._opens_item(_previous_word(flat, token_start)) or _LEADING_MARKER.match(flat)
        ):
            return NOT_BOUNDARY
        if lower in _TITLES:
            return ABBREVIATION
        if lower in self._never_final:
            return BOUNDARY if next_word in SENTENCE_STARTERS else ABBREVIATION
        if len(core) == 1 and core.isalpha():
            if core.isupper():
                pronoun = core == "I" and not _previous_word(flat, token_start)[:1].isupper()
                return BOUNDARY if pronoun else ABBREVIATION
            return ABBREVIATION if first.isdigit() else UNSURE
        if _MULTI_PERIOD.fullmatch(core):
            return BOUNDARY if next_word in SENTENCE_STARTERS else ABBREVIATION
        if lower in MAY_END:
            return BOUNDARY if first.isupper() else ABBREVIATION
        if lower in _PYSBD_ABBREVIATIONS and (first.isupper() or first.isdigit()):
            return UNSURE
        return BOUNDARY

    @staticmethod
    def _detached_verdict(flat: str, match: re.Match, following: str, first: str) -> str:
        """Punctuation standing alone after a space: "(Smith, 2007) . Then" (tokenised
        text) ends a sentence; a spaced ellipsis (". . .") or a lone "..." does not."""
        mark = match.group().rstrip("\"'\u201d\u2019)]")
        spaced_ellipsis = flat[max(0, match.start() - 2) : match.start()] == ". " or following.startswith(".")
        if mark in (".", "?", "!") and not spaced_ellipsis and (first.isupper() or first.isdigit()):
            return BOUNDARY
        return NOT_BOUNDARY

    def _opens_item(self, previous: str) -> bool:
        """Whether a marker such as "2." after the word ``previous`` opens a list item:
        at the start, after a bullet, or after a sentence end ("... item. 2. The"),
        but not after an abbreviation that takes a number ("Fig. 3.") or a colon.
        In a line that itself opens with a marker, every marker opens an item."""
        if not previous or previous in "\u2022\u25aa\u25e6\u2023-*":
            return True
        if not previous.endswith((".", "!", "?", ")")):
            return False
        return previous.rstrip(".").lstrip(_OPENERS).lower() not in self._never_final

    def _stretches(self, flat: str) -> Iterable[tuple[int, int]]:
        """``(start, end)`` of each sentence of ``flat``: settled by the rules, or by
        pySBD where they cannot decide."""
        verdicts = [(match, self.verdict(flat, match)) for match in _CANDIDATE.finditer(flat)]
        piece_start, unsure = 0, False
        for match, verdict in verdicts:
            if verdict == UNSURE:
                unsure = True
            elif verdict == BOUNDARY:
                yield from self._settle(flat, piece_start, match.end(), unsure)
                piece_start, unsure = match.end(), False
        yield from self._settle(flat, piece_start, len(flat), unsure)

    def _settle(self, flat: str, start: int, end: int, unsure: bool) -> Iterable[tuple[int, int]]:
        opening = start
        while opening < end and flat[opening].isspace():
            opening += 1
        # A marker opening the stretch is the rules' business; only one inside it is pySBD's.
        if not unsure and not _INLINE_LIST_MARKER.search(flat, opening, end):
            yield start, end
            return
        for low, high in self._bounded(flat, start, end):
            yield from self._library_stretches(flat, low, high)

    def _library_stretches(self, flat: str, start: int, end: int) -> list[tuple[int, int]]:
        """pySBD's sentences of ``flat[start:end]``, with the boundaries our rules rule
        out (after our abbreviations, initials, list markers) undone."""
        piece = flat[start:end]
        found: list[tuple[int, int]] = []
        cursor = 0
        for sentence in _library_segmenter().segment(piece):
            core = sentence.strip()
            if not core:
                continue
            at = piece.find(core, cursor)
            if at < 0:
                # pySBD with clean=False returns substrings; should that ever change, fail
                # loudly rather than store a span that does not slice back to the sentence.
                raise ValueError(f"sentence not found after offset {start + cursor}: {core[:60]!r}")
            found.append((start + at, start + at + len(core)))
            cursor = at + len(core)
        merged: list[tuple[int, int]] = []
        for low, high in found:
            if merged and self._joined_by_abbreviation(flat, merged[-1][1]):
                merged[-1] = (merged[-1][0], high)
            else:
                merged.append((low, high))
        return merged

    def _joined_by_abbreviation(self, flat: str, sentence_end: int) -> bool:
        match = _CANDIDATE.match(flat, _punctuation_start(flat, sentence_end))
        return match is not None and match.end() == sentence_end and self.verdict(flat, match) in (
            ABBREVIATION,
            NOT_BOUNDARY,
        )

    def _bounded(self, flat: str, start: int, end: int) -> Iterable[tuple[int, int]]:
        """``[start, end)`` cut into stretches of at most ``max_piece`` characters."""
        while end - start > self.max_piece:
            limit = start + self.max_piece
            cut = -1
            for separator in _PREFERRED_CUTS:
                at = flat.rfind(separator, start + 1, limit)
                if at > start + self.max_piece // 2:
                    cut = at + len(separator.rstrip())
                    break
            if cut <= start:
                cut = limit
            yield start, cut
            start = cut
        yield start, end


def _previous_word(flat: str, token_start: int) -> str:
    """The word before the one starting at ``token_start``."""
    return flat[max(0, token_start - _LOOK_AHEAD) : token_start].rstrip().rsplit(" ", 1)[-1]


def _punctuation_start(flat: str, end: int) -> int:
    """Where the run of terminal punctuation and closers ending at ``end`` begins."""
    position = end
    while position > 0 and flat[position - 1] in ".!?\u2026\"'\u201d\u2019)]":
        position -= 1
    return position


def _trimmed(text: str, start: int, end: int) -> tuple[int, int] | None:
    while start < end and text[start].isspace():
        start += 1
    while end > start and text[end - 1].isspace():
        end -= 1
    return (start, end) if end > start else None
