"""A comparison as plain-text tables (one block per budget) or as JSON, each with the caution."""

from __future__ import annotations

import math

from summarize.evaluation.bootstrap import Interval
from summarize.evaluation.compare import BASELINE, Comparison
from summarize.evaluation.rouge import METRIC_LABELS, METRICS
from summarize.output import strict_json
from summarize.output.caution import CAUTION


def comparison_json(comparison: Comparison) -> str:
    """The comparison as indented JSON, with the caution."""
    return strict_json.dumps(comparison.as_dict() | {"caution": CAUTION}, indent=2, ensure_ascii=False)


def _points(value: float, signed: bool = False) -> str:
    if value is None or math.isnan(value):
        return "n/a"
    return f"{100 * value:+.1f}" if signed else f"{100 * value:.1f}"


def _cell(interval: Interval, signed: bool = False) -> str:
    if math.isnan(interval.low):
        return f"{_points(interval.estimate, signed)} (no interval, n={interval.n})"
    return f"{_points(interval.estimate, signed)} [{_points(interval.low, signed)}, {_points(interval.high, signed)}]"


def format_comparison(comparison: Comparison) -> str:
    """The comparison as plain-text tables, one block per budget."""
    lines = [
        f"ROUGE {comparison.measure} x100 against the reference summaries: mean over documents "
        f"[{comparison.confidence:.0%} percentile bootstrap interval, {comparison.resamples} resamples, "
        f"seed {comparison.seed}]. Porter stemming on.",
    ]
    if not comparison.groups:
        lines += ["", "No scored summaries: run `summarize score` on a store whose documents have reference summaries."]
    for group in comparison.groups:
        names = [s.name + (" *" if s.is_upper_bound else "") for s in group.systems]
        width = max([len(n) for n in names] + [10])
        metrics = [m for m in METRICS if any(m in s.scores for s in group.systems)]
        cell = 22
        header = f"  {'method':<{width}}  {'docs':>5}  " + "".join(f"{METRIC_LABELS[m]:<{cell}}" for m in metrics)
        lines += ["", f"Budget: {group.budget}", header.rstrip()]
        for name, system in zip(names, group.systems):
            cells = "".join(f"{_cell(system.scores[m]) if m in system.scores else 'n/a':<{cell}}" for m in metrics)
            lines.append(f"  {name:<{width}}  {system.documents:>5}  {cells}".rstrip())
        if any(s.is_upper_bound for s in group.systems):
            lines.append("  * upper bound: greedy extractive oracle, which reads the reference")
        compared = [s for s in group.systems if s.versus_baseline]
        if compared:
            lines += ["", f"  Difference from {BASELINE} (paired bootstrap over the documents both have; "
                          "an interval without 0 is a clear difference)"]
            for system in compared:
                any_diff = next(iter(system.versus_baseline.values()))
                cells = "".join(
                    f"{_cell(system.versus_baseline[m], signed=True) if m in system.versus_baseline else 'n/a':<{cell}}"
                    for m in metrics
                )
                lines.append(f"  {system.name:<{width}}  {any_diff.n:>5}  {cells}".rstrip())
        lines += [
            "",
            "  Extractiveness against the source (Grusky et al. 2018)",
            f"  {'method':<{width}}  {'coverage':>8}  {'density':>8}  {'compression':>11}  "
            f"{'novel 1-grams':>13}  {'novel 2-grams':>13}  {'mean words':>10}",
        ]
        for system in group.systems:
            e = system.extractiveness
            lines.append(
                f"  {system.name:<{width}}  {e['coverage']:>8.2f}  {e['density']:>8.2f}  {e['compression']:>11.1f}  "
                f"{e['novel_unigrams']:>13.1%}  {e['novel_bigrams']:>13.1%}  {system.mean_words:>10.1f}"
            )
    lines += ["", CAUTION]
    return "\n".join(lines)
