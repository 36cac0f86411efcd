"""Dates as found in files, turned into ISO ``YYYY-MM-DD``."""

from __future__ import annotations

import datetime as dt
import email.utils
import re

from dateutil import parser as dateutil_parser

# All-numeric day/month orders are ambiguous (03/04/2024): from digits alone, the ISO
# order is read, and day/month/year only when the order cannot matter (14/03/2019:
# there is no month 14; 05/05/2024).
_ISO_DATE = re.compile(r"^\s*(\d{4})-(\d{1,2})-(\d{1,2})")
_NUMERIC_DATE = re.compile(r"^\s*(\d{1,2})[/.-](\d{1,2})[/.-](\d{4})\s*$")
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
    match = _NUMERIC_DATE.match(text)
    if match:
        first, second, year = (int(part) for part in match.groups())
        if first > 12 or first == second:
            return _valid(year, second, first)
        if second > 12:
            return _valid(year, first, second)
        return None
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


def date_problem(value: object) -> str | None:
    """Why a date that is present could not be read (None when it was read, or when
    there is none): a one-line reason for the run's warnings."""
    if value is None or (isinstance(value, str) and not value.strip()) or iso_date(value) is not None:
        return None
    shown = str(value).strip()[:40]
    if _NUMERIC_DATE.match(str(value)):
        return f"date {shown!r} is ambiguous (day/month or month/day); stored without a date"
    return f"date {shown!r} not understood; stored without a date"
