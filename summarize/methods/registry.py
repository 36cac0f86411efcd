"""Every method by name: the one place a method is built from its name and settings.

The runner, matched-budget scoring, training, the command line and the Python API all
call :func:`build_method`. Classes outside ``extractive`` (seq2seq and torch, the
learned method) are imported when first built.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass, field, fields

from store.errors import UsageError
from summarize.methods.budget import Budget
from summarize.methods.extractive import DEFAULT_BUDGET


class UnknownMethod(UsageError, ValueError):
    """A method name that is not in the registry, or not usable where it was given."""


@dataclass(frozen=True)
class MethodEntry:
    """A registered method: where its class lives, and where it may be used.

    ``runnable``: ``summarize run --methods`` takes it; ``matched``: ``summarize score
    --methods`` can make it at a matched budget (it needs nothing but the document).
    ``stored_by``: ``module:Class`` of the method whose summaries are stored under this
    name, when the registered class only stands for it until a run resolves it.
    """

    name: str
    module: str
    class_name: str
    description: str
    runnable: bool
    matched: bool
    stored_by: str = ""

    def method_class(self) -> type:
        return getattr(importlib.import_module(self.module), self.class_name)

    def stored_class(self) -> type:
        if not self.stored_by:
            return self.method_class()
        module, class_name = self.stored_by.split(":")
        return getattr(importlib.import_module(module), class_name)


_ENTRIES = (
    MethodEntry("lead", "summarize.methods.extractive", "LeadSummarizer",
                "the first sentences", runnable=True, matched=True),
    MethodEntry("tfidf", "summarize.methods.extractive", "TfidfSummarizer",
                "sentences closest to their document by TF-IDF", runnable=True, matched=True),
    MethodEntry("textrank", "summarize.methods.extractive", "TextRankSummarizer",
                "PageRank over a sentence graph", runnable=True, matched=True),
    MethodEntry("seq2seq", "summarize.methods.seq2seq.abstractive", "Seq2SeqSummarizer",
                "a local encoder-decoder model", runnable=True, matched=False),
    MethodEntry("house-style", "summarize.methods.learned.method_choice", "HouseStyleForRun",
                "trained on the archive's own reference summaries", runnable=True, matched=False,
                stored_by="summarize.methods.learned.house_style:HouseStyleSummarizer"),
    MethodEntry("auto", "summarize.methods.learned.method_choice", "AutoForRun",
                "the best of these by held-out ROUGE", runnable=True, matched=False),
    MethodEntry("oracle", "summarize.evaluation.oracle", "OracleSummarizer",
                "the upper bound: greedy ROUGE against the reference", runnable=False, matched=True),
    MethodEntry("random", "summarize.methods.baselines", "RandomSummarizer",
                "chance level: a seeded random selection", runnable=False, matched=True),
)
REGISTRY: dict[str, MethodEntry] = {entry.name: entry for entry in _ENTRIES}
RUNNABLE = tuple(entry.name for entry in _ENTRIES if entry.runnable)
MATCHED = tuple(entry.name for entry in _ENTRIES if entry.matched)


@dataclass(frozen=True)
class MethodSettings:
    """What a command line, a job file or an API call says about the methods: each
    method takes those of these settings it has a field for."""

    budget: Budget = DEFAULT_BUDGET
    mmr_lambda: float | None = None
    seed: int = 0
    seq2seq: dict = field(default_factory=dict)


def entry(name: str, usable: tuple[str, ...] = tuple(REGISTRY)) -> MethodEntry:
    """The registry entry of ``name``; :class:`UnknownMethod` when it is not in ``usable``."""
    if name not in usable:
        where = "" if name not in REGISTRY else " here"
        raise UnknownMethod(f"unknown method {name!r}{where} (known: {', '.join(usable)})")
    return REGISTRY[name]


def check_names(names, usable: tuple[str, ...] = tuple(REGISTRY)) -> list[str]:
    """``names`` (a list or a comma-separated string) checked against ``usable``."""
    if isinstance(names, str):
        names = names.split(",")
    checked = [name.strip() for name in names if name.strip()]
    if not checked:
        raise UnknownMethod(f"no method given (known: {', '.join(usable)})")
    for name in checked:
        entry(name, usable)
    return checked


def build_method(name: str, settings: MethodSettings = MethodSettings(), usable: tuple[str, ...] = tuple(REGISTRY)):
    """A method object of the registered class, given the settings it takes."""
    method_class = entry(name, usable).method_class()
    accepted = {item.name for item in fields(method_class) if item.init}
    given = {"budget": settings.budget, "mmr_lambda": settings.mmr_lambda, "seed": settings.seed}
    kwargs = {key: value for key, value in given.items() if key in accepted}
    if name == "seq2seq":
        kwargs.update(settings.seq2seq)
    return method_class(**kwargs)
