"""The search query grammar against SQLite FTS5's documented query syntax.

External check: sqlite.org/fts5.html, section 3 "Full-text Query Syntax": phrases in
double quotes, ``*`` after a phrase for a prefix query, AND / OR / NOT with NOT
binding tighter than AND and AND tighter than OR, implicit AND between adjacent
phrases, parentheses, and the porter tokenizer's stemming. Each documented query is
run twice on the same FTS5 table, once as FTS5 reads it and once through our
grammar, and must select the same rows; the documented meaning of a few is also
spelled out as sets.
"""

from __future__ import annotations

import random
import sqlite3

import pytest

from store.search import QuerySyntaxError, parse_query

ROWS = {
    1: "one two three",
    2: "one two",
    3: "two three four",
    4: "one",
    5: "three four",
    6: "one three two",
    7: "the pumps were running",
    8: "the pump runs; three pumping stations",
    9: "onerous twofold thresholds",
}


@pytest.fixture(scope="module")
def fts():
    connection = sqlite3.connect(":memory:")
    connection.execute("create virtual table t using fts5(body, tokenize='porter unicode61 remove_diacritics 2')")
    connection.executemany("insert into t(rowid, body) values (?, ?)", ROWS.items())
    yield connection
    connection.close()


def _rows(connection, expression: str) -> set[int]:
    return {row[0] for row in connection.execute("select rowid from t where t match ?", [expression])}


# Queries written in FTS5's own syntax, as its documentation shows them.
DOCUMENTED = [
    '"one two three"',
    '"one two"',
    "one two three",
    "one AND two AND three",
    "one OR two",
    "one NOT two",
    "(one OR two) NOT three",
    "one OR two NOT three",
    "one OR two AND three",
    "one AND two OR three",
    "(one OR two) AND (three OR four)",
    "one*",
    '"one two thr"*',
    "th* NOT three",
    "pump",
    "running",
    '"pump runs"',
]


@pytest.mark.parametrize("expression", DOCUMENTED)
def test_our_rendering_selects_what_fts5_selects(fts, expression):
    # External check: sqlite.org/fts5.html, section 3
    parsed = parse_query(expression)
    assert parsed.filters.is_empty()
    assert _rows(fts, parsed.match) == _rows(fts, expression)


def test_documented_meanings_spelled_out(fts):
    def ours(query: str) -> set[int]:
        return _rows(fts, parse_query(query).match)

    # "one OR two NOT three": documents with two but not three, or with one.
    assert ours("one OR two NOT three") == {1, 2, 4, 6}
    # Implicit AND, in any order; a phrase needs the order.
    assert ours("one two three") == {1, 6}
    assert ours('"one two three"') == {1}
    # Prefix: "one*" also finds "onerous"; a bare "one" does not.
    assert ours("one*") == {1, 2, 4, 6, 9}
    assert ours("one") == {1, 2, 4, 6}
    # Porter stemming: pump, pumps and pumping; runs and running.
    assert ours("pumping") == {7, 8}
    assert ours("runs") == {7, 8}


def test_record_numbers_become_phrases(fts):
    parsed = parse_query("INS-2025-014")
    assert parsed.match == '"INS-2025-014"'
    assert parse_query("m³ Brélade").match == '("m³" AND "Brélade")'


@pytest.mark.parametrize(
    "query, message",
    [
        ("NOT pump", "NOT needs something before it"),
        ("pump AND", "ends after"),
        ("OR pump", "OR needs something"),
        ("(pump", "never closed"),
        ("pump)", "without a matching"),
        ("()", "empty parentheses"),
        ('"relief well', "quote is never closed"),
        ("pu*mp", "prefix"),
        ("*", "no letters or digits"),
        ("colour: red", "unknown filter"),
        ("from:last-week", "YYYY"),
        ("status:deleted", "active, duplicate, replaced, missing"),
        ("has:pictures", "has:reference or has:flags"),
        ("format:", "needs a value"),
    ],
)
def test_malformed_queries_say_what_is_wrong(query, message):
    with pytest.raises(QuerySyntaxError, match=message):
        parse_query(query)


def test_filters_are_taken_out_of_the_terms():
    parsed = parse_query(
        "pump folder:incidents format:PDF from:2025-01 to:2025-06-30 status:missing status:active "
        "method:textrank has:reference has:flags"
    )
    assert parsed.match == '"pump"'
    f = parsed.filters
    assert f.folders == ["incidents"] and f.formats == ["pdf"]
    assert (f.date_from, f.date_to) == ("2025-01", "2025-06-30")
    assert f.statuses == ["missing", "active"] and f.methods == ["textrank"]
    assert f.has_reference and f.has_flags
    only_filters = parse_query("folder:minutes")
    assert only_filters.match is None


def test_fts5_syntax_typed_by_a_user_never_reaches_fts5_as_syntax(fts):
    # External check: sqlite.org/fts5.html, section 3
    # Column filters, NEAR groups, initial-token carets, "+" joins and stray quotes:
    # each query is either refused with a message or searched for as plain words.
    rng = random.Random(20261202)
    pieces = ['"', "(", ")", "*", ":", "-", "^", "+", "{body}", "NEAR", "AND", "OR", "NOT", "one", "two", "body:", "'"]
    for _ in range(600):
        query = " ".join(rng.choice(pieces) for _ in range(rng.randint(1, 6)))
        query = query if rng.random() < 0.5 else query.replace(" ", "")
        try:
            parsed = parse_query(query)
        except QuerySyntaxError:
            continue
        if parsed.match is not None:
            _rows(fts, parsed.match)  # raises sqlite3.OperationalError on an FTS5 syntax error
