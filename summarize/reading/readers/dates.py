"""Dates as found in files, turned into ISO ``YYYY-MM-DD``."""

from __future__ import annotations

import datetime as dt
import email.utils
import re

from dateutil import parser as dateutil_parser

# All-numeric day/month orders are ambiguous (03/04/2024): only the unambiguous
# ISO order is read from digits alone.
_ISO_DATE = re.compile(r"^\s*(\d{4})-(\d{1,2})-(\d{1,2})")
_HAS_MONTH_NAME = re.compile(r"[A-Za-z]{3,}")
_YEAR = re.compile(r"\b\d{4}\b")


def iso_date(value: object) -> str | None:
    """``YYYY-MM-DD`` for a date, datetime, or a string holding one (ISO dates,
    RFC 2822 mail dates, or dates with a month name such as '3 March 2024');
    None when nothing certain can be read."""
    if isinstance(value, dt.datetime):
        return value.date().isoformat()
    if isinstance(value, dt.date):
        return value.isoformat()
    if not isinstance(value, str) or not value.strip():
        return None
    text = value.strip()
    match = _ISO_DATE.match(text)
    if match:
        return _valid(*(int(part) for part in match.groups()))
    try:
        return email.utils.parsedate_to_datetime(text).date().isoformat()
    except (TypeError, ValueError, IndexError):
        pass
    if _HAS_MONTH_NAME.search(text) and _YEAR.search(text):
        return _complete_date(text)
    return None


def _complete_date(text: str) -> str | None:
    """Parse with two different defaults: if they disagree, the text lacks a day,
    month or year and the result would be partly invented."""
    try:
        first = dateutil_parser.parse(text, fuzzy=True, default=dt.datetime(2000, 1, 1))
        second = dateutil_parser.parse(text, fuzzy=True, default=dt.datetime(2001, 2, 2))
    except (ValueError, OverflowError):
        return None
    if first.date() != second.date():
        return None
    return first.date().isoformat()


def _valid(year: int, month: int, day: int) -> str | None:
    try:
        return dt.date(year, month, day).isoformat()
    except ValueError:
        return None
