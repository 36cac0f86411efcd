"""The house-style method's training, cross-validation, storage and run-time choice.

The archives here are invented inspection reports (sites, assets and wording made up
for the tests). Their reference summaries follow a fixed house style — the first
finding and the first action, lightly reworded — which the lead baseline misses,
since every report opens with routine background.
"""

from __future__ import annotations

import hashlib
import json
import random

import numpy as np
import pytest

from store.records import Document
from store.store import Store
from summarize.methods.budget import Budget
from summarize.methods.learned.held_out import CrossValidation
from summarize.methods.learned.house_style import TRUSTED_TYPES, HouseStyleSummarizer
from summarize.methods.learned.method_choice import AutoForRun, HouseStyleForRun
from summarize.methods.learned.sentence_features import FEATURE_NAMES
from summarize.methods.learned.training import MIN_REFERENCED_DOCUMENTS, train_in_store, usable_folds
from summarize.reading.split import split_document
from summarize.runs.runner import build_methods, run_archive

SITES = ["Harrow Fen pumping station", "Copley Ridge substation", "Ostley weir", "Brannock depot",
         "Quaymoor reservoir", "Selby Down culvert", "Tarn End booster", "Wickham Lade sluice"]
ASSETS = ["intake screen", "standby generator", "outlet valve", "cable trench", "roof drainage",
          "control panel", "fire door", "access ladder"]
DEFECTS = ["corrosion at the base plate", "a cracked housing", "water ingress", "loose fixings",
           "a failed alarm contact", "worn seals", "blocked drains", "missing guard rails"]
BACKGROUND = [
    "The site was visited as part of the routine inspection programme.",
    "The inspection followed the standard checklist for operational sites.",
    "Access was arranged with the duty supervisor on the morning of the visit.",
    "Weather on the day was dry and visibility was good throughout.",
    "Previous reports for the site were reviewed before the visit.",
    "The inspector was accompanied by a member of the operations team.",
]
NOTES = [
    "Photographs taken during the visit are held on the shared drive.",
    "Site records were signed off by the duty supervisor.",
    "The next routine inspection is due in twelve months.",
    "Contact details for the site team were confirmed.",
]


def invented_report(rng: random.Random, number: int) -> tuple[str, str]:
    """(text, reference summary) of one invented inspection report."""
    site = rng.choice(SITES)
    findings = [
        f"The {asset} at {site} showed {defect}." for asset, defect in zip(rng.sample(ASSETS, 3), rng.sample(DEFECTS, 3))
    ]
    actions = [f"Repair of the {findings[0].split(' at ')[0][4:]} is required within {rng.randint(2, 9)} weeks.",
               "The operations team should record the repair on the asset register."]
    text = "\n\n".join([
        f"Inspection report {number:03d}: {site}",
        "Background",
        " ".join(rng.sample(BACKGROUND, 4)),
        "Findings",
        " ".join(findings),
        "Actions",
        " ".join(actions),
        "Notes",
        " ".join(rng.sample(NOTES, 3)),
    ])
    reference = f"{findings[0]} {actions[0]}"
    return text, reference


def invented_documents(count: int, seed: int = 3) -> list[tuple[Document, str]]:
    rng = random.Random(seed)
    documents = []
    for number in range(count):
        text, reference = invented_report(rng, number)
        documents.append((
            Document(
                record_key=f"reports/{number:03d}.txt", path=f"reports/{number:03d}.txt", text=text, format="text",
                sha256=hashlib.sha256(text.encode()).hexdigest(), size=len(text), title=text.split("\n")[0],
                reference_summary=reference, reference_source="test",
            ),
            reference,
        ))
    return documents


def write_archive(folder, count: int, referenced: int, seed: int = 3) -> None:
    """``count`` reports as text files; the first ``referenced`` have a sidecar summary."""
    folder.mkdir(parents=True, exist_ok=True)
    for number, (document, reference) in enumerate(invented_documents(count, seed)):
        (folder / f"report_{number:03d}.txt").write_text(document.text + "\n", encoding="utf-8")
        if number < referenced:
            (folder / f"report_{number:03d}.summary.txt").write_text(reference + "\n", encoding="utf-8")


def examples(count: int):
    return [(document, split_document(document)) for document, _ in invented_documents(count)]


def run_config(db: str) -> dict:
    store = Store(db)
    try:
        return json.loads(store.db.execute("select config from runs order by id desc limit 1").fetchone()[0])
    finally:
        store.close()


# folds ------------------------------------------------------------------------------


def test_fold_plan_puts_every_document_in_exactly_one_test_part():
    plan = CrossValidation(folds=5, seed=4).plan(23)
    tested = [i for fold in plan for i in fold.test]
    assert sorted(tested) == list(range(23))
    for fold in plan:
        assert not set(fold.train) & set(fold.test)
        assert sorted(fold.train + fold.test) == list(range(23))
        assert len(fold.test) in (4, 5)
    assert plan == CrossValidation(folds=5, seed=4).plan(23)


class RecordingHouseStyle(HouseStyleSummarizer):
    """Remembers which training rows each fold's model saw, and which model
    summarised which document."""

    def fit_rows(self, rows):
        super().fit_rows(rows)
        self.seen_rows_ = {id(features) for features, _ in rows}
        return self

    def summarize(self, document, segmentation):
        self.log_.append((document.record_key, self.seen_rows_))
        return super().summarize(document, segmentation)


def test_no_document_is_summarised_by_a_model_trained_on_it():
    data = examples(15)
    prototype = RecordingHouseStyle().fit_features([d.text for d, _ in data])
    prototype.log_ = []
    rows = [prototype.labelled_rows(d, s) for d, s in data]
    summaries = CrossValidation(folds=5, seed=1).held_out_summaries(prototype, data, rows)
    assert sorted(summaries) == list(range(15))
    own_rows = {d.record_key: id(rows[k][0]) for k, (d, _) in enumerate(data)}
    assert len(prototype.log_) == 15
    for record_key, seen in prototype.log_:
        assert own_rows[record_key] not in seen
        assert len(seen) == 12  # the four other folds' documents
    for summary in summaries.values():
        assert summary.params["evaluation"] == "5-fold held-out"
        assert summary.params["budget_rule"] == "reference-words"


# learning ---------------------------------------------------------------------------


def test_learns_the_house_style_and_is_deterministic():
    data = examples(30)
    train, test = data[:24], data[24:]
    first = HouseStyleSummarizer(budget=Budget(sentences=2)).fit(train)
    second = HouseStyleSummarizer(budget=Budget(sentences=2)).fit(train)
    for document, segmentation in test:
        summary = first.summarize(document, segmentation)
        assert summary.details == second.summarize(document, segmentation).details
        # The house style opens with the first finding, never with the background.
        assert "showed" in summary.sentences[0].text
        assert all(s.text not in " ".join(BACKGROUND) for s in summary.sentences)


@pytest.mark.slow
def test_mmr_keeps_a_repeated_finding_out_of_the_summary():
    # MMR (Carbonell & Goldstein 1998): λ = 1 is plain relevance order; a lower λ
    # trades relevance for novelty, so an exact copy of a chosen sentence drops out.
    data = examples(25)
    document, _ = data[24]
    findings = next(block for block in document.text.split("\n\n") if "showed" in block)
    finding = findings.split(". ")[0] + "."
    document.text = document.text.replace(findings, f"{findings}\n\n{finding}", 1)
    segmentation = split_document(document)

    def picked(mmr_lambda):
        method = HouseStyleSummarizer(budget=Budget(sentences=3), mmr_lambda=mmr_lambda).fit(data[:24])
        return [s.text for s in method.summarize(document, segmentation).sentences]

    # Without MMR the copy is not picked twice either: no summary repeats a sentence.
    assert picked(None).count(finding) == 1
    assert picked(1.0) == picked(None)
    assert picked(0.5).count(finding) == 1


def test_features_have_one_column_per_name():
    data = examples(3)
    features = HouseStyleSummarizer().fit(data).features_.transform(*data[0])
    assert features.shape == (len(data[0][1].sentences), len(FEATURE_NAMES))
    assert np.isfinite(features).all()


# persistence ------------------------------------------------------------------------


def test_stored_model_gives_the_same_summaries_from_a_new_store_object(tmp_path):
    data = examples(26)
    trained = HouseStyleSummarizer(budget=Budget(words=30)).fit(data[:22])
    db = str(tmp_path / "models.sqlite")
    store = Store(db)
    run_id = store.runs.begin("test", {})
    model_id = store.models.save(trained, run_id, [3, 1, 2], FEATURE_NAMES, {"note": "test"})
    store.close()

    reopened = Store(db)
    loaded = reopened.models.latest("house-style")
    reopened.close()
    assert loaded.id == model_id and loaded.training_documents == [1, 2, 3]
    assert loaded.features == list(FEATURE_NAMES) and loaded.metrics == {"note": "test"}
    assert loaded.versions["scikit-learn"] and loaded.format == "skops"
    method = loaded.load(TRUSTED_TYPES)
    for document, segmentation in data[22:]:
        before, after = trained.summarize(document, segmentation), method.summarize(document, segmentation)
        assert [s.text for s in before.sentences] == [s.text for s in after.sentences]
        assert [s.score for s in before.sentences] == [s.score for s in after.sentences]


# too few references -------------------------------------------------------------------


def test_threshold_for_training():
    assert usable_folds(MIN_REFERENCED_DOCUMENTS - 1, 5) is None
    assert usable_folds(MIN_REFERENCED_DOCUMENTS, 5) == 5
    assert usable_folds(30, 10) == 7  # at least four test documents per fold


def test_too_few_references_fall_back_to_the_best_fixed_method(tmp_path, capsys):
    write_archive(tmp_path / "archive", count=12, referenced=6)
    db = str(tmp_path / "store.sqlite")
    events = []
    report = run_archive([tmp_path / "archive"], db, methods=["house-style"], budget=Budget(words=30),
                         progress=events.append)
    assert report.exit_status == 0
    decision = run_config(db)["decisions"]["house-style"]
    assert decision["fallback"] is True and decision["referenced_documents"] == 6
    assert decision["method"] in ("lead", "tfidf", "textrank")
    assert decision["method"] == max(decision["scores"], key=decision["scores"].get)
    assert any("needs at least 20" in event.text for event in events)
    assert capsys.readouterr().err == ""  # the library reports through the callback, never prints
    store = Store(db)
    methods = {row[0] for row in store.db.execute("select distinct method from summaries where params not like '%budget_rule%'")}
    assert methods == {decision["method"]}
    assert store.models.latest("house-style") is None
    store.close()


def test_no_references_at_all_means_lead(tmp_path):
    write_archive(tmp_path / "archive", count=5, referenced=0)
    db = str(tmp_path / "store.sqlite")
    events = []
    run_archive([tmp_path / "archive"], db, methods=["auto"], budget=Budget(sentences=2), progress=events.append)
    decision = run_config(db)["decisions"]["auto"]
    assert decision["method"] == "lead" and decision["fallback"] is True
    assert any("no document in the store has a reference summary" in event.text for event in events)


# auto --------------------------------------------------------------------------------


@pytest.mark.slow
def test_auto_records_its_choice_and_applies_it_to_the_rest(tmp_path):
    write_archive(tmp_path / "archive", count=30, referenced=24)
    db = str(tmp_path / "store.sqlite")
    report = run_archive([tmp_path / "archive"], db, methods=["auto"], budget=Budget(words=30))
    assert report.exit_status == 0
    config = run_config(db)
    decision = config["decisions"]["auto"]
    assert set(decision["scores"]) == {"lead", "tfidf", "textrank", "house-style"}
    assert decision["method"] == max(decision["scores"], key=decision["scores"].get) == "house-style"
    assert decision["fallback"] is False and "mean of ROUGE-1, ROUGE-2 and ROUGE-L" in decision["selection_rule"]
    assert config["methods"]["house-style"]["trained_model"] == decision["model_id"]

    store = Store(db)
    in_run = store.db.execute(
        "select d.record_key, s.params from summaries s join documents d on d.id = s.document_id "
        "where s.run_id = ? and s.method = 'house-style' and s.params not like '%evaluation%'",
        [report.run_id],
    ).fetchall()
    held_out = store.db.execute(
        "select count(*) from summaries where method = 'house-style' and params like '%5-fold held-out%'"
    ).fetchone()[0]
    model = store.models.latest("house-style")
    store.close()
    # Applied to the six reports without a reference; the 24 others have held-out summaries.
    assert sorted(key.rsplit("/", 1)[1] for key, _ in in_run) == [f"report_{n:03d}.txt" for n in range(24, 30)]
    assert held_out == 24 and len(model.training_documents) == 24
    assert model.metrics["held_out_means"]["house-style"]["documents"] == 24


@pytest.mark.slow
def test_training_again_reuses_the_stored_model(tmp_path):
    write_archive(tmp_path / "archive", count=22, referenced=22)
    db = str(tmp_path / "store.sqlite")
    run_archive([tmp_path / "archive"], db, methods=["lead"], budget=Budget(sentences=2))
    store = Store(db)
    first = train_in_store(store, store.runs.begin("train", {}))
    second = train_in_store(store, store.runs.begin("train", {}))
    store.close()
    assert first.held_out_added == 22 and not first.reused_model
    assert second.held_out_added == 0 and second.reused_model and second.model_id == first.model_id


def test_run_time_methods_are_built_by_name():
    house_style, auto = build_methods(["house-style", "auto"], budget=Budget(words=50), mmr_lambda=0.7)
    assert isinstance(house_style, HouseStyleForRun) and isinstance(auto, AutoForRun)
    assert house_style.budget == auto.budget == Budget(words=50) and auto.mmr_lambda == 0.7


# command line ------------------------------------------------------------------------


@pytest.mark.slow
def test_train_command_prints_the_held_out_comparison_and_choose_records_the_choice(tmp_path):
    from click.testing import CliRunner

    from summarize.cli import main

    write_archive(tmp_path / "archive", count=26, referenced=22)
    db = str(tmp_path / "store.sqlite")
    runner = CliRunner()
    assert runner.invoke(main, ["run", str(tmp_path / "archive"), "--db", db, "--methods", "lead", "--quiet"]).exit_code == 0
    trained = runner.invoke(main, ["train", "--db", db])
    assert trained.exit_code == 0, trained.output
    assert "stored model #1, trained on 22 documents" in trained.stdout
    assert "Budget: matched: each reference's length in words" in trained.stdout
    label = "house-style · 5-fold held-out"  # the setting in words, not a hash
    rows = [line.strip().removeprefix(label).split() for line in trained.stdout.splitlines()
            if line.strip().startswith(label)]
    assert rows and rows[0][0] == "22"  # held-out summaries of all 22 referenced reports
    assert "check the source document" in trained.stdout

    chosen = runner.invoke(main, ["choose", "--db", db, "--json"])
    assert chosen.exit_code == 0, chosen.output
    decision = json.loads(chosen.stdout)
    assert decision["method"] == max(decision["scores"], key=decision["scores"].get)
    assert run_config(db)["decisions"]["auto"]["method"] == decision["method"]


def test_train_command_refuses_with_too_few_references(tmp_path):
    from click.testing import CliRunner

    from summarize.cli import main

    write_archive(tmp_path / "archive", count=8, referenced=5)
    db = str(tmp_path / "store.sqlite")
    runner = CliRunner()
    runner.invoke(main, ["run", str(tmp_path / "archive"), "--db", db, "--methods", "lead", "--quiet"])
    result = runner.invoke(main, ["train", "--db", db])
    assert result.exit_code == 1
    assert "5 documents have a reference summary" in result.stderr and "summarize choose" in result.stderr
