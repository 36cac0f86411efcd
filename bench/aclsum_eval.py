"""Every method on all of ACLSum, at the abstract's length: the README's table.

    python -m bench.aclsum_eval [--split test] [--limit N] [--db store.sqlite] [--out table.md]

ACLSum (Takeshita et al. 2024; the ``aclsum`` package, MIT licence): each paper's
body without its abstract is summarised with lead, TF-IDF, TextRank, a seeded random
selection and the greedy oracle, each at a budget of the abstract's length in words,
and scored against the author abstract (ROUGE F1, Porter stemming). Prints a
Markdown table of means with 95% percentile bootstrap intervals over papers, the
paired differences from lead, and the time each stage took.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

from store.runs import recorded_run
from summarize.evaluation.compare import BudgetGroup, Comparison, compare
from summarize.evaluation.scoring import score
from summarize.reading.datasets import load_aclsum
from summarize.reading.split import split_document

METHODS = ("lead", "tfidf", "textrank", "random", "oracle")
TABLE_METRICS = (("rouge1", "ROUGE-1 F1"), ("rouge2", "ROUGE-2 F1"), ("rougeL", "ROUGE-L F1"))
ORDER = {name: k for k, name in enumerate(("random", "lead", "tfidf", "textrank", "oracle"))}


def _interval(value) -> str:
    return f"{100 * value.estimate:.1f} [{100 * value.low:.1f}, {100 * value.high:.1f}]"


def _difference(value) -> str:
    return f"{100 * value.estimate:+.1f} [{100 * value.low:+.1f}, {100 * value.high:+.1f}]"


def markdown_table(group: BudgetGroup, comparison: Comparison, papers: int) -> str:
    systems = sorted(group.systems, key=lambda s: ORDER.get(s.name, len(ORDER)))
    header = "| method | papers | " + " | ".join(label for _, label in TABLE_METRICS) + " |"
    rule = "|---|---:|" + "---:|" * len(TABLE_METRICS)
    lines = [
        f"ACLSum, {papers} papers: body without abstract, scored against the author abstract. "
        f"Budget: each abstract's length in words. ROUGE F1 ×100 (Porter stemming), mean over papers "
        f"[{comparison.confidence:.0%} percentile bootstrap interval, {comparison.resamples} resamples, "
        f"seed {comparison.seed}].",
        "",
        header,
        rule,
    ]
    for system in systems:
        name = f"{system.name} (upper bound)" if system.is_upper_bound else system.name
        cells = " | ".join(_interval(system.scores[m]) for m, _ in TABLE_METRICS)
        lines.append(f"| {name} | {system.documents} | {cells} |")
    lines += ["", "Difference from lead, paired bootstrap over the same papers (Koehn 2004):", "", header, rule]
    for system in systems:
        if system.versus_baseline:
            cells = " | ".join(_difference(system.versus_baseline[m]) for m, _ in TABLE_METRICS)
            lines.append(f"| {system.name} | {next(iter(system.versus_baseline.values())).n} | {cells} |")
    return "\n".join(lines)


def run(db_path: str, split: str | None, limit: int | None, resamples: int, seed: int) -> str:
    timings = {}
    started = time.perf_counter()
    documents = load_aclsum(split, limit)
    with recorded_run(db_path, "bench", {"dataset": "ACLSum", "split": split or "all", "limit": limit}) as recording:
        for document in documents:
            recording.store.add_document(document, split_document(document), recording.run_id)
        recording.counts = {"documents": len(documents)}
    timings["load, split and store"] = time.perf_counter() - started
    started = time.perf_counter()
    score(db_path, budget="reference", methods=METHODS, progress=None)
    timings["summarize at matched budget and score"] = time.perf_counter() - started
    started = time.perf_counter()
    comparison = compare(db_path, budget="reference", resamples=resamples, seed=seed)
    timings["compare (bootstrap, fragments)"] = time.perf_counter() - started
    group = next(g for g in comparison.groups if g.matched)
    table = markdown_table(group, comparison, len(documents))
    seconds = "\n".join(f"- {stage}: {value:.1f} s" for stage, value in timings.items())
    return f"{table}\n\nTime ({len(documents)} papers):\n\n{seconds}\n"


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--split", choices=("train", "val", "test"), default=None, help="default: all 250 papers")
    parser.add_argument("--limit", type=int, default=None)
    parser.add_argument("--db", default=None, help="keep the store here (default: a temporary one)")
    parser.add_argument("--out", default=None, help="also write the Markdown to this file")
    parser.add_argument("--resamples", type=int, default=1000)
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as scratch:
        db_path = args.db or str(Path(scratch) / "aclsum.sqlite")
        text = run(db_path, args.split, args.limit, args.resamples, args.seed)
    print(text)
    if args.out:
        Path(args.out).write_text(text, encoding="utf-8")
    sys.stdout.flush()


if __name__ == "__main__":
    main()
