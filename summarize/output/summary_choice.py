"""Which stored summaries an export or a download shows: one method at one budget
with one setting, so each document gives one row.

A choice groups the stored (method, parameters) pairs the way the comparison does:
by method, by budget as a reader names it (``budget_label``; a budget matched to each
reference is one budget although its word count differs per document), and by the
remaining parameters. Oracle and random summaries are evaluation artefacts and are
offered only when asked for by name.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass

from store.errors import UsageError
from store.store import Store
from summarize.evaluation.budget_labels import MATCHED_LABEL, budget_label
from summarize.methods.budget import Budget
from summarize.methods.labels import SEPARATOR, settings_label

EVALUATION_ONLY_METHODS = ("oracle", "random")


class SummaryChoiceError(UsageError):
    """No stored summaries fit the method, budget or setting asked for, or several do."""


@dataclass(frozen=True)
class SummaryChoice:
    method: str
    budget: str
    settings: str
    param_hashes: tuple[str, ...]
    documents: int

    @property
    def key(self) -> str:
        """A short stable name for the choice (used in links and on the command line)."""
        digest = hashlib.sha256(f"{self.method}\n{self.budget}\n{self.settings}".encode()).hexdigest()[:8]
        return f"{self.method}-{digest}"

    @property
    def label(self) -> str:
        return SEPARATOR.join([self.method, self.budget, *([self.settings] if self.settings else [])])


def summary_choices(store: Store, include_evaluation: bool = False) -> list[SummaryChoice]:
    """Every choice the store offers, most documents first."""
    grouped: dict[tuple[str, str, str], dict] = {}
    for row in store.exports.settings():
        if row["method"] in EVALUATION_ONLY_METHODS and not include_evaluation:
            continue
        key = (row["method"], budget_label(row["params"]), settings_label(row["method"], row["params"]))
        group = grouped.setdefault(key, {"hashes": [], "documents": 0})
        group["hashes"].append(row["param_hash"])
        group["documents"] += row["documents"]
    choices = [
        SummaryChoice(method, budget, settings, tuple(group["hashes"]), group["documents"])
        for (method, budget, settings), group in grouped.items()
    ]
    return sorted(choices, key=lambda c: (-c.documents, c.method, c.budget, c.settings))


def _budget_text(spec: str) -> str:
    if spec.strip().lower() == "reference":
        return MATCHED_LABEL
    try:
        return str(Budget.parse(spec))
    except ValueError as error:
        raise SummaryChoiceError(str(error)) from None


def choose_summaries(
    store: Store, method: str | None = None, budget: str | None = None, key: str | None = None
) -> SummaryChoice:
    """The one choice fitting ``method``, ``budget`` (budget grammar, or ``reference``)
    and ``key``; with none of them, the choice covering the most documents."""
    wanted_budget = _budget_text(budget) if budget else None
    include_evaluation = method in EVALUATION_ONLY_METHODS
    choices = summary_choices(store, include_evaluation=include_evaluation)
    fitting = [
        c for c in choices
        if (method is None or c.method == method)
        and (wanted_budget is None or c.budget == wanted_budget)
        and (key is None or c.key == key)
    ]
    if not choices:
        raise SummaryChoiceError("the store holds no summaries yet (`summarize run` makes them)")
    offered = "; ".join(f"{c.key} = {c.label} ({c.documents} documents)" for c in choices)
    if not fitting:
        raise SummaryChoiceError(f"no stored summaries fit that choice; the store has: {offered}")
    if len(fitting) > 1 and (method or budget) and not key:
        several = "; ".join(f"{c.key} = {c.label}" for c in fitting)
        raise SummaryChoiceError(f"several stored settings fit; pick one by its key: {several}")
    return fitting[0]
