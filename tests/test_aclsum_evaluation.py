"""Method quality on an open dataset: ACLSum (Takeshita et al. 2024, the ``aclsum``
package, MIT licence), paper bodies without their abstracts summarised at the
abstract's length in words and scored against the author abstract.

Expected orderings: TF-IDF and TextRank above a seeded random selection, and the
greedy oracle above every method, each by a paired bootstrap over papers (Koehn 2004)
whose 95% interval of the difference excludes 0. The methods are compared on ROUGE-2
F1, the measure where a random choice of on-topic sentences gains least (unigram
overlap is high for any sentence of a paper); the oracle on all four measures. The
subset is the first 60 papers of the test split; bench/aclsum_eval.py runs all 250."""

from __future__ import annotations

import pytest

from store.store import Store
from summarize.evaluation.bootstrap import PercentileBootstrap
from summarize.evaluation.compare import compare
from summarize.evaluation.rouge import METRICS
from summarize.evaluation.scoring import score
from summarize.reading.datasets import load_aclsum
from summarize.reading.split import split_document

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def comparison(tmp_path_factory):
    db = str(tmp_path_factory.mktemp("aclsum") / "aclsum.sqlite")
    store = Store(db)
    run_id = store.runs.begin("test", {"dataset": "ACLSum test, first 60"})
    for document in load_aclsum("test", limit=60):
        store.add_document(document, split_document(document), run_id)
    store.close()
    report = score(db, methods=("lead", "tfidf", "textrank", "random", "oracle"), progress=None)
    assert report.summaries_added == 5 * 60
    result = compare(db, budget="reference", resamples=1000, seed=0)
    assert len(result.groups) == 1 and result.groups[0].matched
    return {system.name: system for system in result.groups[0].systems}


def paired(systems, better: str, worse: str, metric: str):
    a, b = systems[better].per_document, systems[worse].per_document
    shared = sorted(set(a) & set(b))
    assert len(shared) == 60
    return PercentileBootstrap(resamples=1000, seed=0).paired_difference(
        [a[d][metric] for d in shared], [b[d][metric] for d in shared]
    )


@pytest.mark.parametrize("method", ["tfidf", "textrank"])
def test_content_methods_beat_random_selection(comparison, method):
    # External check: ACLSum (aclsum package, Takeshita et al. 2024)
    difference = paired(comparison, method, "random", "rouge2")
    assert difference.estimate > 0 and difference.excludes_zero(), difference


@pytest.mark.parametrize("method", ["lead", "tfidf", "textrank", "random"])
def test_oracle_beats_every_method(comparison, method):
    # External check: ACLSum (aclsum package, Takeshita et al. 2024)
    for metric in METRICS:
        difference = paired(comparison, "oracle", method, metric)
        assert difference.estimate > 0 and difference.excludes_zero(), (metric, difference)


def test_every_system_is_scored_on_every_paper(comparison):
    assert {name: system.documents for name, system in comparison.items()} == {
        name: 60 for name in ("lead", "tfidf", "textrank", "random", "oracle")
    }
    # Extractive methods copy whole sentences: every summary word is covered.
    for system in comparison.values():
        assert system.extractiveness["coverage"] == pytest.approx(1.0)
