"""The comparison page: per budget, the tables and charts of `summarize report`, and
the best- and worst-scored documents of the leading method as links to their pages.

Bootstrap intervals and charts take seconds on a large store, so a page is kept
until the store file changes.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from markupsafe import Markup

from store.store import Store
from summarize.evaluation.compare import compare
from summarize.evaluation.rouge import METRIC_LABELS, METRICS
from summarize.output.report import best_and_worst, comparison_tables, featured_system, length_chart, score_chart
from summarize.output.site.freshness import store_version

EXAMPLES = 5


@dataclass
class ExampleLink:
    document_id: int
    title: str
    scores: str


@dataclass
class BudgetSection:
    budget: str
    tables: Markup
    score_chart: str
    length_chart: str
    featured: str | None = None
    best: list[ExampleLink] = field(default_factory=list)
    worst: list[ExampleLink] = field(default_factory=list)


@dataclass
class ComparisonPage:
    sections: list[BudgetSection]
    resamples: int
    confidence: float


class ComparisonPages:
    """Comparison pages by budget, kept while the store file is unchanged."""

    def __init__(self):
        self.cache: dict[tuple, ComparisonPage] = {}

    def page(self, store: Store, db_path: str | Path, budget: str) -> ComparisonPage:
        version = store_version(db_path)
        key = (version, budget)
        if key not in self.cache:
            self.cache = {k: v for k, v in self.cache.items() if k[0] == version}
            self.cache[key] = _build(store, budget)
        return self.cache[key]


def _links(store: Store, featured, ids: list[int]) -> list[ExampleLink]:
    documents = store.documents.briefs(ids)
    metrics = [m for m in METRICS if m in featured.scores]
    links = []
    for document_id in ids:
        row = featured.per_document[document_id]
        values = ", ".join(f"{METRIC_LABELS[m]} {100 * row[m]:.1f}" for m in metrics)
        title = documents[document_id].title or documents[document_id].record_key
        links.append(ExampleLink(document_id, title, values))
    return links


def _build(store: Store, budget: str) -> ComparisonPage:
    comparison = compare(store, budget=None if budget == "all" else budget)
    sections = []
    for group in comparison.groups:
        section = BudgetSection(
            budget=group.budget,
            tables=Markup(comparison_tables(group, comparison)),
            score_chart=score_chart(group, comparison),
            length_chart=length_chart(group, comparison),
        )
        featured = featured_system(group)
        if featured is not None:
            best, worst = best_and_worst(featured, EXAMPLES)
            section.featured = featured.name
            section.best = _links(store, featured, best)
            section.worst = _links(store, featured, worst)
        sections.append(section)
    return ComparisonPage(sections, comparison.resamples, comparison.confidence)

