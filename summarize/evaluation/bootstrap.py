"""Bootstrap confidence intervals over documents, through ``scipy.stats.bootstrap``.

Documents are the resampling unit: a method's score on an archive is the mean of its
per-document scores, and its uncertainty is how much that mean moves when the set
of documents is drawn again.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import stats


@dataclass(frozen=True)
class Interval:
    """A mean with its confidence interval (``low``/``high`` are NaN when ``n < 2``)."""

    estimate: float
    low: float
    high: float
    n: int
    confidence: float

    def excludes_zero(self) -> bool:
        return not math.isnan(self.low) and (self.low > 0 or self.high < 0)

    def as_dict(self) -> dict:
        return {
            "mean": self.estimate,
            "low": None if math.isnan(self.low) else self.low,
            "high": None if math.isnan(self.high) else self.high,
            "n": self.n,
            "confidence": self.confidence,
        }


@dataclass(frozen=True)
class Difference(Interval):
    """A paired mean difference ``a − b``; ``share_above_zero`` is the fraction of
    resamples in which ``a`` beat ``b`` (Koehn 2004 reads ≥ 0.95 as significant)."""

    share_above_zero: float = math.nan

    def as_dict(self) -> dict:
        share = None if math.isnan(self.share_above_zero) else self.share_above_zero
        return {**super().as_dict(), "share_above_zero": share}


@dataclass
class PercentileBootstrap:
    """Percentile bootstrap interval of a mean (Efron & Tibshirani 1993, ch. 13).

    Draw ``resamples`` samples of size ``n`` with replacement from the ``n`` values,
    take each one's mean ``θ*_b``; the ``(1 − confidence)/2`` and
    ``(1 + confidence)/2`` quantiles of the ``θ*_b`` bound the interval. Variants not
    used here: BCa (bias-corrected and accelerated) and the basic (reverse
    percentile) interval. Seeded, so a report is reproducible.

    :meth:`paired_difference` is Koehn's (2004) paired bootstrap resampling: the same
    documents are drawn for both methods in every resample, which is resampling the
    per-document differences ``a_i − b_i``.
    """

    resamples: int = 1000
    confidence: float = 0.95
    seed: int = 0

    def _run(self, values: np.ndarray):
        return stats.bootstrap(
            (values,),
            np.mean,
            n_resamples=self.resamples,
            confidence_level=self.confidence,
            method="percentile",
            vectorized=True,
            rng=np.random.default_rng(self.seed),
        )

    def mean(self, values: Sequence[float]) -> Interval:
        values = np.asarray(values, dtype=float)
        if len(values) == 0:
            return Interval(math.nan, math.nan, math.nan, 0, self.confidence)
        if len(values) < 2:
            return Interval(float(values.mean()), math.nan, math.nan, len(values), self.confidence)
        result = self._run(values)
        low, high = result.confidence_interval
        return Interval(float(values.mean()), float(low), float(high), len(values), self.confidence)

    def paired_difference(self, a: Sequence[float], b: Sequence[float]) -> Difference:
        """Mean of ``a − b`` over paired observations (same documents, same order)."""
        a, b = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
        if a.shape != b.shape:
            raise ValueError(f"paired samples differ in length: {len(a)} and {len(b)}")
        differences = a - b
        if len(differences) < 2:
            estimate = float(differences.mean()) if len(differences) else math.nan
            return Difference(estimate, math.nan, math.nan, len(differences), self.confidence)
        result = self._run(differences)
        low, high = result.confidence_interval
        share = float(np.mean(result.bootstrap_distribution > 0))
        return Difference(float(differences.mean()), float(low), float(high), len(differences), self.confidence, share)
