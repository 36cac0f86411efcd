"""Facts in a generated summary that the source does not contain.

A generated summary can state a number, a date or a name that appears nowhere in the
document it summarizes (an "extrinsic hallucination" in the terms of Maynez et al.
2020). These are checked by lookup, not by a model:

* numbers: integers, decimals, thousands-grouped numbers, percentages, currency amounts
  and ordinals are compared by value, so ``1,200`` matches ``1200`` and ``3.50%``
  matches ``3.5``; a number of the source counts wherever it occurs (also inside a
  date or a reference such as ``P-104``). Number words ("seven") are not read.
* dates: ISO (``2024-05-13``), numeric day/month/year (read both ways when ambiguous),
  and dates with month names (``13 May 2024``, ``May 13, 2024``, ``May 2024``). A
  summary date is supported when some source date agrees on every part the summary
  states (a year missing from that source date may be found anywhere in the source).
* names: runs of two or more capitalised words (``of``, ``de``, ``van``... may join
  them), not counting a run's first word when it opens the sentence; supported when
  the run occurs in the source, ignoring case and spacing.

Each unsupported item becomes one :class:`Flag` with the item as written and the index
of the summary sentence holding it. The rules are common practice, with no published
reference; they favour few false alarms over catching every case.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from decimal import Decimal, InvalidOperation

from store.records import Flag

_MONTHS = {
    name: number
    for number, names in enumerate(
        [
            ("january", "jan"),
            ("february", "feb"),
            ("march", "mar"),
            ("april", "apr"),
            ("may",),
            ("june", "jun"),
            ("july", "jul"),
            ("august", "aug"),
            ("september", "sep", "sept"),
            ("october", "oct"),
            ("november", "nov"),
            ("december", "dec"),
        ],
        start=1,
    )
    for name in names
}
_MONTH = r"(?P<month>" + "|".join(sorted((m.capitalize() for m in _MONTHS), key=len, reverse=True)) + r")\.?"
_DAY = r"(?P<day>\d{1,2})(?:st|nd|rd|th)?"
_YEAR = r"(?P<year>\d{4})"
_DATE_PATTERNS = [
    re.compile(r"\b(?P<year>\d{4})-(?P<month>\d{1,2})-(?P<day>\d{1,2})\b"),
    re.compile(r"\b(?P<first>\d{1,2})[/.](?P<second>\d{1,2})[/.](?P<year>\d{4}|\d{2})\b"),
    re.compile(rf"\b{_DAY}\s+(?:of\s+)?{_MONTH}(?:,?\s+{_YEAR})?\b"),
    re.compile(rf"\b{_MONTH}\s+{_DAY}(?:,?\s+{_YEAR})?\b"),
    re.compile(rf"\b{_MONTH}\s+{_YEAR}\b"),
]
_NUMBER = re.compile(
    r"(?<![\w.,])(?P<currency>[$€£¥])?"
    r"(?P<value>\d{1,3}(?:,\d{3})+(?:\.\d+)?|\d+(?:\.\d+)?)"
    r"(?:st|nd|rd|th)?(?P<percent>\s?%| per ?cent)?(?![\w])"
)
_WORD_AND_PUNCTUATION = re.compile(r"(?P<word>[\w'’-]+)(?P<after>[^\w\s'’-]*)")
_NAME_JOINERS = {"of", "de", "del", "der", "van", "von", "la", "le", "du", "da", "di"}
_NOT_NAME_WORDS = set(m.capitalize() for m in _MONTHS) | {
    "Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday",
}

Date = tuple[int | None, int | None, int | None]


def _number_value(text: str) -> str | None:
    try:
        value = Decimal(text.replace(",", ""))
    except InvalidOperation:
        return None
    return format(value.normalize(), "f")


def _number_matches(text: str) -> Iterable[re.Match]:
    return _NUMBER.finditer(text)


def number_values(text: str) -> set[str]:
    """Every number in ``text`` as a canonical decimal string (``"1,200.50"`` -> ``"1200.5"``)."""
    return {value for m in _number_matches(text) if (value := _number_value(m.group("value"))) is not None}


def _year(text: str) -> int:
    year = int(text)
    return year + 2000 if year < 100 else year


def _date_readings(match: re.Match) -> set[Date]:
    parts = match.groupdict()
    year = _year(parts["year"]) if parts.get("year") else None
    if "first" in parts and parts["first"] is not None:
        first, second = int(parts["first"]), int(parts["second"])
        readings = {(year, second, first), (year, first, second)}  # day/month and month/day
        return {(y, m, d) for y, m, d in readings if 1 <= m <= 12 and 1 <= d <= 31}
    month_text = parts["month"]
    month = int(month_text) if month_text.isdigit() else _MONTHS[month_text.lower().rstrip(".")]
    day = int(parts["day"]) if parts.get("day") else None
    if not 1 <= month <= 12 or (day is not None and not 1 <= day <= 31):
        return set()
    return {(year, month, day)}


def find_dates(text: str) -> list[tuple[re.Match, set[Date]]]:
    """Non-overlapping dates in ``text`` (earlier patterns win), with their readings."""
    found: list[tuple[re.Match, set[Date]]] = []
    taken: list[tuple[int, int]] = []
    for pattern in _DATE_PATTERNS:
        for match in pattern.finditer(text):
            if any(match.start() < end and start < match.end() for start, end in taken):
                continue
            readings = _date_readings(match)
            if readings:
                found.append((match, readings))
                taken.append(match.span())
    return sorted(found, key=lambda item: item[0].start())


def _date_supported(readings: set[Date], source_dates: list[set[Date]], source_numbers: set[str]) -> bool:
    for year, month, day in readings:
        for source in source_dates:
            for source_year, source_month, source_day in source:
                if month != source_month:
                    continue
                if day is not None and day != source_day:
                    continue
                if year is not None and year != source_year:
                    if source_year is not None or str(year) not in source_numbers:
                        continue
                return True
    return False


def _names(sentence: str) -> list[str]:
    """Runs of two or more capitalised words; the sentence's first word is left out
    (grammar capitalises it) and punctuation after a word ends a run."""
    names: list[str] = []
    run: list[str] = []

    def close() -> None:
        while run and run[-1] in _NAME_JOINERS:
            run.pop()
        if sum(word not in _NAME_JOINERS for word in run) >= 2:
            names.append(" ".join(run))
        run.clear()

    for index, match in enumerate(_WORD_AND_PUNCTUATION.finditer(sentence)):
        word = re.sub(r"['’]s$", "", match.group("word"))
        if index > 0 and word[:1].isupper() and word not in _NOT_NAME_WORDS:
            run.append(word)
        elif run and word in _NAME_JOINERS:
            run.append(word)
        else:
            close()
        if match.group("after"):
            close()
    close()
    return names


def _squashed(text: str) -> str:
    return " ".join(text.split()).lower()


def _unsupported_name_parts(name: str, source_squashed: str) -> list[str]:
    """The name if the source lacks it; for a name joined by "of" and the like, only
    its multi-word parts the source lacks (so "Ada Vell of Tollcaster Water Board"
    flags "Ada Vell" when the board is named in the source)."""
    if _squashed(name) in source_squashed:
        return []
    parts: list[list[str]] = [[]]
    for word in name.split():
        if word in _NAME_JOINERS:
            parts.append([])
        else:
            parts[-1].append(word)
    multiword = [" ".join(part) for part in parts if len(part) >= 2]
    if not multiword:
        return [name]
    return [part for part in multiword if _squashed(part) not in source_squashed]


def unsupported_facts(summary_sentences: Sequence[str], source: str) -> list[Flag]:
    """Flags for numbers, dates and names of the summary absent from ``source``."""
    source_numbers = number_values(source)
    source_dates = [readings for _, readings in find_dates(source)]
    source_squashed = _squashed(source)
    flags: list[Flag] = []
    for position, sentence in enumerate(summary_sentences):
        seen: set[tuple[str, str]] = set()

        def flag(kind: str, detail: str, seen=seen, position=position) -> None:
            if (kind, detail) not in seen:
                seen.add((kind, detail))
                flags.append(Flag(kind=kind, detail=detail, position=position))

        dates = find_dates(sentence)
        for match, readings in dates:
            if not _date_supported(readings, source_dates, source_numbers):
                flag("unsupported-date", match.group())
        for match in _number_matches(sentence):
            if any(d.start() <= match.start() < d.end() for d, _ in dates):
                continue
            value = _number_value(match.group("value"))
            if value is not None and value not in source_numbers:
                flag("unsupported-number", match.group().strip())
        for name in _names(sentence):
            for part in _unsupported_name_parts(name, source_squashed):
                flag("unsupported-name", part)
    return flags
