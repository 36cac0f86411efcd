"""The demo's aspect table and digest, as `make demo` makes them: structure only
(spans, counts, reruns), no numbers the invented archive alone produces."""

from __future__ import annotations

import csv
import html
import json
import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from store import Store
from summarize.cli import main
from summarize.methods.aspects.definitions import REPORT_ASPECTS
from summarize.methods.aspects.references import aspect_references
from summarize.output.caution import CAUTION
from summarize.output.site.app import create_app

ROOT = Path(__file__).resolve().parent.parent
INCIDENT = "demo_archive/incidents/INC-2024-019_ps4_pump_bearing_failure.pdf"


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory):
    db = tmp_path_factory.mktemp("demo-answers") / "store.sqlite"
    previous = os.getcwd()
    os.chdir(ROOT)  # the Makefile's relative paths
    try:
        CliRunner().invoke(main, ["run", "demo_archive", "--db", str(db), "--methods", "lead", "--quiet"])
        yield db
    finally:
        os.chdir(previous)


def test_six_demo_reports_carry_aspect_labelled_references(demo_store):
    with Store(str(demo_store), read_only=True) as store:
        labelled = {}
        for version in store.documents.active():
            document, _ = store.documents.load(version.id)
            found = aspect_references(document, REPORT_ASPECTS)
            if found:
                labelled[Path(document.path).name] = set(found)
    assert len(labelled) == 6
    assert labelled["INC-2024-019_ps4_pump_bearing_failure.pdf"] == {"cause", "actions", "open_items"}


def test_the_demo_aspect_table_and_digest(demo_store, tmp_path):
    runner = CliRunner()
    previous = os.getcwd()
    os.chdir(ROOT)
    try:
        table = runner.invoke(main, ["aspects", INCIDENT, "--db", str(demo_store)])
        answers = runner.invoke(main, ["aspects", INCIDENT, "--db", str(demo_store), "--json"])
        out = tmp_path / "digest.html"
        digest = runner.invoke(main, ["digest", "new", "--db", str(demo_store), "--name", "incident-causes",
                                      "--folder", "demo_archive/incidents", "--aspect", "cause", "--budget", "6",
                                      "--out", str(out), "--json"])
        again = runner.invoke(main, ["digest", "rerun", "incident-causes", "--db", str(demo_store), "--json"])
    finally:
        os.chdir(previous)
    assert table.exit_code == 0 and "INC-2024-019" in table.stdout
    assert all(label in table.stdout for label in ("cause", "actions", "open items"))
    payload = json.loads(answers.stdout)
    assert payload["added"] == 0 and payload["kept"] == 3  # the table run stored them
    with Store(str(demo_store), read_only=True) as store:
        for row in payload["aspect_summaries"]:
            text = store.documents.text(row["document_id"])
            assert all(text[s["start"]:s["end"]] == s["text"] for s in row["sentences"])
        record = json.loads(digest.stdout)["digest"]
        assert 0 < len(record["sentences"]) <= 6 and out.exists()
        incident_ids = {store.queries.resolve(str(i))["id"] for i in record["documents"]}
        for sentence in record["sentences"]:
            for citation in sentence["citations"]:
                assert citation["document_id"] in incident_ids
                assert store.documents.text(citation["document_id"])[citation["start"]:citation["end"]] == citation["text"]
    assert json.loads(again.stdout)["added"] is False


def test_show_and_export_carry_the_aspect_answers(demo_store, tmp_path):
    runner = CliRunner()
    previous = os.getcwd()
    os.chdir(ROOT)
    try:
        stored = runner.invoke(main, ["aspects", INCIDENT, "--db", str(demo_store), "--json"])
        shown = runner.invoke(main, ["show", INCIDENT, "--db", str(demo_store)])
        record = json.loads(runner.invoke(main, ["show", INCIDENT, "--db", str(demo_store), "--json"]).stdout)
        outputs = {fmt: tmp_path / f"export.{fmt}" for fmt in ("csv", "jsonl", "md", "html")}
        for fmt, out in outputs.items():
            result = runner.invoke(main, ["export", "--db", str(demo_store), "--format", fmt, "--out", str(out)])
            assert result.exit_code == 0, result.output
    finally:
        os.chdir(previous)
    expected = {row["aspect"]: row for row in json.loads(stored.stdout)["aspect_summaries"]}
    answers = {answer["aspect"]: answer for answer in record["aspect_answers"]}
    assert set(answers) == set(expected) == {"cause", "actions", "open_items"}
    for name, answer in answers.items():
        assert answer["method"] == "aspect-lexrank" and answer["confidence"] == expected[name]["confidence"]
        assert [(s["start"], s["end"]) for s in answer["sentences"]] == [
            (s["start"], s["end"]) for s in expected[name]["sentences"]
        ]
        for sentence in answer["sentences"]:
            assert record["text"][sentence["start"]:sentence["end"]] == sentence["text"]
    cause = answers["cause"]
    assert shown.exit_code == 0 and "Aspect answers:" in shown.stdout and "open items" in shown.stdout
    first = cause["sentences"][0]
    assert f"from chars {first['start']}-{first['end']}" in shown.stdout
    assert shown.stdout.rstrip().endswith(CAUTION)
    rows = [json.loads(line) for line in outputs["jsonl"].read_text(encoding="utf-8").splitlines()]
    incident = next(row for row in rows if row["path"].endswith(Path(INCIDENT).name))
    assert {a["aspect"]: a["sentences"] for a in incident["aspect_answers"]} == {
        name: [{k: s[k] for k in ("position", "start", "end", "score", "text")} for s in answer["sentences"]]
        for name, answer in answers.items()
    }
    assert all(row["caution"] == CAUTION for row in rows)
    with outputs["csv"].open(encoding="utf-8-sig", newline="") as handle:
        table = list(csv.DictReader(handle))
    cell = next(row["aspect_answers"] for row in table if row["record_key"] == incident["record_key"])
    assert f"cause (aspect-lexrank, confidence {cause['confidence']:.2f}): " in cell
    assert f"[chars {first['start']}-{first['end']}" in cell
    for fmt in ("md", "html"):
        written = outputs[fmt].read_text(encoding="utf-8")
        assert "Aspect answers" in written and f"chars {first['start']}-{first['end']}" in written
        assert (html.escape(CAUTION) if fmt == "html" else CAUTION) in written
    # The review site's document page lists the same answers.
    page = create_app(demo_store).test_client().get(f"/document/{record['document']['id']}",
                                                    headers={"Host": "127.0.0.1:8765"})
    assert page.status_code == 200
    body = html.unescape(page.data.decode("utf-8"))
    assert "Aspect answers" in body and first["text"] in body
    assert f"chars {first['start']}–{first['end']}" in body and CAUTION in body
