"""Batch summaries for document archives, for notebooks and scripts.

    import summarize

    summarize.run(["archive/"], "store.sqlite", summarize.RunSettings(budget="80w"))
    summarize.score("store.sqlite")
    comparison = summarize.compare("store.sqlite", budget="reference")

The names below are imported on first use (PEP 562), so ``import summarize`` stays
cheap and loads neither scikit-learn nor torch.
"""

from __future__ import annotations

import importlib

_EXPORTS = {
    "run": "summarize.api",
    "score": "summarize.api",
    "compare": "summarize.api",
    "report": "summarize.api",
    "train": "summarize.api",
    "choose": "summarize.api",
    "find": "summarize.api",
    "show": "summarize.api",
    "export": "summarize.api",
    "RunSettings": "summarize.runs.settings",
    "ProgressEvent": "summarize.runs.progress",
    "SummarizerError": "store.errors",
    "Budget": "summarize.methods.budget",
    "build_method": "summarize.methods.registry",
    "setting_label": "summarize.methods.labels",
    "LeadSummarizer": "summarize.methods.extractive",
    "TfidfSummarizer": "summarize.methods.extractive",
    "TextRankSummarizer": "summarize.methods.extractive",
    "RandomSummarizer": "summarize.methods.baselines",
    "OracleSummarizer": "summarize.evaluation.oracle",
    "HouseStyleSummarizer": "summarize.methods.learned.house_style",
    "Seq2SeqSummarizer": "summarize.methods.seq2seq.abstractive",
}
__all__ = sorted(_EXPORTS)


def __getattr__(name: str):
    if name not in _EXPORTS:
        raise AttributeError(f"module 'summarize' has no attribute {name!r}")
    value = getattr(importlib.import_module(_EXPORTS[name]), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *_EXPORTS})
