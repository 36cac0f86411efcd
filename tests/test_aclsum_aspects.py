"""Aspect summaries on an open dataset: ACLSum (Takeshita et al. 2024; the ``aclsum``
package, MIT licence), whose papers carry challenge / approach / outcome summaries.

A smaller run of bench/aclsum_aspects.py: the learned variant trained on the 100
papers of the package's train split and tuned on 25 of its validation split; 60 test-split
papers scored at each aspect reference's length with ROUGE F1 (rouge-score, Porter
stemming), paired bootstrap over papers (Koehn 2004). Claims checked: on the outcome
aspect the unlearned aspect method beats the best generic fixed method by at least
+2 ROUGE-1 points with an interval excluding 0 (a target we set, not a published
value); the learned variant beats the unlearned one over all aspects (better in at
least 95% of paired resamples, the criterion Koehn 2004 uses); the aspect oracle is
above every method.
"""

from __future__ import annotations

import json
import sqlite3

import numpy as np
import pytest
from click.testing import CliRunner

from store import Store
from summarize.cli import main
from summarize.evaluation.aspect_scores import GENERIC_METHODS, score_aspect_systems, tune_learned, unlearned
from summarize.evaluation.bootstrap import PercentileBootstrap
from summarize.methods.aspects.definitions import PAPER_ASPECTS
from summarize.methods.aspects.learned import opening_columns
from summarize.reading.datasets import line_segmentation, load_aclsum_aspects
from summarize.runs.aspect_runs import AspectModelMissing, summarize_aspects, train_aspects

pytestmark = pytest.mark.slow
GRID = {"c": (0.002, 0.05), "label_top": (0, 3), "bias": (0.5, 1.0), "min_probability": (0.2,),
        "relevance": ("probability", "probability-evidence")}


def _examples(split: str, limit: int):
    return [(d, line_segmentation(d)) for d in load_aclsum_aspects(split, limit=limit)]


@pytest.fixture(scope="module")
def systems():
    train, validation, test = _examples("train", 100), _examples("val", 25), _examples("test", 60)
    texts = [d.text for d, _ in train + validation + test]
    tuned = tune_learned(train, validation, PAPER_ASPECTS, texts, grid=GRID)
    return score_aspect_systems(test, PAPER_ASPECTS, {"learned": tuned.method, "lexrank": unlearned(texts)}, texts)


# External check: ACLSum aspect summaries, from the `aclsum` package
# ACLSum aspect summaries (Takeshita et al. 2024) scored with the
# rouge-score package; paired bootstrap (Koehn 2004).
def test_aspect_method_beats_the_generic_summary_on_outcomes(systems):
    best = max(GENERIC_METHODS, key=lambda m: systems.mean(m, "outcome"))
    difference = PercentileBootstrap(seed=0).paired_difference(
        systems.values("lexrank", "outcome", "rouge1"), systems.values(best, "outcome", "rouge1")
    )
    assert difference.estimate >= 0.02 and difference.low > 0


# External check: ACLSum aspect summaries, from the `aclsum` package
# ACLSum aspect summaries scored with rouge-score; paired bootstrap.
def test_learned_variant_beats_the_unlearned_one(systems):
    learned = [v for a in PAPER_ASPECTS for v in systems.values("learned", a.name, "rouge1")]
    plain = [v for a in PAPER_ASPECTS for v in systems.values("lexrank", a.name, "rouge1")]
    difference = PercentileBootstrap(seed=0).paired_difference(learned, plain)
    assert difference.estimate > 0 and difference.share_above_zero >= 0.95


# External check: ACLSum aspect summaries, from the `aclsum` package
# ACLSum aspect summaries; the greedy oracle reads the reference.
def test_aspect_oracle_is_above_every_method(systems):
    for aspect in PAPER_ASPECTS:
        oracle = systems.mean("oracle", aspect.name)
        for name in ("learned", "lexrank", *GENERIC_METHODS):
            assert oracle > systems.mean(name, aspect.name)


# External check: ACLSum aspect summaries, from the `aclsum` package
# ACLSum papers with aspect summaries as JSON-style fields.
def test_training_in_a_store_cross_validates_and_keeps_the_model(tmp_path):
    db_path = str(tmp_path / "aspects.sqlite")
    store = Store(db_path)
    run_id = store.runs.begin("test", {})
    for document in load_aclsum_aspects("val", limit=24):
        store.add_document(document, line_segmentation(document), run_id)
    store.close()
    outcome = train_aspects(db_path, PAPER_ASPECTS, folds=3)
    assert set(outcome.held_out) == {"challenge", "approach", "outcome"}
    assert all(0 < v["aspect-learned"] < 1 and 0 < v["aspect-lexrank"] < 1 for v in outcome.held_out.values())
    assert outcome.documents == {"challenge": 24, "approach": 24, "outcome": 24}
    answers = summarize_aspects(db_path, ["1"], PAPER_ASPECTS, method="aspect-learned")
    assert answers.added == 3 and all(row.method == "aspect-learned" for row in answers.rows)
    assert all(0 <= row.confidence <= 1 for row in answers.rows)
    assert summarize_aspects(db_path, ["1"], PAPER_ASPECTS, method="aspect-learned").added == 0
    job = tmp_path / "papers.toml"
    job.write_text("".join(
        f'[aspects.{a.name}]\nquestion = "{a.question}"\nphrases = {json.dumps(list(a.phrases))}\n\n'
        for a in PAPER_ASPECTS
    ))
    result = CliRunner().invoke(main, ["train-aspects", "--db", db_path, "--job", str(job), "--folds", "3", "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["model_id"] == outcome.model_id + 1
    result = CliRunner().invoke(main, ["train-aspects", "--db", str(tmp_path / "empty.sqlite")])
    assert result.exit_code == 1 and "no such store" in result.output
    # A model whose feature list differs from today's is refused, not misapplied.
    db = sqlite3.connect(db_path)
    with db:
        db.execute("update learned_models set features = '[\"position_relative\"]' where name = 'aspect-learned'")
    db.close()
    with pytest.raises(AspectModelMissing, match="train it again"):
        summarize_aspects(db_path, ["2"], PAPER_ASPECTS, method="aspect-learned")


# Common practice (no outside source): the opening-sentence columns on an ACLSum
# paper's line segmentation, where heading lines are not sentences of the text.
def test_opening_columns_mark_the_first_body_sentences():
    document = load_aclsum_aspects("val", limit=1)[0]
    segmentation = line_segmentation(document)
    columns = opening_columns(segmentation)
    body = [i for i, heading in enumerate(segmentation.sentence_is_heading) if not heading]
    assert segmentation.sentence_is_heading[0] and columns.shape == (len(segmentation.sentences), 4)
    for k in range(3):
        assert list(np.flatnonzero(columns[:, k])) == [body[k]]
    assert columns[body[0], 3] == 1.0 and columns[body[1], 3] == 0.5 and columns[0, 3] == 0.0
