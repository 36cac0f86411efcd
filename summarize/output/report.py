"""One self-contained HTML file that shows how the methods did on this archive.

Per budget: the comparison table, a chart of mean ROUGE with its bootstrap interval
per method, and the distribution of summary lengths beside the references'. Then the
best- and worst-scored documents of the leading method, with the source text and the
sentences it chose (and the oracle's) highlighted. Charts are PNG images drawn with
matplotlib's Agg backend and embedded as base64, so the file needs nothing else.
Every string from a document is escaped.
"""

from __future__ import annotations

import base64
import io
import math
from datetime import UTC, datetime
from html import escape
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from store.store import Store
from summarize.evaluation.bootstrap import Interval
from summarize.evaluation.compare import BudgetGroup, Comparison, SystemResult, compare
from summarize.evaluation.rouge import METRIC_LABELS, METRICS
from summarize.output.caution import CAUTION
from summarize.output.written import atomic_text_file, check_output_path

_STYLE = """
body { font-family: system-ui, sans-serif; margin: 2em auto; max-width: 72em; color: #1d1d1d; line-height: 1.45; }
h1 { font-size: 1.5em; } h2 { font-size: 1.25em; margin-top: 2em; border-bottom: 1px solid #ccc; }
h3 { font-size: 1.05em; }
.caution { border-left: 5px solid #b35c00; background: #fff4e5; padding: .6em 1em; }
table { border-collapse: collapse; margin: .8em 0; font-size: .92em; }
th, td { border: 1px solid #d0d0d0; padding: .25em .6em; text-align: right; }
th:first-child, td:first-child { text-align: left; }
caption { text-align: left; font-weight: 600; padding: .3em 0; }
.bound td { color: #555; font-style: italic; }
.source { white-space: pre-wrap; border: 1px solid #ddd; padding: .8em; max-height: 28em; overflow: auto;
          font-size: .9em; background: #fafafa; }
mark.pick { background: #ffe27a; } mark.bound { background: #bfe3ff; }
mark.both { background: linear-gradient(#ffe27a 55%, #bfe3ff 45%); }
.reference { background: #eef7ee; padding: .6em 1em; }
.small { color: #555; font-size: .88em; }
"""


def _png(figure: Figure) -> str:
    buffer = io.BytesIO()
    FigureCanvasAgg(figure).print_png(buffer)
    return "data:image/png;base64," + base64.b64encode(buffer.getvalue()).decode("ascii")


def _cell(interval: Interval | None, signed: bool = False) -> str:
    if interval is None or math.isnan(interval.estimate):
        return "–"
    sign = "+" if signed else ""
    value = f"{100 * interval.estimate:{sign}.1f}"
    if math.isnan(interval.low):
        return f"{value} <span class='small'>(n={interval.n})</span>"
    return f"{value} <span class='small'>[{100 * interval.low:{sign}.1f}, {100 * interval.high:{sign}.1f}]</span>"


def _metrics(group: BudgetGroup) -> list[str]:
    return [m for m in METRICS if any(m in s.scores for s in group.systems)]


def comparison_tables(group: BudgetGroup, comparison: Comparison) -> str:
    metrics = _metrics(group)
    head = "".join(f"<th>{METRIC_LABELS[m]}</th>" for m in metrics)
    rows = []
    for system in group.systems:
        label = escape(system.name) + (" (upper bound)" if system.is_upper_bound else "")
        cells = "".join(f"<td>{_cell(system.scores.get(m))}</td>" for m in metrics)
        extra = " class='bound'" if system.is_upper_bound else ""
        rows.append(f"<tr{extra}><td>{label}</td><td>{system.documents}</td>{cells}</tr>")
    table = (
        f"<table><caption>ROUGE {escape(comparison.measure)} ×100 — budget: {escape(group.budget)}"
        f"</caption><tr><th>method</th><th>documents</th>{head}</tr>{''.join(rows)}</table>"
    )
    compared = [s for s in group.systems if s.versus_baseline]
    if compared:
        rows = [
            f"<tr><td>{escape(s.name)}</td><td>{next(iter(s.versus_baseline.values())).n}</td>"
            + "".join(f"<td>{_cell(s.versus_baseline.get(m), signed=True)}</td>" for m in metrics)
            + "</tr>"
            for s in compared
        ]
        table += (
            f"<table><caption>Difference from lead, paired over shared documents — budget: "
            f"{escape(group.budget)}</caption><tr><th>method</th><th>documents</th>{head}</tr>"
            f"{''.join(rows)}</table>"
        )
    rows = [
        f"<tr><td>{escape(s.name)}</td><td>{s.extractiveness['coverage']:.2f}</td>"
        f"<td>{s.extractiveness['density']:.2f}</td><td>{s.extractiveness['compression']:.1f}</td>"
        f"<td>{s.extractiveness['novel_unigrams']:.1%}</td><td>{s.extractiveness['novel_bigrams']:.1%}</td>"
        f"<td>{s.mean_words:.1f}</td></tr>"
        for s in group.systems
    ]
    table += (
        f"<table><caption>Extractiveness against the source (Grusky et al. 2018) — budget: "
        f"{escape(group.budget)}</caption><tr><th>method</th><th>coverage</th><th>density</th>"
        f"<th>compression</th><th>novel 1-grams</th><th>novel 2-grams</th><th>mean words</th></tr>"
        f"{''.join(rows)}</table>"
    )
    return table


def score_chart(group: BudgetGroup, comparison: Comparison) -> str:
    metrics = _metrics(group)
    figure = Figure(figsize=(8, 3.6), dpi=100)
    axes = figure.add_subplot()
    width = 0.8 / max(len(group.systems), 1)
    for k, system in enumerate(group.systems):
        means, below, above = [], [], []
        for metric in metrics:
            interval = system.scores.get(metric)
            mean = 100 * interval.estimate if interval else np.nan
            means.append(mean)
            has_interval = interval is not None and not math.isnan(interval.low)
            below.append(mean - 100 * interval.low if has_interval else 0)
            above.append(100 * interval.high - mean if has_interval else 0)
        positions = np.arange(len(metrics)) + (k - (len(group.systems) - 1) / 2) * width
        axes.bar(positions, means, width, yerr=[below, above], capsize=3, label=system.name,
                 hatch="//" if system.is_upper_bound else None, alpha=0.9)
    axes.set_xticks(np.arange(len(metrics)), [METRIC_LABELS[m] for m in metrics])
    axes.set_ylabel(f"{comparison.measure} ×100")
    axes.set_title(f"Mean ROUGE with {comparison.confidence:.0%} bootstrap interval — {group.budget}", fontsize=9)
    axes.legend(fontsize=8, ncols=min(len(group.systems), 5))
    figure.tight_layout()
    return _png(figure)


def length_chart(group: BudgetGroup, comparison: Comparison) -> str:
    figure = Figure(figsize=(8, 3.2), dpi=100)
    axes = figure.add_subplot()
    documents = sorted({d for s in group.systems for d in s.per_document})
    series = [[comparison.reference_words.get(d, 0) for d in documents]]
    labels = ["reference"]
    for system in group.systems:
        series.append([row["words"] for row in system.per_document.values()])
        labels.append(system.name)
    axes.boxplot(series, showmeans=True)
    axes.set_xticks(np.arange(1, len(labels) + 1), labels)
    axes.set_ylabel("words")
    axes.set_title(f"Summary lengths per document — {group.budget}", fontsize=9)
    figure.tight_layout()
    return _png(figure)


def _highlighted(text: str, picked: list[tuple[int, int]], bound: list[tuple[int, int]]) -> str:
    """Source text with the featured method's spans and the oracle's marked."""
    cuts = sorted({0, len(text)} | {p for span in picked + bound for p in span if 0 <= p <= len(text)})
    pieces = []
    for start, end in zip(cuts, cuts[1:]):
        in_pick = any(a <= start < b for a, b in picked)
        in_bound = any(a <= start < b for a, b in bound)
        piece = escape(text[start:end])
        if in_pick or in_bound:
            kind = "both" if in_pick and in_bound else "pick" if in_pick else "bound"
            piece = f"<mark class='{kind}'>{piece}</mark>"
        pieces.append(piece)
    return "".join(pieces)


def featured_system(group: BudgetGroup) -> SystemResult | None:
    """The method whose examples are shown: the best by mean of its ROUGE means."""
    systems = [s for s in group.systems if not s.is_upper_bound and s.scores]
    if not systems:
        return None
    return max(systems, key=lambda s: (np.mean([i.estimate for i in s.scores.values()]), s.name))


def best_and_worst(featured: SystemResult, count: int) -> tuple[list[int], list[int]]:
    """Document ids of the ``count`` best- and worst-scored documents of a method, by the
    mean of its ROUGE values (ties by id); a document is never in both lists."""
    metrics = [m for m in METRICS if m in featured.scores]
    ranked = sorted(
        featured.per_document,
        key=lambda d: (-np.mean([featured.per_document[d][m] for m in metrics]), d),
    )
    best = ranked[:count]
    return best, [d for d in ranked[::-1][:count] if d not in best]


def _examples(store: Store, group: BudgetGroup, count: int) -> str:
    featured = featured_system(group)
    if featured is None:
        return ""
    oracle = next((s for s in group.systems if s.is_upper_bound), None)
    metrics = [m for m in METRICS if m in featured.scores]
    best, worst = best_and_worst(featured, count)
    documents = store.documents.briefs(best + worst)
    parts = [
        f"<h2>Best- and worst-scored documents — {escape(featured.name)}, budget: {escape(group.budget)}</h2>",
        "<p class='small'>Ranked by the mean of the ROUGE values. Highlighted in the source: "
        f"<mark class='pick'>sentences {escape(featured.name)} chose</mark>"
        + (", <mark class='bound'>sentences the oracle chose</mark>, <mark class='both'>both</mark>" if oracle else "")
        + ".</p>",
    ]
    for heading, chosen in (("Best", best), ("Worst", worst)):
        for document_id in chosen:
            document = documents[document_id]
            row = featured.per_document[document_id]
            values = ", ".join(f"{METRIC_LABELS[m]} {100 * row[m]:.1f}" for m in metrics)
            picked = store.evaluation.spans(row["summary_id"])
            bound = []
            if oracle is not None and document_id in oracle.per_document:
                bound = store.evaluation.spans(oracle.per_document[document_id]["summary_id"])
            title = document.title or document.record_key
            parts += [
                f"<h3>{heading}: {escape(title)}</h3>",
                f"<p class='small'>{escape(document.record_key)} — {escape(values)}</p>",
                f"<div class='reference'><strong>Reference summary:</strong> {escape(document.reference or '')}</div>",
                f"<div class='source'>{_highlighted(document.text, picked, bound)}</div>",
            ]
    return "\n".join(parts)


def report(
    db_path: str,
    out_path: str | Path,
    budget: str | None = None,
    examples: int = 3,
    resamples: int = 1000,
    seed: int = 0,
) -> Path:
    """Write the evaluation report for the store at ``db_path`` to ``out_path``
    (whole or not at all, never over the store)."""
    check_output_path(out_path, db_path)
    comparison = compare(db_path, budget=budget, resamples=resamples, seed=seed)
    caution = escape(CAUTION)
    parts = [
        "<!DOCTYPE html>",
        "<html lang='en'><head><meta charset='utf-8'><title>Summary evaluation report</title>",
        f"<style>{_STYLE}</style></head><body>",
        "<h1>How the summary methods did on this archive</h1>",
        f"<p class='caution'>{caution}</p>",
        f"<p class='small'>Generated {escape(datetime.now(UTC).isoformat(timespec='seconds'))} from "
        f"{escape(str(Path(db_path).name))}. Scores are ROUGE (Lin 2004, Porter stemming on) against each "
        f"document's reference summary, averaged over documents; intervals are {comparison.confidence:.0%} "
        f"percentile bootstrap intervals (Efron &amp; Tibshirani 1993; {comparison.resamples} resamples, seed "
        f"{comparison.seed}); differences from lead are paired over the documents both have (Koehn 2004). "
        "Methods are only compared within one budget: ROUGE F1 moves with summary length. The oracle reads "
        "the reference and is shown as an upper bound, not as a method.</p>",
    ]
    if not comparison.groups:
        parts.append("<p>No scored summaries yet: run <code>summarize score</code> first.</p>")
    for group in comparison.groups:
        parts += [
            f"<h2>Budget: {escape(group.budget)}</h2>",
            comparison_tables(group, comparison),
            f"<img alt='Mean ROUGE per method, {escape(group.budget)}' src='{score_chart(group, comparison)}'>",
            f"<img alt='Summary lengths, {escape(group.budget)}' src='{length_chart(group, comparison)}'>",
        ]
    if comparison.groups:
        with Store(db_path, read_only=True) as store:
            parts.append(_examples(store, comparison.groups[0], examples))
    parts += [f"<p class='caution'>{caution}</p>", "</body></html>"]
    with atomic_text_file(out_path, db_path) as out:
        out.write("\n".join(parts))
    return Path(out_path)
