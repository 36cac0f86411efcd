"""The ranked search (store/search_queries.py) against a straightforward reference: every
hit of both full-text indexes scored with bm25 in one plain query, sorted by score then
document id, and each hit's snippets looked up one row at a time. Whatever shortcuts the
search takes for speed, the documents, their order, the pages and the snippets must be
the reference's (structural checks on the invented test store)."""

from __future__ import annotations

import pytest

from store.schema import VERBATIM_SIMILARITY, open_database
from store.search import parse_query
from store.search_queries import MARK_END, MARK_START, flatten, search_documents
from tests.review_store import build_review_store

QUERIES = (
    "inspection",
    "engineer",
    "s*",
    "e*",
    "the",
    "insp*",
    "shift OR pump",
    "the NOT diesel",
    '"outlet main"',
    "INS-2025-014",
    "struck",
    "cantilevers",
    "slates",
    "culvert OR diesel OR slates OR scour",
)


@pytest.fixture(scope="module")
def db(tmp_path_factory):
    path = tmp_path_factory.mktemp("order") / "store.sqlite"
    build_review_store(path)
    database = open_database(str(path))
    yield database
    database.close()


def _reference(db, text: str) -> list[tuple[int, float]]:
    """(document id, score) of every hit, best first, computed the plain way."""
    query = parse_query(text)
    scored = dict(
        db.execute(
            "select d.id, bm25(documents_fts, 10.0, 6.0, 1.0) from documents_fts "
            "join documents d on d.id = documents_fts.rowid "
            "where documents_fts match ? and d.status != 'replaced'",
            [query.match],
        ).fetchall()
    )
    excluded = set()
    if query.excluded:
        excluded = {row[0] for row in db.execute(
            "select rowid from documents_fts where documents_fts match ?", [query.excluded]
        )}
    summary_only: dict[int, float] = {}
    for document_id, score in db.execute(
        "select s.document_id, bm25(summaries_fts) from summaries_fts "
        "join summaries s on s.id = summaries_fts.rowid join documents d on d.id = s.document_id "
        "where summaries_fts match ? and s.method not in ('oracle', 'random') and d.status != 'replaced' "
        "and exists (select 1 from sentence_sources ss where ss.summary_id = s.id and ss.similarity < ?)",
        [query.match, VERBATIM_SIMILARITY],
    ).fetchall():
        if document_id not in scored and document_id not in excluded:
            summary_only[document_id] = min(score, summary_only.get(document_id, score))
    scored.update({document_id: 0.5 * score for document_id, score in summary_only.items()})
    return sorted(scored.items(), key=lambda item: (item[1], item[0]))


def _reference_snippets(db, text: str, document_id: int) -> tuple[str | None, list[str]]:
    query = parse_query(text)
    row = db.execute(
        "select snippet(documents_fts, -1, ?, ?, ' … ', 14) from documents_fts where documents_fts match ? and rowid = ?",
        [MARK_START, MARK_END, query.match, document_id],
    ).fetchone()
    text_snippet = flatten(row[0]) if row and MARK_START in row[0] else None
    methods, summary_snippets = set(), []
    for summary_id, method in db.execute(
        "select id, method from summaries where document_id = ? and method not in ('oracle', 'random') order by method, id",
        [document_id],
    ).fetchall():
        found = db.execute(
            "select snippet(summaries_fts, 0, ?, ?, ' … ', 14) from summaries_fts where summaries_fts match ? and rowid = ?",
            [MARK_START, MARK_END, query.match, summary_id],
        ).fetchone()
        if found and method not in methods:
            methods.add(method)
            summary_snippets.append(f"{method}: {flatten(found[0])}")
    return text_snippet, summary_snippets


@pytest.mark.parametrize("text", QUERIES)
def test_hits_and_their_order_are_the_reference_ones(db, text):
    expected = _reference(db, text)
    page = search_documents(db, parse_query(text), limit=-1, snippets=False)
    assert [hit.document_id for hit in page.hits] == [document_id for document_id, _ in expected]
    assert [hit.score for hit in page.hits] == pytest.approx([score for _, score in expected])
    assert page.total == len(expected)


@pytest.mark.parametrize("text", QUERIES)
def test_pages_of_two_follow_the_reference_order(db, text):
    expected = [document_id for document_id, _ in _reference(db, text)]
    paged = []
    for offset in range(0, len(expected) + 2, 2):
        page = search_documents(db, parse_query(text), offset=offset, limit=2)
        assert page.total == len(expected)
        paged += [hit.document_id for hit in page.hits]
    assert paged == expected


@pytest.mark.parametrize("text", QUERIES)
def test_snippets_are_the_reference_ones(db, text):
    hits = search_documents(db, parse_query(text), limit=-1).hits
    assert [
        (hit.snippet, [f"{match.method}: {match.snippet}" for match in hit.summary_matches]) for hit in hits
    ] == [_reference_snippets(db, text, hit.document_id) for hit in hits]


def test_the_queries_find_something_and_some_order_several(db):
    counts = [len(_reference(db, text)) for text in QUERIES]
    assert all(counts) and sum(count > 2 for count in counts) >= 3
