"""Aspect summaries on ACLSum: the README's aspect table.

    python -m bench.aclsum_aspects [--out table.md] [--resamples 1000]

ACLSum (Takeshita et al. 2024; the ``aclsum`` package, MIT licence) ships its own
splits: train 100, validation 50, test 100 papers, each with three aspect summaries
(challenge, approach, outcome). Input: the package's sentences of the abstract,
introduction and conclusion. On every test paper and aspect, at the aspect
reference's length in words, ROUGE-1/2/L F1 (Porter stemming) of:

- aspect-lexrank: query-biased LexRank + MMR with the paper aspects' guide phrases
  (unlearned: nothing is fitted but the IDF);
- aspect-learned: one scorer per aspect trained on the train split's aspect
  references, its settings chosen on the validation split only;
- the generic summary of the best fixed method (lead, TF-IDF, TextRank; the best
  *on the test split* per aspect, which favours the baseline), lead, and the greedy
  aspect oracle (upper bound).

IDF is fitted over the texts of all 250 papers (no references involved). Prints
means with 95% percentile bootstrap intervals over papers, paired differences, how
many papers got no answer, and the time each stage took.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

from summarize.evaluation.aspect_scores import GENERIC_METHODS, METRICS, score_aspect_systems, tune_learned, unlearned
from summarize.evaluation.bootstrap import PercentileBootstrap
from summarize.methods.aspects.definitions import PAPER_ASPECTS
from summarize.output.caution import CAUTION
from summarize.reading.datasets import line_segmentation, load_aclsum_aspects

LABELS = {"rouge1": "ROUGE-1", "rouge2": "ROUGE-2", "rougeL": "ROUGE-L"}


def _points(interval, signed: bool = False) -> str:
    sign = "+" if signed else ""
    return f"{100 * interval.estimate:{sign}.1f} [{100 * interval.low:{sign}.1f}, {100 * interval.high:{sign}.1f}]"


def run(resamples: int, seed: int) -> str:
    timings = {}
    started = time.perf_counter()
    splits = {}
    for split in ("train", "val", "test"):
        documents = load_aclsum_aspects(split)
        splits[split] = [(d, line_segmentation(d)) for d in documents]
    archive_texts = [d.text for pairs in splits.values() for d, _ in pairs]
    timings["load"] = time.perf_counter() - started
    started = time.perf_counter()
    tuned = tune_learned(splits["train"], splits["val"], PAPER_ASPECTS, archive_texts, seed=seed)
    timings["train on train, tune on validation"] = time.perf_counter() - started
    started = time.perf_counter()
    systems = score_aspect_systems(
        splits["test"], PAPER_ASPECTS,
        {"aspect-learned": tuned.method, "aspect-lexrank": unlearned(archive_texts)}, archive_texts,
    )
    timings["summarize and score the test split"] = time.perf_counter() - started
    bootstrap = PercentileBootstrap(resamples=resamples, seed=seed)
    header = "| aspect | system | " + " | ".join(f"{LABELS[m]} F1" for m in METRICS) + " | no answer |"
    lines = [
        f"ACLSum test split, {len(splits['test'])} papers (package splits: train {len(splits['train'])}, validation "
        f"{len(splits['val'])}). Budget: each aspect reference's length in words. ROUGE F1 ×100 (Porter stemming), "
        f"mean over papers [95% percentile bootstrap interval, {resamples} resamples, seed {seed}]. aspect-learned "
        f"settings chosen on validation: {tuned.settings}.",
        "",
        header,
        "|---|---|" + "---:|" * len(METRICS) + "---:|",
    ]
    differences = []
    for aspect in PAPER_ASPECTS:
        name = aspect.name
        best_generic = max(GENERIC_METHODS, key=lambda m: systems.mean(m, name))
        rows = [("aspect-learned", "aspect-learned"), ("aspect-lexrank", "aspect-lexrank"),
                (best_generic, f"generic: {best_generic} (best fixed)"), ("lead", "lead"), ("oracle", "aspect oracle")]
        if best_generic == "lead":
            rows.remove(("lead", "lead"))
        for system, label in rows:
            cells = " | ".join(_points(bootstrap.mean(systems.values(system, name, m))) for m in METRICS)
            lines.append(f"| {name} | {label} | {cells} | {systems.unanswered[system][name]} |")
        for better, worse in (("aspect-lexrank", best_generic), ("aspect-learned", best_generic),
                              ("aspect-learned", "aspect-lexrank")):
            cells = " | ".join(
                _points(bootstrap.paired_difference(systems.values(better, name, m), systems.values(worse, name, m)),
                        signed=True)
                for m in METRICS
            )
            differences.append(f"| {name} | {better} − {worse} | {cells} |")
    lines += ["", "Paired differences over the same papers (bootstrap, Koehn 2004):", "",
              "| aspect | difference | " + " | ".join(f"{LABELS[m]} F1" for m in METRICS) + " |",
              "|---|---|" + "---:|" * len(METRICS), *differences]
    stages = "; ".join(f"{stage}: {seconds:.0f} s" for stage, seconds in timings.items())
    return "\n".join(lines) + f"\n\nTimes: {stages}.\n\n{CAUTION}\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--out", help="also write the Markdown to this file")
    parser.add_argument("--resamples", type=int, default=1000)
    parser.add_argument("--seed", type=int, default=0)
    args = parser.parse_args(argv)
    text = run(args.resamples, args.seed)
    sys.stdout.write(text)
    if args.out:
        Path(args.out).write_text(text, encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())
