"""The review site through Flask's test client: pages, downloads, and what keeps it a
local read-only viewer (Host check, security headers, a store it cannot write, no
pickle loaded, every document string escaped)."""

from __future__ import annotations

import codecs
import csv
import hashlib
import io
import json
import os
import pickle
import re
import signal
import sqlite3
import subprocess
import sys
import urllib.request
from pathlib import Path

import pytest
from bs4 import BeautifulSoup

from store.errors import StoreNotReadable
from store.store import Store
from summarize.output.caution import CAUTION
from summarize.output.site.app import create_app, marked
from summarize.output.site.source_marks import SourceMarks
from tests.review_store import PAYLOADS, build_review_store

LOCAL = {"Host": "127.0.0.1:8765"}


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    path = tmp_path_factory.mktemp("site") / "store.sqlite"
    ids = build_review_store(path)
    app = create_app(path)
    return path, ids, app.test_client()


def _get(client, url: str, status: int = 200):
    response = client.get(url, headers=LOCAL)
    assert response.status_code == status, response.data[:500]
    return response


def _soup(response) -> BeautifulSoup:
    return BeautifulSoup(response.data.decode("utf-8"), "html.parser")


def test_every_page_carries_the_caution_and_the_security_headers(site):
    _, ids, client = site
    for url in ("/", "/?q=bollards", f"/document/{ids['long']}", "/compare", "/?q=(pump", "/document/999999"):
        response = client.get(url, headers=LOCAL)
        page = _soup(response)
        assert CAUTION in page.select_one(".caution").get_text(), url
        policy = response.headers["Content-Security-Policy"]
        assert "default-src 'none'" in policy and "script-src 'self'" in policy and "frame-ancestors 'none'" in policy
        assert response.headers["X-Content-Type-Options"] == "nosniff"
        assert response.headers["Cache-Control"] == "no-store"
        assert not page.find_all("script", src=lambda s: s and s.startswith("http"))
        assert not page.find_all("link", href=lambda s: s and s.startswith("http"))


@pytest.mark.parametrize("host", ["evil.example", "evil.example:8765", "127.0.0.1.evil.example", "localhost.:80"])
def test_foreign_host_headers_are_refused(site, host):
    _, _, client = site
    assert client.get("/", headers={"Host": host}).status_code == 400


def test_only_get_and_head(site):
    _, _, client = site
    assert client.post("/", headers=LOCAL).status_code == 405
    assert client.delete("/document/1", headers=LOCAL).status_code == 405


def test_the_store_is_opened_read_only(site):
    path, _, client = site
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    store = Store(str(path), read_only=True)
    with pytest.raises(sqlite3.OperationalError):
        store.db.execute("delete from documents")
    store.close()
    for url in ("/", "/?q=bollards", "/document/1", "/compare", "/download.csv?q=bollards"):
        _get(client, url)
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before


def test_an_unusable_store_is_refused_with_a_message(tmp_path):
    with pytest.raises(StoreNotReadable, match="no such store"):
        create_app(tmp_path / "none.sqlite")
    junk = tmp_path / "junk.sqlite"
    junk.write_bytes(b"not a database at all" * 100)
    with pytest.raises(StoreNotReadable, match="junk.sqlite"):
        create_app(junk)


def test_no_pickle_is_loaded_by_any_page(site, monkeypatch):
    _, ids, client = site

    def refuse(*_args, **_kwargs):
        raise AssertionError("the site loaded a pickle")

    monkeypatch.setattr(pickle, "loads", refuse)
    monkeypatch.setattr(pickle, "load", refuse)
    for url in ("/?q=valves", f"/document/{ids['long']}", "/compare", "/download.jsonl?q=valves"):
        _get(client, url)


def test_payloads_render_as_text_everywhere(site):
    _, ids, client = site
    pages = [
        _get(client, f"/document/{ids['payload']}"),
        _get(client, "/?q=payload"),
        # A malformed query is echoed in its error message.
        _get(client, "/?q=" + PAYLOADS[1], status=400),
        _get(client, "/?q=report&folder=" + PAYLOADS[0]),
    ]
    for response in pages:
        page = _soup(response)
        # The only scripts and elements are the site's own.
        assert [s.get("src") for s in page.find_all("script")] == ["/static/site.js"]
        assert not page.find_all(["img", "svg", "iframe", "textarea"])
        for element in page.find_all(True):
            assert not any(name.startswith("on") for name in element.attrs), element
    document = _soup(pages[0])
    text = document.get_text()
    for payload in PAYLOADS[:6]:
        assert payload in text or payload.replace("{% raw %}", "") in text
    assert "{{ 7*7 }}" in text


def test_search_page_lists_one_hit_per_document_with_marked_snippets(site):
    _, ids, client = site
    page = _soup(_get(client, "/?q=struck"))
    hits = page.select("li.hit")
    assert len(hits) == 1
    assert hits[0].select_one("a.title")["href"] == f"/document/{ids['long']}"
    assert hits[0].select("p.snippet mark")
    assert not any("oracle" in s.get_text() for s in hits[0].select(".where"))
    missing = _soup(_get(client, "/?q=scour+valve"))
    assert missing.select_one(".status-missing").get_text() == "missing"


def test_malformed_query_gives_the_search_page_with_a_message(site):
    _, _, client = site
    page = _soup(_get(client, "/?q=%22relief+well", status=400))
    assert "quote is never closed" in page.select_one(".error").get_text()
    assert page.select_one("form.search")


def test_filters_and_paging(site):
    _, ids, client = site
    narrowed = _soup(_get(client, "/?q=&format=pdf&status=active"))
    assert [a["href"] for a in narrowed.select("li.hit a.title")] == [f"/document/{ids['inspection']}"]
    with_flags = _soup(_get(client, "/?has=flags"))
    assert [a["href"] for a in with_flags.select("li.hit a.title")] == [f"/document/{ids['long']}"]


def test_document_page_links_sentences_to_their_spans(site):
    path, ids, client = site
    page = _soup(_get(client, f"/document/{ids['long']}"))
    source = page.select_one("#source")
    text = sqlite3.connect(path).execute("select text from documents where id = ?", [ids["long"]]).fetchone()[0]
    assert source.get_text().replace("".join(s.get_text() for s in source.select("sup.users")), "") != ""
    anchors = {link["data-span"] for link in page.select("a.sentence")}
    assert anchors
    for anchor in anchors:
        target = page.find(id=anchor)
        assert target is not None, anchor
        _, start, end = anchor.split("-")
        pieces = "".join(m.get_text() for m in source.select("mark") if anchor in m["data-spans"].split())
        assert pieces == text[int(start):int(end)]
    labels = [h.get_text(" ", strip=True) for h in page.select("article.summary h3")]
    assert any("lead · 2 sentences" in label for label in labels)
    assert any("oracle" in label for label in labels)
    generated = page.select_one(".support")
    assert "supported by" in generated.get_text() and "0.62" in generated.get_text()
    assert "unsupported-number" in page.select_one(".flag").get_text()
    # Each marked piece says which summaries use it.
    first = source.select_one("mark")
    assert first["title"].startswith("Used by A:")


def test_document_page_says_where_its_date_came_from(site):
    path, _, client = site
    dated = sqlite3.connect(path).execute("select id, date from documents where date is not null").fetchone()
    page = _soup(_get(client, f"/document/{dated[0]}"))
    date = next(dd for dt, dd in zip(page.select("dl.meta dt"), page.select("dl.meta dd")) if dt.get_text() == "Date")
    assert date.get_text(" ", strip=True) == f"{dated[1]} (from document text)"

def test_duplicate_links_to_its_canonical_copy(site):
    _, ids, client = site
    page = _soup(_get(client, f"/document/{ids['duplicate']}"))
    assert page.select_one(".duplicate a")["href"] == f"/document/{ids['inspection']}"
    assert _get(client, "/document/999999", status=404)


def test_download_is_the_result_set_as_csv_and_jsonl(site):
    _, ids, client = site
    response = _get(client, "/download.csv?q=&status=active")
    assert response.headers["Content-Type"] == "text/csv; charset=utf-8"
    assert "attachment" in response.headers["Content-Disposition"]
    assert response.data.startswith(codecs.BOM_UTF8)
    rows = list(csv.DictReader(io.StringIO(response.data.decode("utf-8-sig"), newline="")))
    assert {row["status"] for row in rows} == {"active"}
    assert len({row["document_id"] for row in rows}) == len(rows)
    choice = rows[0]["method"]
    lines = _get(client, "/download.jsonl?q=bollards+OR+valves").data.decode("utf-8").splitlines()
    assert {json.loads(line)["method"] for line in lines} == {choice}
    assert {json.loads(line)["document_id"] for line in lines} == {ids["long"], ids["payload"]}


def test_comparison_page_links_best_and_worst_documents(tmp_path):
    from summarize.evaluation.scoring import score_store

    path = tmp_path / "scored.sqlite"
    ids = build_review_store(path)
    score_store(str(path))
    client = create_app(path).test_client()
    page = _soup(_get(client, "/compare"))
    assert page.select("table") and page.select("img[src^='data:image/png;base64,']")
    linked = {a["href"] for a in page.select(".examples a")}
    assert linked and linked <= {f"/document/{ids[name]}" for name in ("long", "inspection", "payload")}


def test_snippet_markers_become_balanced_marks():
    assert str(marked("a \ue000<b>\ue001 c")) == "a <mark>&lt;b&gt;</mark> c"
    assert str(marked("\ue000open")) == "<mark>open</mark>"


def test_overlapping_spans_are_cut_into_pieces():
    pieces = SourceMarks("abcdefghij", [(0, 4, "A"), (2, 6, "B"), (2, 6, "C"), (8, 20, "A")]).pieces()
    assert [(p.text, p.spans, p.anchors, p.users) for p in pieces] == [
        ("ab", ["src-0-4"], ["src-0-4"], ["A"]),
        ("cd", ["src-0-4", "src-2-6"], ["src-2-6"], ["A", "B", "C"]),
        ("ef", ["src-2-6"], [], ["B", "C"]),
        ("gh", [], [], []),
        ("ij", ["src-8-10"], ["src-8-10"], ["A"]),
    ]
    assert pieces[1].closes == ["A"] and pieces[2].closes == ["B C"]


def test_review_command_prints_its_address_and_serves_until_stopped(site):
    path, _, _ = site
    root = Path(__file__).resolve().parent.parent
    process = subprocess.Popen(
        [sys.executable, "-m", "summarize", "review", "--db", str(path), "--port", "0"],
        stderr=subprocess.PIPE, text=True, cwd=root, env={**os.environ, "PYTHONPATH": str(root)},
        # As from a terminal: a test run started in the background by a shell without
        # job control inherits SIGINT ignored, and so would the site.
        preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL),
    )
    try:
        line = process.stderr.readline()
        assert "http://127.0.0.1:" in line and "warning" not in line
        address = re.search(r"http://127\.0\.0\.1:\d+/", line).group(0)
        with urllib.request.urlopen(address + "?q=bollards", timeout=30) as response:
            assert response.status == 200 and b"INC-2025-030" in response.read()
    finally:
        process.send_signal(signal.SIGINT)
        process.wait(timeout=30)
