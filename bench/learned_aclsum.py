"""The house-style method on all of ACLSum, held out: the README's table.

    python -m bench.learned_aclsum [--folds 5] [--classifier gradient-boosting] [--db store.sqlite] [--out table.md]

ACLSum (Takeshita et al. 2024; the ``aclsum`` package, MIT licence): 250 papers, each
body without its abstract, the author abstract as the reference. Every paper gets a
house-style summary from a model trained on the other folds' papers (k-fold
cross-validation over papers), and lead, TF-IDF, TextRank and the greedy oracle
summaries, all at the abstract's length in words, scored with ROUGE F1 (Porter
stemming). Prints a Markdown table of means with 95% percentile bootstrap intervals
over papers, the paired differences from lead and from the best fixed method, and
the time each stage took. The data stays where the package installed it; a given
``--db`` keeps the store for inspection with ``summarize compare``.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

from store.runs import recorded_run
from summarize.evaluation.bootstrap import PercentileBootstrap
from summarize.evaluation.compare import compare
from summarize.methods.learned.house_style import CLASSIFIERS, HouseStyleSummarizer
from summarize.methods.learned.training import FIXED_METHODS, train_in_store
from summarize.output.caution import CAUTION
from summarize.reading.datasets import load_aclsum
from summarize.reading.split import split_document

ROWS = ("lead", "tfidf", "textrank", "house-style", "oracle")
TABLE_METRICS = (("rouge1", "ROUGE-1 F1"), ("rouge2", "ROUGE-2 F1"), ("rougeL", "ROUGE-L F1"))


def _points(interval, signed: bool = False) -> str:
    sign = "+" if signed else ""
    return f"{100 * interval.estimate:{sign}.1f} [{100 * interval.low:{sign}.1f}, {100 * interval.high:{sign}.1f}]"


def markdown_tables(systems: dict, folds: int, resamples: int, seed: int) -> str:
    bootstrap = PercentileBootstrap(resamples=resamples, seed=seed)
    header = "| method | papers | " + " | ".join(label for _, label in TABLE_METRICS) + " |"
    rule = "|---|---:|" + "---:|" * len(TABLE_METRICS)
    papers = systems["lead"].documents
    lines = [
        f"ACLSum, {papers} papers: body without abstract, scored against the author abstract. Budget: each "
        f"abstract's length in words. house-style is {folds}-fold cross-validated over papers (each paper "
        "summarised by a model trained on the other folds). ROUGE F1 ×100 (Porter stemming), mean over papers "
        f"[95% percentile bootstrap interval, {resamples} resamples, seed {seed}].",
        "",
        header,
        rule,
    ]
    for name in ROWS:
        label = f"{name} (upper bound)" if name == "oracle" else name
        cells = " | ".join(_points(systems[name].scores[m]) for m, _ in TABLE_METRICS)
        lines.append(f"| {label} | {systems[name].documents} | {cells} |")
    best_fixed = max(FIXED_METHODS, key=lambda n: systems[n].scores["rouge1"].estimate + systems[n].scores["rouge2"].estimate)
    lines += ["", "Paired differences over the same papers (bootstrap, Koehn 2004):", "", header.replace("method", "difference"), rule]
    pairs = [(name, "lead") for name in ROWS if name != "lead"] + [("house-style", best_fixed)]
    for better, worse in pairs:
        a, b = systems[better].per_document, systems[worse].per_document
        shared = sorted(set(a) & set(b))
        cells = " | ".join(
            _points(bootstrap.paired_difference([a[d][m] for d in shared], [b[d][m] for d in shared]), signed=True)
            for m, _ in TABLE_METRICS
        )
        lines.append(f"| {better} − {worse} | {len(shared)} | {cells} |")
    return "\n".join(lines)


def run(db_path: str, folds: int, classifier: str, resamples: int, seed: int) -> str:
    timings = {}
    started = time.perf_counter()
    with recorded_run(db_path, "bench", {"dataset": "ACLSum", "folds": folds, "classifier": classifier}) as run:
        if not run.store.documents.count():
            for document in load_aclsum():
                run.store.add_document(document, split_document(document), run.run_id)
        timings["load, split and store"] = time.perf_counter() - started
        started = time.perf_counter()
        report = train_in_store(run.store, run.run_id, HouseStyleSummarizer(classifier=classifier, seed=seed), folds)
        run.counts = report.as_dict()
    timings["cross-validate, summarize at matched budget, score, train"] = time.perf_counter() - started
    started = time.perf_counter()
    comparison = compare(db_path, budget="reference", resamples=resamples, seed=seed)
    # One setting per method in this store: the method names its row.
    systems = {system.method: system for system in comparison.groups[0].systems}
    table = markdown_tables(systems, report.folds, resamples, seed)
    timings["compare"] = time.perf_counter() - started
    stages = "; ".join(f"{stage}: {seconds:.0f} s" for stage, seconds in timings.items())
    return f"{table}\n\nTimes: {stages}.\n\n{CAUTION}\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--folds", type=int, default=5)
    parser.add_argument("--classifier", choices=CLASSIFIERS, default="gradient-boosting")
    parser.add_argument("--db", help="store to use (default: a temporary file)")
    parser.add_argument("--out", help="also write the Markdown to this file")
    parser.add_argument("--resamples", type=int, default=1000)
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as scratch:
        db_path = args.db or str(Path(scratch) / "learned_aclsum.sqlite")
        text = run(db_path, args.folds, args.classifier, args.resamples, args.seed)
    sys.stdout.write(text)
    if args.out:
        Path(args.out).write_text(text, encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())
