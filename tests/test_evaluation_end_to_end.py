"""score, compare and report end to end on a small invented archive (texts written
for this test, in a made-up water utility; references in NAME.summary.txt sidecars).
What is checked against outside sources lives in the other evaluation tests; here the
checks are that the pieces are wired together as documented: matched budgets, every
table labelled with its budget, reruns, escaping, and the report's self-containment."""

from __future__ import annotations

import json
import re
import sqlite3

import pytest
from click.testing import CliRunner

from store.records import SourceLink, Span, Summary, SummarySentence
from store.store import Store
from summarize.cli import main
from summarize.evaluation.matched import BUDGET_RULE_KEY
from summarize.methods.budget import Budget, count_words
from summarize.runs.runner import run_archive

PLANTED = "<script>alert('x')</script>"

REPORTS = {
    "brackenmoor_pump_station_inspection": (
        f"Brackenmoor pump station inspection {PLANTED}",
        "Inspectors visited the Brackenmoor pump station on 3 March. Pump two ran with strong vibration "
        "during the test. The bearing housing of pump two was hot to the touch. Valve seals on the inlet "
        "were worn but held pressure. The control panel alarms all worked when tested. "
        f"A note in the log read {PLANTED} and was reported to the systems team. "
        "The crew recommended replacing the pump two bearing before the summer demand peak. "
        "Cleaning of the wet well is due in the autumn.",
        "Pump two at Brackenmoor vibrates and its bearing runs hot; the bearing should be replaced before summer.",
    ),
    "pellow_street_main_burst": (
        "Pellow Street main burst report",
        "A water main burst under Pellow Street at six in the morning on 14 January. "
        "Supply to ninety homes was cut for five hours. The night crew isolated the main at two valves. "
        "The pipe was cast iron laid in the 1950s and had corroded along its underside. "
        "A temporary repair clamp was fitted by eleven. Traffic was diverted along Mill Row for the day. "
        "The section of main is listed for renewal next year.",
        "A corroded cast iron main burst under Pellow Street, cutting supply to ninety homes for five hours until a clamp was fitted.",
    ),
    "ashdown_reservoir_algae_watch": (
        "Ashdown reservoir algae watch",
        "Weekly samples at Ashdown reservoir found rising algae counts in late July. "
        "Water temperature at the surface reached twenty two degrees. The treatment works raised the "
        "carbon dose as a precaution. No taste or odour complaints were received. "
        "Sampling moved to twice weekly until counts fall. Boats were kept off the water for two weeks.",
        "Algae counts rose at Ashdown reservoir in late July; the carbon dose was raised and sampling doubled.",
    ),
    "depot_fire_drill_minutes": (
        "Minutes of the depot fire drill review",
        "The fire drill at the Kestrel Lane depot took nine minutes to clear the building. "
        "The target time is six minutes. Two fire doors were found propped open. "
        "The assembly point sign had faded and could not be read from the gate. "
        "Staff on the night shift had not been briefed on the new route. "
        "The review asked for new signs, door checks each week and a briefing for every shift.",
        "The depot fire drill took nine minutes against a six minute target; doors were propped open and signs faded.",
    ),
    "meter_reading_backlog_note": (
        "Meter reading backlog note",
        "Meter readings in the northern district fell three weeks behind in February. "
        "Snow kept readers off rural routes for eight days. Two readers were on long term leave. "
        "Estimated bills went to four hundred customers. Complaints about estimates doubled. "
        "Agency staff will cover the rural routes in March to clear the backlog.",
        "Snow and staff leave put northern meter readings three weeks behind, so four hundred customers got estimated bills.",
    ),
}


@pytest.fixture(scope="module")
def archive_store(tmp_path_factory):
    folder = tmp_path_factory.mktemp("archive")
    for name, (title, body, reference) in REPORTS.items():
        (folder / f"{name}.txt").write_text(f"{title}\n\n{body}\n", encoding="utf-8")
        (folder / f"{name}.summary.txt").write_text(reference + "\n", encoding="utf-8")
    db = folder.parent / "store.sqlite"
    report = run_archive([folder], str(db), budget=Budget(sentences=2))
    assert report.documents_seen == len(REPORTS)
    result = CliRunner().invoke(main, ["score", "--db", str(db), "--json"])
    assert result.exit_code == 0, result.output
    return db, json.loads(result.stdout)


def rows(db, sql, params=()):
    with sqlite3.connect(db) as conn:
        return conn.execute(sql, params).fetchall()


def test_score_adds_matched_budget_summaries_and_oracles(archive_store):
    db, outcome = archive_store
    n = len(REPORTS)
    assert outcome["summaries_added"] == 4 * n  # lead, tfidf, textrank, oracle at the matched budget
    assert outcome["oracles_added"] == n  # the oracle beside the run's 2-sentence budget
    assert outcome["summaries_scored"] == 3 * n + 4 * n + n
    matched = rows(db, "select s.params, s.param_hash, r.text, s.method from summaries s "
                       "join reference_summaries r on r.document_id = s.document_id")
    for params, _, reference, _ in matched:
        params = json.loads(params)
        if params.get(BUDGET_RULE_KEY):
            assert params["budget"] == {"words": count_words(reference)}
    hashes = {(method, json.loads(p).get(BUDGET_RULE_KEY) is not None, h) for p, h, _, method in matched}
    for method in ("lead", "tfidf", "textrank"):
        assert {h for m, rule, h in hashes if m == method and rule}.isdisjoint(
            {h for m, rule, h in hashes if m == method and not rule}
        )
    assert rows(db, "select count(*) from summaries s where not exists "
                    "(select 1 from scores c where c.summary_id = s.id)")[0][0] == 0


def test_rerun_scores_nothing_new(archive_store):
    db, _ = archive_store
    result = CliRunner().invoke(main, ["score", "--db", str(db), "--json"])
    outcome = json.loads(result.stdout)
    assert (outcome["summaries_added"], outcome["oracles_added"], outcome["summaries_scored"]) == (0, 0, 0)


def test_compare_labels_every_budget_and_shows_differences(archive_store):
    db, _ = archive_store
    result = CliRunner().invoke(main, ["compare", "--db", str(db), "--json", "--resamples", "200"])
    assert result.exit_code == 0, result.output
    comparison = json.loads(result.stdout)
    budgets = [group["budget"] for group in comparison["budgets"]]
    assert budgets == ["matched: each reference's length in words", "2 sentences"]
    for group in comparison["budgets"]:
        names = [s["name"] for s in group["systems"]]
        assert names[0] == "lead" and names[-1] == "oracle"
        for system in group["systems"]:
            assert system["documents"] == len(REPORTS)
            interval = system["scores"]["rouge2"]
            assert interval["low"] <= interval["mean"] <= interval["high"]
            if system["name"] != "lead":
                assert set(system["difference_from_lead"]) == {"rouge1", "rouge2", "rougeL", "rougeLsum"}
    text = CliRunner().invoke(main, ["compare", "--db", str(db), "--measure", "recall"]).stdout
    assert "Budget: matched: each reference's length in words" in text and "Budget: 2 sentences" in text
    assert "finding aids" in text and "retention" in text
    only = json.loads(CliRunner().invoke(main, ["compare", "--db", str(db), "--budget", "reference", "--json"]).stdout)
    assert [g["budget"] for g in only["budgets"]] == budgets[:1]


def test_report_is_one_self_contained_escaped_html_file(archive_store, tmp_path):
    db, _ = archive_store
    out = tmp_path / "report.html"
    result = CliRunner().invoke(main, ["report", "--db", str(db), "--out", str(out), "--resamples", "200"])
    assert result.exit_code == 0, result.output
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]
    page = out.read_text(encoding="utf-8")
    assert len(re.findall(r"src='data:image/png;base64,[A-Za-z0-9+/=]+'", page)) == 4  # 2 budgets x 2 charts
    assert not re.search(r"(src|href)=['\"](?!data:)", page)
    assert "<script" not in page
    assert "&lt;script&gt;alert(&#x27;x&#x27;)&lt;/script&gt;" in page
    assert "Brackenmoor pump station inspection &lt;script&gt;" in page
    assert "finding aids" in page and "retention rules" in page
    assert "<mark class='pick'>" in page or "<mark class='both'>" in page


def test_missing_store_is_an_error_not_a_new_file(tmp_path):
    result = CliRunner().invoke(main, ["score", "--db", str(tmp_path / "none.sqlite")])
    assert result.exit_code != 0 and not (tmp_path / "none.sqlite").exists()


def test_summaries_with_their_own_length_are_reported_apart(tmp_path):
    folder = tmp_path / "archive"
    folder.mkdir()
    for name in list(REPORTS)[1:3]:
        title, body, reference = REPORTS[name]
        (folder / f"{name}.txt").write_text(f"{title}\n\n{body}\n", encoding="utf-8")
        (folder / f"{name}.summary.txt").write_text(reference + "\n", encoding="utf-8")
    db = tmp_path / "own.sqlite"
    run_archive([folder], str(db), methods=["lead"])
    # A generated summary whose length the model settled, as the seq2seq method stores it.
    store = Store(str(db))
    run_id = store.runs.begin("test", {})
    for document_id, text in rows(db, "select id, text from documents"):
        sentence = SummarySentence("Supply was cut and later restored.", 0.0, (SourceLink(Span(0, len(text)), 0.4),))
        params = {"model": "invented", "generation": {"min_new_tokens": 8, "max_new_tokens": 60}}
        store.add_summary(document_id, run_id, Summary("seq2seq", params, [sentence]))
    store.close()
    CliRunner().invoke(main, ["score", "--db", str(db)])
    comparison = json.loads(CliRunner().invoke(main, ["compare", "--db", str(db), "--json"]).stdout)
    groups = {group["budget"]: [s["name"] for s in group["systems"]] for group in comparison["budgets"]}
    assert groups["the method's own length: 8 to 60 generated tokens"] == ["seq2seq"]
    assert "seq2seq" not in groups["matched: each reference's length in words"]
    assert list(groups)[-1].startswith("the method's own length")
