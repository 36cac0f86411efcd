"""Percentile bootstrap intervals (Efron & Tibshirani 1993, "An Introduction to the
Bootstrap", ch. 13) on seeded samples from known distributions: a 95% interval should
cover the true mean in close to 95% of repetitions. The tolerance (0.89–0.99 over 200
repetitions) is common statistical practice for such a check, not from a source: the
percentile interval is known to under-cover a little at small n."""

from __future__ import annotations

import math

import numpy as np

from summarize.evaluation.bootstrap import PercentileBootstrap


def test_mean_interval_covers_the_true_mean_at_the_nominal_rate():
    # External check: Efron & Tibshirani (1993), percentile bootstrap coverage (recalled from memory)
    rng = np.random.default_rng(20240611)
    bootstrap = PercentileBootstrap(resamples=1000, confidence=0.95, seed=7)
    covered = 0
    for _ in range(200):
        sample = rng.normal(loc=0.42, scale=0.15, size=50)
        interval = bootstrap.mean(sample)
        covered += interval.low <= 0.42 <= interval.high
    assert 0.89 <= covered / 200 <= 0.99


def test_paired_difference_covers_the_true_difference():
    # External check: Efron & Tibshirani (1993), percentile bootstrap coverage (recalled from memory)
    # Two methods scored on the same 50 documents: a document effect shared by both
    # plus independent noise; the true mean difference is 0.03 (Koehn 2004 resamples
    # the documents, keeping the pairs).
    rng = np.random.default_rng(99)
    bootstrap = PercentileBootstrap(resamples=1000, seed=3)
    covered = 0
    for _ in range(200):
        documents = rng.normal(0.35, 0.1, size=50)
        a = documents + 0.03 + rng.normal(0, 0.04, size=50)
        b = documents + rng.normal(0, 0.04, size=50)
        difference = bootstrap.paired_difference(a, b)
        covered += difference.low <= 0.03 <= difference.high
    assert 0.89 <= covered / 200 <= 0.99


def test_pairing_narrows_the_interval_when_documents_vary():
    # With a large shared document effect, pairing removes it: the interval of the
    # difference is far narrower than the interval of either method's mean.
    rng = np.random.default_rng(5)
    documents = rng.normal(0.35, 0.2, size=80)
    a = documents + 0.02 + rng.normal(0, 0.01, size=80)
    b = documents + rng.normal(0, 0.01, size=80)
    bootstrap = PercentileBootstrap(seed=1)
    paired = bootstrap.paired_difference(a, b)
    unpaired_width = bootstrap.mean(a).high - bootstrap.mean(a).low
    assert paired.excludes_zero()
    assert paired.high - paired.low < unpaired_width / 5
    assert paired.share_above_zero > 0.95


def test_seeded_and_reproducible_and_degenerate_sizes():
    values = np.linspace(0, 1, 30)
    first = PercentileBootstrap(seed=11).mean(values)
    assert first == PercentileBootstrap(seed=11).mean(values)
    single = PercentileBootstrap().mean([0.5])
    assert single.estimate == 0.5 and math.isnan(single.low) and single.n == 1
