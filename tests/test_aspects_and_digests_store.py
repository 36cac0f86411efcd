"""Aspect summaries and digests kept in the store: provenance, near-duplicates,
reruns, the selection, the command line. Documents are ACLSum papers (Takeshita et
al. 2024; the ``aclsum`` package), stored as a run stores documents."""

from __future__ import annotations

import html
import json
import sqlite3
from dataclasses import replace

import pytest
from click.testing import CliRunner

from store import Store
from store.aspect_records import CitedSpan, DigestLine, DocumentSelection, StoredDigest
from store.errors import UsageError
from store.schema import SCHEMA_VERSION, open_database
from summarize.cli import main
from summarize.methods.aspects.definitions import PAPER_ASPECTS
from summarize.methods.aspects.relevance import QueryRelevance
from summarize.methods.budget import Budget
from summarize.methods.digests import DigestSummarizer
from summarize.reading.datasets import line_segmentation, load_aclsum_aspects
from summarize.runs.aspect_runs import summarize_aspects
from summarize.runs.digest_runs import make_digest, read_digest, rerun_digest

PAPERS = 14


def _store_papers(db_path: str, documents) -> None:
    store = Store(db_path)
    run_id = store.runs.begin("test", {})
    for document in documents:
        store.add_document(document, line_segmentation(document), run_id)
    store.runs.finish(run_id, "completed", {})
    store.close()


@pytest.fixture()
def paper_store(tmp_path):
    documents = load_aclsum_aspects("val", limit=PAPERS)
    for index, document in enumerate(documents):
        document.date = f"20{10 + index:02d}-06-01"
    # A second report repeating one sentence of the first, word for word: a
    # near-duplicate across documents that a digest must merge.
    first = documents[0]
    echoed = first.text.split("\n")[3]
    twin = replace(documents[1], record_key="aclsum-aspects/echo", path="aclsum/echo",
                   text=documents[1].text + "\n" + echoed, sha256="e" * 64, date="2030-01-01")
    db_path = str(tmp_path / "papers.sqlite")
    _store_papers(db_path, [*documents, twin])
    return db_path, documents, echoed


def _document_sentences(db) -> set[tuple[int, int, int]]:
    return {tuple(row) for row in db.execute('select document_id, start, "end" from document_sentences')}


def test_schema_version_counts_the_new_migration(tmp_path):
    db = open_database(str(tmp_path / "s.sqlite"))
    assert db.execute("pragma user_version").fetchone()[0] == SCHEMA_VERSION
    assert {"aspect_summaries", "aspect_sentences", "digests", "digest_sentences", "digest_citations"} <= set(
        db.table_names()
    )


def test_aspect_summaries_are_stored_with_spans_and_a_rerun_adds_nothing(paper_store):
    db_path, documents, _ = paper_store
    first = summarize_aspects(db_path, aspects=PAPER_ASPECTS)
    first_rows = [row.as_dict() for row in first.rows]
    assert first.added == (PAPERS + 1) * 3 and first.kept == 0
    db = open_database(db_path)
    texts = dict(db.execute("select id, text from documents").fetchall())
    for row in first_rows:
        assert (row["addressed"] and row["sentences"]) or (not row["addressed"] and not row["sentences"])
        for sentence in row["sentences"]:
            assert texts[row["document_id"]][sentence["start"]:sentence["end"]] == sentence["text"]
            assert (row["document_id"], sentence["start"], sentence["end"]) in _document_sentences(db)
    counts = db.execute("select count(*) from aspect_summaries").fetchone()[0]
    again = summarize_aspects(db_path, aspects=PAPER_ASPECTS)
    assert again.added == 0 and again.kept == (PAPERS + 1) * 3
    assert db.execute("select count(*) from aspect_summaries").fetchone()[0] == counts
    assert [r.aspect_summary_id for r in again.rows] == [r["aspect_summary_id"] for r in first_rows]


def test_digest_citations_near_duplicates_and_rerun(paper_store):
    db_path, documents, _ = paper_store
    summarizer = DigestSummarizer(budget=Budget(sentences=40), duplicate_threshold=0.8)
    outcome = make_digest(db_path, DocumentSelection(), name="all", summarizer=summarizer)
    assert outcome.added and outcome.version == 1 and outcome.documents == PAPERS + 1
    record = outcome.record.as_dict()
    db = open_database(db_path)
    texts = dict(db.execute("select id, text from documents").fetchall())
    stored_sentences = _document_sentences(db)
    for sentence in record["sentences"]:
        lead = sentence["citations"][0]
        assert lead["similarity"] == 1.0 and lead["text"] == sentence["text"]
        for citation in sentence["citations"]:
            assert texts[citation["document_id"]][citation["start"]:citation["end"]] == citation["text"]
            assert (citation["document_id"], citation["start"], citation["end"]) in stored_sentences
            assert citation["similarity"] >= 0.8
    leads = [sentence["citations"][0]["document_id"] for sentence in record["sentences"]]
    assert max(leads.count(d) for d in set(leads)) <= 2 and len(leads) > PAPERS
    # No two digest sentences at or above the near-duplicate threshold, measured with
    # the digest's own vectors (IDF over the selected documents).
    vectors = QueryRelevance().fit(list(texts.values())).sentence_vectors([s["text"] for s in record["sentences"]])
    similarity = (vectors @ vectors.T).toarray()
    for i in range(len(similarity)):
        for j in range(i + 1, len(similarity)):
            assert similarity[i, j] < 0.8
    rows_before = db.execute("select count(*) from digest_citations").fetchone()[0]
    again = rerun_digest(db_path, "all")
    assert not again.added and again.version == 1
    assert db.execute("select count(*) from digest_citations").fetchone()[0] == rows_before
    assert db.execute("select count(*) from runs where command = 'digest'").fetchone()[0] == 1


def test_near_duplicate_sentences_from_two_documents_are_merged(paper_store):
    db_path, documents, echoed = paper_store
    outcome = make_digest(db_path, DocumentSelection(), name="echo", summarizer=DigestSummarizer(
        budget=Budget(sentences=400), mmr_lambda=1.0, per_document=None))
    holders = [s for s in outcome.record.as_dict()["sentences"] if any(c["text"] == echoed for c in s["citations"])]
    assert len(holders) == 1
    cited = [c["document_id"] for c in holders[0]["citations"] if c["text"] == echoed]
    assert len(cited) == 2 and len(set(cited)) == 2


def test_a_changed_archive_makes_a_new_version_and_the_old_one_stays(paper_store):
    db_path, documents, _ = paper_store
    selection = DocumentSelection(since="2012", until="2016")
    first = make_digest(db_path, selection, name="window")
    assert first.documents == 5
    extra = load_aclsum_aspects("test", limit=1)[0]
    extra.date = "2014-02-02"
    _store_papers(db_path, [extra])
    second = rerun_digest(db_path, "window")
    assert second.added and second.version == 2 and second.documents == 6
    assert read_digest(db_path, "window", version=1).documents == first.record.documents


def test_selection_by_query_folder_dates_and_status(paper_store):
    db_path, documents, _ = paper_store
    db = Store(db_path)
    title_word = documents[2].title.split()[0]
    by_query = {i for i, _ in db.digests.select(DocumentSelection(query=title_word))}
    assert by_query and all(title_word.lower() in db.queries.resolve(str(i))["title"].lower() for i in by_query)
    assert len(db.digests.select(DocumentSelection(folder="aclsum/val"))) == PAPERS
    assert len(db.digests.select(DocumentSelection(folder="aclsum"))) == PAPERS + 1
    assert len(db.digests.select(DocumentSelection(until="2011"))) == 2
    assert db.digests.select(DocumentSelection(status="missing")) == []
    # The query grammar `find` uses: filters and operators work in a digest's query.
    assert len(db.digests.select(DocumentSelection(query="format:aclsum-sentences"))) == PAPERS + 1
    without = {i for i, _ in db.digests.select(DocumentSelection(query=f"format:aclsum-sentences introduction NOT {title_word}"))}
    assert without and not without & by_query
    with pytest.raises(UsageError):
        db.digests.select(DocumentSelection(query="colour:red"))


def test_cli_aspects_and_digest_commands(paper_store, tmp_path):
    db_path, documents, _ = paper_store
    runner = CliRunner()
    job = tmp_path / "job.toml"
    job.write_text('[aspects.outcome]\nquestion = "What are the results?"\nphrases = ["results show", "outperforms"]\n')
    result = runner.invoke(main, ["aspects", "1", "2", "--db", db_path, "--job", str(job), "--json"])
    assert result.exit_code == 0, result.output
    payload = json.loads(result.stdout)
    assert {row["aspect"] for row in payload["aspect_summaries"]} == {"outcome"} and payload["caution"]
    result = runner.invoke(main, ["aspects", "--db", db_path, "--aspect", "nonsense"])
    assert result.exit_code == 2 and "unknown aspect" in result.output
    out = tmp_path / "digest.html"
    result = runner.invoke(main, ["digest", "new", "--db", db_path, "--name", "d1", "--budget", "4",
                                  "--out", str(out), "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["digest"]["name"] == "d1" and "Summaries are finding aids" in out.read_text()
    result = runner.invoke(main, ["digest", "list", "--db", db_path, "--json"])
    assert [row["name"] for row in json.loads(result.stdout)] == ["d1"]
    result = runner.invoke(main, ["digest", "show", "d1", "--db", db_path])
    assert result.exit_code == 0 and "←" in result.output
    result = runner.invoke(main, ["digest", "show", "nope", "--db", db_path])
    assert result.exit_code == 1 and "no digest 'nope'" in result.output
    result = runner.invoke(main, ["digest", "new", "--db", db_path, "--query", "zzzqqqxxy"])
    assert result.exit_code == 1 and "matches no document" in result.output


def test_the_store_stays_readable_by_plain_sqlite(paper_store):
    db_path, _, _ = paper_store
    make_digest(db_path, DocumentSelection(), name="plain")
    with sqlite3.connect(db_path) as connection:
        assert connection.execute("pragma integrity_check").fetchone()[0] == "ok"
        assert connection.execute("select count(*) from digest_sentences").fetchone()[0] > 0


@pytest.mark.parametrize("fmt", ["md", "html", "json"])
def test_digest_files_carry_the_caution_and_escape_document_text(tmp_path, fmt):
    from summarize.output.answers import write_digest
    from summarize.output.caution import CAUTION

    citation = CitedSpan(7, "/archive/INC-1.html", "t", "2025-01-02", 0, 30, 1.0, "Portal ran <script>alert(1)</script>")
    record = StoredDigest(1, "x", 1, {"query": "portal"}, {"aspect": None}, [7], {}, 1, "2025-01-03",
                          (DigestLine(0, 0.5, citation.text, (citation,)),))
    out = write_digest(record, fmt, str(tmp_path / f"digest.{fmt}"))
    text = out.read_text(encoding="utf-8")
    caution = {"md": CAUTION, "html": html.escape(CAUTION)}.get(fmt)
    assert (caution in text) if caution else json.loads(text)["caution"] == CAUTION
    assert "INC-1.html" in text
    if fmt == "html":
        assert "<script>" not in text and "&lt;script&gt;" in text
    assert [p.name for p in tmp_path.iterdir()] == [f"digest.{fmt}"]


def test_the_review_site_lists_and_shows_digests_with_links_to_the_cited_documents(paper_store):
    from bs4 import BeautifulSoup

    from summarize.output.caution import CAUTION
    from summarize.output.site.app import create_app

    db_path, _, _ = paper_store
    record = make_digest(db_path, DocumentSelection(since="2012"), name="from-2012", aspect=PAPER_ASPECTS[2]).record
    client = create_app(db_path).test_client()
    local = {"Host": "127.0.0.1:8765"}
    listing = client.get("/digests", headers=local)
    assert listing.status_code == 200 and b"from-2012" in listing.data
    page = client.get("/digests/from-2012", headers=local)
    soup = BeautifulSoup(page.data.decode("utf-8"), "html.parser")
    assert page.status_code == 200 and CAUTION in soup.select_one(".caution").get_text()
    header = " ".join(soup.select_one("main h1 + p").get_text().split())
    assert header.endswith(f"selection: since 2012, status active; aspect: {PAPER_ASPECTS[2].question}")
    assert [" ".join(li.p.get_text().split()) for li in soup.select("main > ol > li")] == [
        " ".join(s.text.split()) for s in record.sentences
    ]
    linked = {a["href"] for a in soup.select("main ol ul a")}
    assert linked == {f"/document/{c.document_id}" for s in record.sentences for c in s.citations}
    assert client.get("/digests/none-such", headers=local).status_code == 404
