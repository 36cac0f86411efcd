"""Search over a store: document text, titles and summaries together, one hit per
document, filters, paging, snippets, and the schema upgrade that indexes the text of
documents already stored. The expected hits are read off the invented test store
(structural checks: which documents, in which order, how many)."""

from __future__ import annotations

import json

import pytest
import sqlite_utils
from click.testing import CliRunner

from store.records import Document
from store.schema import MIGRATIONS, SCHEMA_VERSION, open_database
from store.search import parse_query
from store.search_queries import MARK_END, MARK_START, search_documents
from summarize.cli import main
from tests.review_store import build_review_store


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    path = tmp_path_factory.mktemp("search") / "store.sqlite"
    ids = build_review_store(path)
    db = open_database(str(path))
    yield path, db, ids
    db.close()


def _ids(db, query: str, **kwargs) -> list[int]:
    return [hit.document_id for hit in search_documents(db, parse_query(query), **kwargs).hits]


def test_document_text_is_searched_with_stemming(store):
    _, db, ids = store
    assert _ids(db, "bollard") == [ids["long"]]
    assert _ids(db, '"culvert outfall"') == [ids["long"]]


def test_or_and_not_are_operators_not_words(store):
    _, db, ids = store
    assert set(_ids(db, "culvert OR diesel")) == {ids["long"], ids["minutes"]}
    assert _ids(db, "culvert AND diesel") == []
    assert set(_ids(db, "scour NOT quillham status:missing status:active")) == {ids["long"]}


def test_one_hit_per_document_without_oracle_or_repeated_budgets(store):
    _, db, ids = store
    page = search_documents(db, parse_query("struck"))
    assert [hit.document_id for hit in page.hits] == [ids["long"]]
    methods = [match.method for match in page.hits[0].summary_matches]
    assert "oracle" not in methods
    assert len(methods) == len(set(methods))


def test_title_and_record_key_matches_rank_first(store):
    _, db, ids = store
    order = _ids(db, "INS-2025-014")
    assert order[0] == ids["inspection"]
    assert ids["minutes"] in order


def test_snippets_are_one_line_with_marked_matches(store):
    _, db, ids = store
    hits = {hit.document_id: hit for hit in search_documents(db, parse_query("cantilevers")).hits}
    assert set(hits) == {ids["inspection"], ids["duplicate"]}
    hit = hits[ids["inspection"]]
    assert "\n" not in hit.snippet and f"{MARK_START}cantilevers{MARK_END}" in hit.snippet


def test_replaced_versions_are_left_out_and_missing_ones_marked(store):
    _, db, ids = store
    assert _ids(db, "slates") == [ids["current"]]
    assert _ids(db, "slates status:replaced") == [ids["replaced"]]
    hits = search_documents(db, parse_query("scour valve")).hits
    assert [(h.document_id, h.status) for h in hits] == [(ids["missing"], "missing")]


@pytest.mark.parametrize(
    "query, expected",
    [
        ("folder:minutes", {"minutes"}),
        ("folder:inspections", {"inspection", "current", "missing"}),
        ("format:pdf", {"inspection", "duplicate"}),
        ("from:2025-04 to:2025-06", {"minutes", "inspection", "duplicate"}),
        ("to:2024", {"current", "missing"}),
        ("status:duplicate", {"duplicate"}),
        ("method:seq2seq", {"long"}),
        ("has:reference", {"long", "inspection", "payload"}),
        ("has:flags", {"long"}),
        ("viaduct format:pdf status:active", {"inspection"}),
    ],
)
def test_filters_narrow_the_documents(store, query, expected):
    _, db, ids = store
    assert set(_ids(db, query, limit=100)) == {ids[name] for name in expected}


def test_paging_keeps_the_total(store):
    _, db, _ = store
    everything = search_documents(db, parse_query("status:active status:duplicate status:missing"), limit=100)
    assert everything.total == len(everything.hits) >= 6
    pages = [search_documents(db, parse_query("status:active status:duplicate status:missing"), offset=o, limit=2)
             for o in range(0, everything.total, 2)]
    assert all(page.total == everything.total for page in pages)
    assert [h.document_id for page in pages for h in page.hits] == [h.document_id for h in everything.hits]
    assert search_documents(db, parse_query("status:active"), offset=500, limit=2).total > 0


def test_find_command_uses_the_grammar(store):
    path, _, ids = store
    result = CliRunner().invoke(main, ["find", "culvert OR diesel", "--db", str(path), "--json"])
    assert result.exit_code == 0, result.output
    found = json.loads(result.stdout)
    assert {hit["document_id"] for hit in found["hits"]} == {ids["long"], ids["minutes"]}
    assert all("[" in hit["snippet"] for hit in found["hits"])
    bad = CliRunner().invoke(main, ["find", "(pump", "--db", str(path)])
    assert bad.exit_code == 2 and "never closed" in bad.output and "Traceback" not in bad.output


def test_upgrade_indexes_the_text_of_documents_already_stored(tmp_path):
    path = str(tmp_path / "old.sqlite")
    old = sqlite_utils.Database(path)
    with old.atomic():
        for version in range(1, SCHEMA_VERSION):
            MIGRATIONS[version](old)
        old.execute(f"PRAGMA user_version = {SCHEMA_VERSION - 1}")
    document = Document(record_key="/a/r.txt", path="/a/r.txt", text="Sluice gates were greased.", format="txt",
                        sha256="0" * 64, size=26, title="Gate log")
    old["documents"].insert({"record_key": document.record_key, "path": document.path, "text": document.text,
                             "format": document.format, "sha256": document.sha256, "title": document.title,
                             "status": "active"})
    old.close()
    upgraded = open_database(path)
    assert _ids(upgraded, "sluice") == [1]
    # A status change does not touch the text index; a text change does.
    upgraded.execute("update documents set status = 'missing' where id = 1")
    assert _ids(upgraded, "sluice status:missing") == [1]
    upgraded.execute("update documents set text = 'Penstock gates were greased.' where id = 1")
    assert _ids(upgraded, "sluice status:missing") == []
    assert _ids(upgraded, "penstock status:missing") == [1]
    upgraded.close()


def test_not_excludes_documents_whose_text_has_the_word_even_when_a_summary_lacks_it(store):
    _, db, ids = store
    # The long report's summaries mention bollards but not culverts; its text has both.
    assert _ids(db, "bollards") == [ids["long"]]
    assert _ids(db, "bollards NOT culvert") == []
    assert _ids(db, "bollards NOT (diesel OR culvert)") == []
    assert _ids(db, "bollards NOT diesel") == [ids["long"]]


def test_a_generated_summary_finds_its_document_when_the_text_lacks_the_word(store):
    _, db, ids = store
    # "fitting" occurs only in the seq2seq sentence, not in the report's text.
    hits = search_documents(db, parse_query("fitting")).hits
    assert [hit.document_id for hit in hits] == [ids["long"]]
    assert hits[0].snippet is None
    assert [match.method for match in hits[0].summary_matches] == ["seq2seq"]
