"""Store reads and writes for evaluation: summaries still to be scored, the scores
themselves, and what comparisons and reports read back."""

from __future__ import annotations

import json
from collections import defaultdict
from dataclasses import dataclass, field

import sqlite_utils

from store.references import References
from store.runs import now


@dataclass(frozen=True)
class UnscoredSummary:
    """A summary of a document with a reference, not scored yet."""

    summary_id: int
    document_id: int
    reference: str
    sentences: list[str]


@dataclass
class ScoredSummary:
    """A scored summary of an active document; ``scores`` maps a metric to
    ``{"precision", "recall", "f1"}``."""

    summary_id: int
    document_id: int
    method: str
    param_hash: str
    params: dict
    text: str
    scores: dict[str, dict[str, float]] = field(default_factory=dict)


class EvaluationStore:
    """Scoring and comparison reads, and the score writes."""

    def __init__(self, db: sqlite_utils.Database, references: References):
        self.db = db
        self.references = references

    def stored_summary_budgets(self, exclude_methods: tuple[str, ...] = ()) -> list[tuple[int, dict]]:
        """``(document_id, params)`` of every summary of an active document with a
        reference, one per distinct parameter set and document."""
        placeholders = ",".join("?" for _ in exclude_methods) or "''"
        referenced = set(self.references.referenced_document_ids())
        rows = self.db.execute(
            "select distinct s.document_id, s.params from summaries s "
            "join documents d on d.id = s.document_id "
            f"where d.status = 'active' and s.method not in ({placeholders}) order by s.document_id",
            list(exclude_methods),
        ).fetchall()
        return [(row[0], json.loads(row[1])) for row in rows if row[0] in referenced]

    def unscored(self) -> list[UnscoredSummary]:
        """Summaries of documents with a reference that have no score yet, with their
        sentences in order and the reference text."""
        references = self.references.of_documents()
        rows = [
            row
            for row in self.db.execute(
                "select s.id, s.document_id from summaries s "
                "where not exists (select 1 from scores c where c.summary_id = s.id) order by s.id"
            ).fetchall()
            if row[1] in references
        ]
        sentences = self.sentences([row[0] for row in rows])
        return [
            UnscoredSummary(row[0], row[1], references[row[1]].text, sentences.get(row[0], [])) for row in rows
        ]

    def sentences(self, summary_ids: list[int]) -> dict[int, list[str]]:
        """Sentence texts of each summary, in order."""
        found: dict[int, list[str]] = defaultdict(list)
        for start in range(0, len(summary_ids), 500):
            chunk = summary_ids[start : start + 500]
            marks = ",".join("?" for _ in chunk)
            for summary_id, text in self.db.execute(
                f"select summary_id, text from summary_sentences where summary_id in ({marks}) "
                "order by summary_id, position",
                chunk,
            ):
                found[summary_id].append(text)
        return found

    def spans(self, summary_id: int) -> list[tuple[int, int]]:
        """Source spans behind a summary's sentences (every rank), in source order."""
        return [
            (row[0], row[1])
            for row in self.db.execute(
                "select start, \"end\" from sentence_sources where summary_id = ? order by start", [summary_id]
            )
        ]

    def write_scores(self, summary_id: int, values: dict) -> None:
        """Store one summary's scores: ``values`` maps a metric name to an object with
        ``precision``, ``recall`` and ``f1``. Existing scores of the same metric are kept."""
        created = now()
        with self.db.atomic():
            for metric, value in values.items():
                self.db.execute(
                    "insert or ignore into scores (summary_id, metric, precision, recall, f1, created) "
                    "values (?, ?, ?, ?, ?, ?)",
                    [summary_id, metric, value.precision, value.recall, value.f1, created],
                )

    def scored(self) -> list[ScoredSummary]:
        """Every scored summary of an active document, with its scores."""
        summaries: dict[int, ScoredSummary] = {}
        for row in self.db.execute(
            "select s.id, s.document_id, s.method, s.param_hash, s.params, s.text, "
            "c.metric, c.precision, c.recall, c.f1 from summaries s "
            "join documents d on d.id = s.document_id join scores c on c.summary_id = s.id "
            "where d.status = 'active' order by s.id, c.metric"
        ):
            summary_id = row[0]
            if summary_id not in summaries:
                summaries[summary_id] = ScoredSummary(
                    summary_id, row[1], row[2], row[3], json.loads(row[4]), row[5]
                )
            summaries[summary_id].scores[row[6]] = {"precision": row[7], "recall": row[8], "f1": row[9]}
        return list(summaries.values())

    def f1_by_metric(self, document_id: int, method: str, param_hash: str) -> dict[str, float]:
        """F1 per metric of one document's summary by ``method`` with these
        parameters (empty when it is not stored or not scored)."""
        return dict(
            self.db.execute(
                "select c.metric, c.f1 from summaries s join scores c on c.summary_id = s.id "
                "where s.document_id = ? and s.method = ? and s.param_hash = ?",
                [document_id, method, param_hash],
            ).fetchall()
        )
