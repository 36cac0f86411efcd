"""Rejoining hard-wrapped text-layer lines into paragraphs."""

from __future__ import annotations

import pytest

from summarize.reading.readers.reflow import Line, join_wrapped, reflow


@pytest.mark.parametrize(
    ("first", "second", "joined"),
    [
        ("the inspec-", "tion was done", "the inspection was done"),
        ("a follow-", "up visit", "a followup visit"),  # the documented cost of the heuristic
        ("non-", "European steel", "non-European steel"),
        ("Level-", "3 access", "Level-3 access"),
        ("costs -", "which rose", "costs - which rose"),
        ("the soft\u00ad", "hyphen", "the softhyphen"),
        ("plain line", "next line", "plain line next line"),
    ],
)
def test_join_wrapped_repairs_hyphenation_between_lowercase_letters(first, second, joined):
    assert join_wrapped(first, second) == joined


def texts_and_kinds(lines: list[Line]) -> list[tuple[str, str]]:
    return [(block.text, block.kind) for block in reflow(lines)]


FULL = "This line runs the whole width of the column and carries on to the next"


def test_wrapped_lines_join_until_a_short_line_ends_a_sentence():
    lines = [Line(FULL), Line("line, where the sentence finally ends."), Line("A new paragraph starts here.")]
    assert texts_and_kinds(lines) == [
        (FULL + " line, where the sentence finally ends.", "paragraph"),
        ("A new paragraph starts here.", "paragraph"),
    ]


def test_full_width_line_ending_with_a_period_does_not_end_the_paragraph():
    first = "Ends with a period at the very right edge of the column, by chance only."
    lines = [Line(FULL), Line(first), Line("and continues here.")]
    assert texts_and_kinds(lines) == [(f"{FULL} {first} and continues here.", "paragraph")]


def test_headings_blank_lines_and_list_items_break_paragraphs():
    lines = [
        Line("Findings", is_heading=True, size=16),
        Line(FULL),
        Line("continued"),
        Line(""),
        Line("After a gap"),
        Line("\u2022 first bullet that wraps"),
        Line("onto a second line"),
        Line("2. second item"),
    ]
    assert texts_and_kinds(lines) == [
        ("Findings", "heading"),
        (FULL + " continued", "paragraph"),
        ("After a gap", "paragraph"),
        ("- first bullet that wraps onto a second line\n2. second item", "list"),
    ]


def test_heading_wrapped_over_two_lines_is_one_heading_but_two_sizes_are_two():
    lines = [
        Line("Annual Report on the", is_heading=True, size=20),
        Line("Northern Bridges", is_heading=True, size=20),
        Line("Executive Summary", is_heading=True, size=14),
        Line("Body."),
    ]
    assert texts_and_kinds(lines) == [
        ("Annual Report on the Northern Bridges", "heading"),
        ("Executive Summary", "heading"),
        ("Body.", "paragraph"),
    ]


def test_table_rows_ending_in_numbers_do_not_run_into_the_next_line():
    lines = [
        Line("Valve exercising (quarterly) 36 25 11"),
        Line("General station"),
        Line("checks (monthly) 85 70 15"),
        Line("Forty-three of the tasks were closed in batches on a single day by one of the"),
        Line("two supervisors."),
    ]
    assert [block.text for block in reflow(lines)] == [
        "Valve exercising (quarterly) 36 25 11",
        "General station checks (monthly) 85 70 15",
        "Forty-three of the tasks were closed in batches on a single day by one of the two supervisors.",
    ]


def test_a_sentence_wrapped_after_one_number_keeps_going():
    lines = [Line(FULL + " 2023"), Line("and beyond.")]
    assert [block.text for block in reflow(lines)] == [FULL + " 2023 and beyond."]
