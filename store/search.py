"""The search query grammar shared by `find` and the review site.

A query is terms and filters:

    bollards                    a word (Porter-stemmed: "bollard" finds "bollards")
    "relief well"               a phrase: the words in this order, next to each other
    insp*                       a prefix: every word starting with "insp"
    scour OR diesel             either;  pump AND bearing  both (also: pump bearing)
    pump NOT diesel             the first without the second
    (scour OR erosion) dam      parentheses group
    folder:incidents            the path has a folder of this name
    format:pdf                  the document's format
    from:2025-01  to:2025-06    the document's date (a year, year-month or full date)
    status:missing              active, duplicate, replaced or missing (repeat for several)
    method:textrank             has a summary by this method; summary matches are its
    has:reference  has:flags    has a reference summary; has a summary with flagged facts

Operators are upper case, as in SQLite's FTS5, and bind as FTS5 binds them: NOT
tighter than AND, AND tighter than OR (sqlite.org/fts5.html, "Full-text Query
Syntax"). The terms are rendered as an FTS5 MATCH expression in which every word is a
double-quoted string, so nothing a user types can reach FTS5 as syntax of its own:
``INS-2025-014`` becomes the phrase ``"INS-2025-014"`` (the tokenizer splits it into
ins, 2025, 014 in order). A malformed query raises :class:`QuerySyntaxError` with a
message saying what is wrong.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from store.errors import UsageError

STATUSES = ("active", "duplicate", "replaced", "missing")
HAS_VALUES = ("reference", "flags")
FILTER_NAMES = ("folder", "format", "from", "to", "status", "method", "has")
_DATE = re.compile(r"^\d{4}(-\d{2}(-\d{2})?)?$")
# One lexical token: a quoted phrase (possibly unterminated), a parenthesis, or a run
# of anything else up to whitespace, a parenthesis or a quote.
_TOKEN = re.compile(r'"[^"]*"?\*?|\(|\)|[^\s()"]+')
_FILTER = re.compile(r"^([A-Za-z]+):(.*)$")
_OPERATORS = ("AND", "OR", "NOT")


class QuerySyntaxError(UsageError):
    """A search query that cannot be understood; the message says where and why."""


@dataclass
class Filters:
    """Conditions on documents, all of which must hold."""

    folders: list[str] = field(default_factory=list)
    formats: list[str] = field(default_factory=list)
    date_from: str | None = None
    date_to: str | None = None
    statuses: list[str] = field(default_factory=list)
    methods: list[str] = field(default_factory=list)
    has_reference: bool = False
    has_flags: bool = False

    def is_empty(self) -> bool:
        return self == Filters()


@dataclass
class ParsedQuery:
    """``match`` is the FTS5 expression (None when the query has only filters);
    ``excluded`` is what its NOTs exclude, as one FTS5 expression (None without NOT):
    a document is matched through its summaries only if its own text has none of it."""

    text: str
    match: str | None
    filters: Filters
    excluded: str | None = None


@dataclass(frozen=True)
class _Term:
    words: str
    prefix: bool

    def render(self) -> str:
        return '"' + self.words.replace('"', '""') + '"' + ("*" if self.prefix else "")

    def negated(self) -> list:
        return []


@dataclass(frozen=True)
class _Binary:
    operator: str
    left: object
    right: object

    def render(self) -> str:
        return f"({self.left.render()} {self.operator} {self.right.render()})"

    def negated(self) -> list:
        """The operands this expression excludes, at any depth."""
        own = [self.right] if self.operator == "NOT" else []
        return own + self.left.negated() + self.right.negated()


def add_filter(filters: Filters, name: str, value: str) -> None:
    """Add the filter ``name:value`` (a name of FILTER_NAMES) to ``filters``, checked."""
    if not value:
        raise QuerySyntaxError(f"filter '{name}:' needs a value, e.g. {name}:{_FILTER_EXAMPLES[name]}")
    if name == "folder":
        filters.folders.append(value.strip("/"))
    elif name == "format":
        filters.formats.append(value.lower().lstrip("."))
    elif name in ("from", "to"):
        if not _DATE.match(value):
            raise QuerySyntaxError(f"'{name}:{value}': expected a date as YYYY, YYYY-MM or YYYY-MM-DD")
        if name == "from":
            filters.date_from = value
        else:
            filters.date_to = value
    elif name == "status":
        if value.lower() not in STATUSES:
            raise QuerySyntaxError(f"'status:{value}': expected one of {', '.join(STATUSES)}")
        filters.statuses.append(value.lower())
    elif name == "method":
        filters.methods.append(value)
    elif name == "has":
        if value.lower() not in HAS_VALUES:
            raise QuerySyntaxError(f"'has:{value}': expected has:reference or has:flags")
        setattr(filters, f"has_{value.lower()}", True)


_FILTER_EXAMPLES = {
    "folder": "incidents", "format": "pdf", "from": "2025-01", "to": "2025-06-30",
    "status": "missing", "method": "textrank", "has": "flags",
}


class _Parser:
    """Recursive descent over the term tokens: or := and (OR and)*;
    and := not ([AND] not)*; not := atom (NOT atom)*; atom := term | ( or )."""

    def __init__(self, tokens: list[str]):
        self.tokens = tokens
        self.position = 0

    def peek(self) -> str | None:
        return self.tokens[self.position] if self.position < len(self.tokens) else None

    def take(self) -> str:
        token = self.tokens[self.position]
        self.position += 1
        return token

    def parse(self):
        node = self.parse_or()
        if self.peek() is not None:
            raise QuerySyntaxError(f"unexpected {self.peek()!r}: a ')' without a matching '('")
        return node

    def parse_or(self):
        node = self.parse_and()
        while self.peek() == "OR":
            self.take()
            node = _Binary("OR", node, self.parse_and())
        return node

    def parse_and(self):
        node = self.parse_not()
        while self.peek() not in (None, "OR", ")"):
            if self.peek() == "AND":
                self.take()
            node = _Binary("AND", node, self.parse_not())
        return node

    def parse_not(self):
        node = self.parse_atom()
        while self.peek() == "NOT":
            self.take()
            node = _Binary("NOT", node, self.parse_atom())
        return node

    def parse_atom(self):
        token = self.peek()
        if token is None:
            last = self.tokens[-1] if self.tokens else ""
            raise QuerySyntaxError(f"the query ends after {last!r}: something to search for is missing")
        if token in _OPERATORS:
            if token == "NOT" and self.position == 0:
                raise QuerySyntaxError("NOT needs something before it, e.g. pump NOT diesel")
            raise QuerySyntaxError(f"{token} needs something to search for on each side")
        if token == ")":
            raise QuerySyntaxError("empty parentheses or a ')' without a matching '('")
        self.take()
        if token == "(":
            node = self.parse_or()
            if self.peek() != ")":
                raise QuerySyntaxError("a '(' is never closed")
            self.take()
            return node
        return _term(token)


def _term(token: str) -> _Term:
    prefix = token.endswith("*")
    body = token[:-1] if prefix else token
    if body.startswith('"'):
        if len(body) < 2 or not body.endswith('"'):
            raise QuerySyntaxError(f"a quote is never closed: {token}")
        body = body[1:-1]
    if "*" in body:
        raise QuerySyntaxError(f"{token!r}: '*' marks a prefix and goes at the end of a word")
    if not re.search(r"\w", body):
        raise QuerySyntaxError(f"{token!r} has no letters or digits to search for")
    return _Term(" ".join(body.split()), prefix)


def parse_query(text: str) -> ParsedQuery:
    """Split ``text`` into filters and terms and render the terms as FTS5."""
    filters = Filters()
    terms: list[str] = []
    for token in _TOKEN.findall(text):
        found = _FILTER.match(token)
        if found and not token.startswith('"'):
            name, value = found.group(1).lower(), found.group(2)
            if name not in FILTER_NAMES:
                raise QuerySyntaxError(
                    f"unknown filter '{found.group(1)}:' (known: {', '.join(n + ':' for n in FILTER_NAMES)}); "
                    f'to search for the text, put it in quotes: "{token}"'
                )
            add_filter(filters, name, value)
        else:
            terms.append(token)
    if not terms:
        return ParsedQuery(text=text, match=None, filters=filters)
    tree = _Parser(terms).parse()
    negated = tree.negated()
    excluded = " OR ".join(node.render() for node in negated) if negated else None
    return ParsedQuery(text=text, match=tree.render(), filters=filters, excluded=excluded)
