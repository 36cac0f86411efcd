"""Running a parsed search query (store/search.py) against the store.

Two full-text indexes are searched: the documents' (title, record key, text) and the
summaries' (only summaries with generated sentences find documents: an extractive
summary's sentences are spans of its document's text, already searched). Hits are grouped by document (one hit per document); title and record-key matches weigh more than text matches (bm25 column
weights), so a report whose title carries a number ranks above minutes that mention
it. Snippets are made only for the page of hits being shown, with line breaks
flattened; the match markers are ``MARK_START`` / ``MARK_END`` (private-use
characters), for the caller to render as it likes.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass, field

import sqlite_utils

from store.references import has_reference_condition
from store.schema import SEARCH_DOCUMENTS_INDEX, SEARCH_SUMMARIES_INDEX, VERBATIM_SIMILARITY
from store.search import Filters, ParsedQuery

MARK_START = "\ue000"
MARK_END = "\ue001"
# bm25 weights of the document index's columns: title, record key, text.
_COLUMN_WEIGHTS = (10.0, 6.0, 1.0)
# bm25 values of two indexes are not on one scale: a document ranks by its own match
# when it has one, and by its best summary match, damped, when only a summary matched
# (a generated sentence can hold words its source does not).
_SUMMARY_ONLY_WEIGHT = 0.5
# Evaluation artefacts, not summaries anyone reads: never search hits.
_NOT_SEARCHED_METHODS = ("oracle", "random")
_SNIPPET_TOKENS = 14
_BLANKS = re.compile(r"\s+")


@dataclass
class SummaryMatch:
    method: str
    params: dict
    snippet: str


@dataclass
class SearchHit:
    document_id: int
    record_key: str
    path: str
    title: str | None
    date: str | None
    format: str
    status: str
    score: float | None
    snippet: str | None = None
    summary_matches: list[SummaryMatch] = field(default_factory=list)


@dataclass
class SearchPage:
    hits: list[SearchHit]
    total: int
    offset: int
    limit: int


def _filter_sql(filters: Filters) -> tuple[str, list]:
    clauses, params = [], []
    if filters.statuses:
        clauses.append(f"d.status in ({', '.join('?' for _ in filters.statuses)})")
        params += filters.statuses
    else:
        clauses.append("d.status != 'replaced'")
    for folder in filters.folders:
        # A folder of that name anywhere on the path (paths are stored absolute).
        clauses.append("(instr(d.path, ?) > 0 or substr(d.path, 1, ?) = ?)")
        params += [f"/{folder}/", len(folder) + 1, f"{folder}/"]
    if filters.formats:
        clauses.append(f"lower(d.format) in ({', '.join('?' for _ in filters.formats)})")
        params += filters.formats
    if filters.date_from:
        clauses.append("d.date >= ?")
        params.append(filters.date_from)
    if filters.date_to:
        clauses.append("substr(d.date, 1, ?) <= ?")
        params += [len(filters.date_to), filters.date_to]
    if filters.methods:
        clauses.append(
            "exists (select 1 from summaries m where m.document_id = d.id "
            f"and m.method in ({', '.join('?' for _ in filters.methods)}))"
        )
        params += filters.methods
    if filters.has_reference:
        clauses.append(has_reference_condition("d"))
    if filters.has_flags:
        clauses.append(
            "exists (select 1 from summaries fs join flags f on f.summary_id = fs.id where fs.document_id = d.id)"
        )
    return " and ".join(clauses), params


def _summary_method_sql(filters: Filters) -> tuple[str, list]:
    if filters.methods:
        return f"s.method in ({', '.join('?' for _ in filters.methods)})", list(filters.methods)
    return f"s.method not in ({', '.join('?' for _ in _NOT_SEARCHED_METHODS)})", list(_NOT_SEARCHED_METHODS)


def search_documents(
    db: sqlite_utils.Database, query: ParsedQuery, offset: int = 0, limit: int = 20, snippets: bool = True
) -> SearchPage:
    """One page of documents matching ``query``, best first, with the total count
    (``limit=-1``: every match; ``snippets=False``: without snippets)."""
    where, where_params = _filter_sql(query.filters)
    columns = "d.id, d.record_key, d.path, d.title, d.date, d.format, d.status"
    documents = f"documents d indexed by {SEARCH_DOCUMENTS_INDEX}"
    if query.match is None:
        sql = (
            f"with listed(document_id, date) as materialized (select d.id, d.date from {documents} where {where}) "
            "select (select count(*) from listed), document_id, null from listed "
            "order by date is null, date desc, document_id desc limit ? offset ?"
        )
        rows = _listed(db, columns, documents, db.execute(sql, [*where_params, limit, offset]).fetchall())
    else:
        extra = _summary_only_hits(db, query)
        weights = ", ".join(str(w) for w in _COLUMN_WEIGHTS)
        if query.filters.is_empty():
            # Only the default filter: leaving out the few replaced versions (if any)
            # needs no look-up per hit.
            text_join, text_where, text_params = "", "", []
            if db.execute("select 1 from documents where status = 'replaced' limit 1").fetchone():
                text_where = "and documents_fts.rowid not in (select id from documents where status = 'replaced')"
        else:
            # Filters in the same query: bm25 is computed only for the hits that pass them.
            text_join = f"join {documents} on d.id = documents_fts.rowid"
            text_where, text_params = f"and {where}", where_params
        extra_sql = (
            "with extra(document_id, score) as "
            "(select json_extract(value, '$[0]'), json_extract(value, '$[1]') from json_each(?)) "
        )
        from_text = f"from documents_fts {text_join} where documents_fts match ? {text_where}"
        from_extra = f"from extra join {documents} on d.id = extra.document_id where {where}"
        params = [json.dumps(extra), query.match, *text_params, *where_params]
        hits_sql = (
            f"select documents_fts.rowid, bm25(documents_fts, {weights}) {from_text} "
            f"union all select extra.document_id, extra.score {from_extra}"
        )
        if query.filters.is_empty():
            # Counting needs no ranking and the page only the best few: two queries
            # cost less than ranking every hit into a list kept for both.
            total = db.execute(
                f"{extra_sql} select (select count(*) {from_text}) + (select count(*) {from_extra})", params
            ).fetchone()[0]
            page = db.execute(f"{extra_sql} {hits_sql} order by 2, 1 limit ? offset ?", [*params, limit, offset])
            ranked = [(total, document_id, score) for document_id, score in page]
        else:
            # With filters, looking each hit up is the larger cost: once, for both.
            ranked = db.execute(
                f"{extra_sql}, ranked(document_id, score) as materialized ({hits_sql}) "
                "select (select count(*) from ranked), document_id, score from ranked "
                "order by score, document_id limit ? offset ?",
                [*params, limit, offset],
            ).fetchall()
        rows = _listed(db, columns, documents, ranked)
    hits = [SearchHit(*row[:8]) for row in rows]
    total = rows[0][8] if rows else _count(db, query, offset)
    if query.match is not None and snippets:
        _add_snippets(db, hits, query)
    return SearchPage(hits=hits, total=total, offset=offset, limit=limit)


def _summary_only_hits(db: sqlite_utils.Database, query: ParsedQuery) -> list[list]:
    """``[document_id, score]`` of the documents that only a generated summary matches
    (their own text does not), scored by their best summary match, damped."""
    method_sql, method_params = _summary_method_sql(query.filters)
    # "pump NOT diesel" must not find, through a summary, a document that mentions diesel.
    excluded_sql, excluded_params = "", []
    if query.excluded:
        excluded_sql = "and s.document_id not in (select rowid from documents_fts where documents_fts match ?)"
        excluded_params = [query.excluded]
    best: dict[int, float] = {}
    for document_id, score in db.execute(
        f"""
        select s.document_id, bm25(summaries_fts) from summaries_fts
        join summaries s indexed by {SEARCH_SUMMARIES_INDEX} on s.id = summaries_fts.rowid
        where summaries_fts match ? and {method_sql} {excluded_sql}
        and summaries_fts.rowid in (select summary_id from sentence_sources where similarity < {VERBATIM_SIMILARITY})
        and s.document_id not in (select rowid from documents_fts where documents_fts match ?)
        """,
        [query.match, *method_params, *excluded_params, query.match],
    ):
        best[document_id] = min(score, best.get(document_id, score))
    return [[document_id, _SUMMARY_ONLY_WEIGHT * score] for document_id, score in best.items()]


def _listed(db: sqlite_utils.Database, columns: str, documents: str, ranked: list[tuple]) -> list[tuple]:
    """Rows of (columns..., score, total) for a page of ranked ``(total, id, score)``."""
    if not ranked:
        return []
    found = {
        row[0]: row
        for row in db.execute(
            f"select {columns} from {documents} where d.id in (select value from json_each(?))",
            [json.dumps([row[1] for row in ranked])],
        )
    }
    return [(*found[document_id], score, total) for total, document_id, score in ranked]


def _count(db: sqlite_utils.Database, query: ParsedQuery, offset: int) -> int:
    """The total when the page asked for is past the end (no row carried the count)."""
    if offset == 0:
        return 0
    return search_documents(db, query, offset=0, limit=1).total


def flatten(text: str) -> str:
    """Whitespace runs (line breaks included) as single spaces."""
    return _BLANKS.sub(" ", text).strip()


def _add_snippets(db: sqlite_utils.Database, hits: list[SearchHit], query: ParsedQuery) -> None:
    """The page's snippets: of each document's text, and of its first matching
    summary of each method (every budget of a method says much the same)."""
    document_ids = [hit.document_id for hit in hits]
    texts = _snippets(db, "documents_fts", -1, query.match, document_ids)
    method_sql, method_params = _summary_method_sql(query.filters)
    summaries = db.execute(
        "select s.document_id, s.id, s.method, s.params from summaries s "
        f"where s.document_id in (select value from json_each(?)) and {method_sql} order by s.method, s.id",
        [json.dumps(document_ids), *method_params],
    ).fetchall()
    summary_texts = _snippets(db, "summaries_fts", 0, query.match, [row[1] for row in summaries])
    by_id = {hit.document_id: hit for hit in hits}
    for hit in hits:
        if MARK_START in texts.get(hit.document_id, ""):
            hit.snippet = flatten(texts[hit.document_id])
    seen_methods = set()
    for document_id, summary_id, method, params in summaries:
        if (document_id, method) in seen_methods or summary_id not in summary_texts:
            continue
        seen_methods.add((document_id, method))
        by_id[document_id].summary_matches.append(
            SummaryMatch(method, json.loads(params), flatten(summary_texts[summary_id]))
        )


def _snippets(db: sqlite_utils.Database, table: str, column: int, match: str, rowids: list[int]) -> dict[int, str]:
    """Snippets of those of ``rowids`` that match, by rowid. A prefix term ("insp"*)
    is expanded over the whole index each time the index is opened, so a query with
    one reads the hits between the lowest and highest rowid in one pass instead of
    looking each row up (tens of milliseconds a look-up at 100,000 documents); a
    plain term's look-ups cost less than that pass."""
    if not rowids:
        return {}
    snippet = f"snippet({table}, {column}, ?, ?, ' … ', {_SNIPPET_TOKENS})"
    wanted = json.dumps(rowids)
    if '"*' in match:
        # "+rowid": the list filters the pass, it is not handed to the index as look-ups.
        sql = (
            f"select rowid, {snippet} from {table} where {table} match ? and rowid between ? and ? "
            "and +rowid in (select value from json_each(?))"
        )
        params = [MARK_START, MARK_END, match, min(rowids), max(rowids), wanted]
    else:
        sql = f"select rowid, {snippet} from {table} where {table} match ? and rowid in (select value from json_each(?))"
        params = [MARK_START, MARK_END, match, wanted]
    return dict(db.execute(sql, params).fetchall())


@dataclass
class DocumentHeading:
    id: int
    title: str | None
    record_key: str


def document_heading(db: sqlite_utils.Database, document_id: int) -> DocumentHeading | None:
    row = db.execute("select id, title, record_key from documents where id = ?", [document_id]).fetchone()
    return DocumentHeading(*row) if row else None


def document_formats(db: sqlite_utils.Database) -> list[str]:
    return [row[0] for row in db.execute("select distinct format from documents order by format")]


def summary_methods(db: sqlite_utils.Database) -> list[str]:
    return [row[0] for row in db.execute("select distinct method from summaries order by method")]
