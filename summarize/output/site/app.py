"""The review site: a Flask application over one store, opened read-only.

Pages: search (``/``), one document (``/document/ID``), the comparison
(``/compare``), and downloads of a search's result set (``/download.csv``,
``/download.jsonl``). Templates are Jinja2 with autoescaping, so every string from a
document is escaped; the few HTML fragments made in Python (snippets, the report's
tables) escape their strings themselves and are marked safe.
"""

from __future__ import annotations

import io
from pathlib import Path

from flask import Flask, Response, abort, g, render_template, request, url_for
from markupsafe import Markup, escape

from store.digests import DigestNotFound
from store.errors import SummarizerError
from store.queries import DocumentNotFound
from store.search import FILTER_NAMES, STATUSES, ParsedQuery, add_filter, parse_query
from store.search_queries import MARK_END, MARK_START
from store.store import Store
from summarize.output.caution import CAUTION
from summarize.output.export import selected_rows, write_rows
from summarize.output.site.comparison_page import ComparisonPages
from summarize.output.site.document_view import document_view
from summarize.output.site.freshness import store_version
from summarize.output.site.security import secure, trusted_hosts
from summarize.output.summary_choice import summary_choices

PAGE_SIZE = 20
_FORM_FILTERS = tuple(name for name in FILTER_NAMES if name != "has")


def marked(snippet: str | None) -> Markup:
    """A snippet, escaped, with its match markers as <mark> elements."""
    if not snippet:
        return Markup("")
    parts, open_mark = [], False
    for piece in snippet.replace(MARK_END, MARK_START).split(MARK_START):
        parts.append(str(escape(piece)))
        parts.append("</mark>" if open_mark else "<mark>")
        open_mark = not open_mark
    parts.pop()
    if not open_mark:
        parts.append("</mark>")
    return Markup("".join(parts))


def _query_from_request() -> ParsedQuery:
    """The query box and the filter fields, parsed together."""
    parsed = parse_query(request.args.get("q", ""))
    for name in _FORM_FILTERS:
        for value in request.args.getlist(name):
            if value.strip():
                add_filter(parsed.filters, name, value.strip())
    for value in request.args.getlist("has"):
        add_filter(parsed.filters, "has", value)
    return parsed


def _page_number() -> int:
    try:
        return max(1, int(request.args.get("page", "1")))
    except ValueError:
        return 1


def create_app(db_path: str | Path, hosts: list[str] | None = None) -> Flask:
    """The site for the store at ``db_path``; ``hosts``: Host header names it answers to."""
    Store(str(db_path), read_only=True).close()  # refuse an unreadable store at start, not per request
    app = Flask(__name__)
    secure(app, hosts or trusted_hosts("127.0.0.1"))
    comparisons = ComparisonPages()
    # Whole-store facts (the summary choices, formats, methods) take a scan of the
    # store; they are kept until the store file changes.
    facts_cache: dict[tuple, dict] = {}

    def store_facts() -> dict:
        key = store_version(db_path)
        if key not in facts_cache:
            facts_cache.clear()
            facts_cache[key] = {
                "choices": summary_choices(g.store),
                "formats": g.store.queries.formats(),
                "methods": g.store.queries.methods(),
            }
        return facts_cache[key]

    def store_choices():
        return store_facts()["choices"]

    @app.before_request
    def connect() -> None:
        if request.method not in ("GET", "HEAD"):
            abort(405)
        g.store = Store(str(db_path), read_only=True)

    @app.teardown_request
    def disconnect(_error) -> None:
        store = g.pop("store", None)
        if store is not None:
            store.close()

    @app.context_processor
    def shared() -> dict:
        return {"caution": CAUTION, "marked": marked}

    @app.get("/")
    def search():
        page = _page_number()
        context = {"args": request.args, "statuses": STATUSES, "formats": store_facts()["formats"],
                   "methods": store_facts()["methods"]}
        try:
            parsed = _query_from_request()
        except SummarizerError as error:
            return render_template("search.html", error=str(error), results=None, **context), 400
        results = None
        if parsed.match is not None or not parsed.filters.is_empty():
            results = g.store.queries.search(parsed, offset=(page - 1) * PAGE_SIZE, limit=PAGE_SIZE)
        pages = {}
        if results is not None:
            base = request.args.to_dict(flat=False)
            if page > 1:
                pages["previous"] = url_for("search", **(base | {"page": page - 1}))
            if results.total > page * PAGE_SIZE:
                pages["next"] = url_for("search", **(base | {"page": page + 1}))
        return render_template(
            "search.html", error=None, results=results, page=page, pages=pages,
            choices=store_choices() if results and results.hits else [], **context,
        )

    @app.get("/document/<int:document_id>")
    def document(document_id: int):
        try:
            record = g.store.queries.show(str(document_id))
        except DocumentNotFound:
            abort(404)
        if record["document"]["id"] != document_id:
            abort(404)
        duplicate_of = record["document"].get("duplicate_of")
        canonical = g.store.queries.heading(duplicate_of) if duplicate_of else None
        return render_template("document.html", view=document_view(record), canonical=canonical)

    @app.get("/compare")
    def compare():
        budget = request.args.get("budget", "all")
        try:
            page = comparisons.page(g.store, db_path, budget)
        except (SummarizerError, ValueError) as error:
            return render_template("compare.html", error=str(error), page=None, budget=budget), 400
        return render_template("compare.html", error=None, page=page, budget=budget)

    @app.get("/download.<fmt>")
    def download(fmt: str):
        if fmt not in ("csv", "jsonl"):
            abort(404)
        try:
            parsed = _query_from_request()
        except SummarizerError as error:
            return Response(f"error: {error}\n", status=400, mimetype="text/plain")
        choices = store_choices()
        wanted = request.args.get("summaries")
        choice = next((c for c in choices if c.key == wanted), choices[0] if choices else None)
        if choice is None:
            abort(404)
        ids = [hit.document_id for hit in g.store.queries.search(parsed, limit=-1, snippets=False).hits]
        rank = {document_id: index for index, document_id in enumerate(ids)}
        rows = sorted(selected_rows(g.store, choice, document_ids=ids), key=lambda row: rank[row.document_id])
        out = io.StringIO()
        write_rows(rows, fmt, out)
        body = ("\ufeff" if fmt == "csv" else "") + out.getvalue()
        mimetype = "text/csv" if fmt == "csv" else "application/x-ndjson"
        response = Response(body.encode("utf-8"), mimetype=mimetype)
        response.headers["Content-Type"] = f"{mimetype}; charset=utf-8"
        response.headers["Content-Disposition"] = f'attachment; filename="summaries-{choice.key}.{fmt}"'
        return response

    @app.get("/digests")
    def digests():
        return render_template("digests.html", digests=g.store.digests.newest())

    @app.get("/digests/<name>")
    def digest(name: str):
        version = request.args.get("version", type=int)
        try:
            record = g.store.digests.record(name, version)
        except DigestNotFound:
            abort(404)
        return render_template("digest.html", digest=record)

    @app.errorhandler(404)
    def not_found(_error):
        return render_template("message.html", message="No such page or document."), 404

    return app
