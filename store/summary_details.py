"""Stored summaries with everything kept about them: sentences, the source spans
behind each, flags and scores.

Loaded for a whole selection at once — one query per table, joined to the
selection's condition — so showing or exporting n summaries costs the same five
queries whatever n is.
"""

from __future__ import annotations

import json
from collections import defaultdict
from collections.abc import Callable
from dataclasses import asdict, dataclass, field

import sqlite_utils

# Every query below joins its table ``x`` to the summaries ``s`` and their documents
# ``d``, and filters with the caller's condition over ``s`` and ``d``.
_SELECTION = "join summaries s on s.id = x.summary_id join documents d on d.id = s.document_id"


@dataclass
class SourceRead:
    """A source span behind a summary sentence, with the text it covers."""

    start: int
    end: int
    similarity: float
    text: str


@dataclass
class SentenceRead:
    position: int
    text: str
    score: float | None
    sources: list[SourceRead] = field(default_factory=list)


@dataclass
class FlagRead:
    position: int | None
    kind: str
    detail: str


@dataclass
class SummaryDetail:
    """A stored summary; ``scores`` maps a metric to ``{"precision", "recall", "f1"}``."""

    summary_id: int
    document_id: int
    method: str
    param_hash: str
    params: dict
    text: str
    details: dict
    run_id: int | None
    sentences: list[SentenceRead] = field(default_factory=list)
    flags: list[FlagRead] = field(default_factory=list)
    scores: dict[str, dict[str, float]] = field(default_factory=dict)

    def as_dict(self) -> dict:
        record = asdict(self)
        del record["document_id"]
        return record


def load_summary_details(
    db: sqlite_utils.Database, where: str, params: list, text_of: Callable[[int], str], order: str = "s.id"
) -> list[SummaryDetail]:
    """The summaries selected by ``where`` (a condition over ``s`` and ``d``), in
    ``order``; ``text_of(document_id)`` gives the text source spans slice."""
    summaries: dict[int, SummaryDetail] = {}
    for row in db.execute(
        "select s.id, s.document_id, s.method, s.param_hash, s.params, s.text, s.details, s.run_id "
        f"from summaries s join documents d on d.id = s.document_id where {where} order by {order}",
        params,
    ):
        summaries[row[0]] = SummaryDetail(
            row[0], row[1], row[2], row[3], json.loads(row[4]), row[5], json.loads(row[6] or "{}"), row[7]
        )
    sentences: dict[tuple[int, int], SentenceRead] = {}
    for summary_id, position, text, score in db.execute(
        f"select x.summary_id, x.position, x.text, x.score from summary_sentences x "
        f"{_SELECTION} where {where} order by x.summary_id, x.position",
        params,
    ):
        sentence = SentenceRead(position, text, score)
        sentences[summary_id, position] = sentence
        summaries[summary_id].sentences.append(sentence)
    for summary_id, position, start, end, similarity in db.execute(
        f'select x.summary_id, x.position, x.start, x."end", x.similarity from sentence_sources x '
        f"{_SELECTION} where {where} order by x.summary_id, x.position, x.rank",
        params,
    ):
        document_text = text_of(summaries[summary_id].document_id)
        sentences[summary_id, position].sources.append(
            SourceRead(start, end, similarity, document_text[start:end])
        )
    for summary_id, position, kind, detail in db.execute(
        f"select x.summary_id, x.position, x.kind, x.detail from flags x "
        f"{_SELECTION} where {where} order by x.id",
        params,
    ):
        summaries[summary_id].flags.append(FlagRead(position, kind, detail))
    grouped: dict[int, dict] = defaultdict(dict)
    for summary_id, metric, precision, recall, f1 in db.execute(
        f"select x.summary_id, x.metric, x.precision, x.recall, x.f1 from scores x "
        f"{_SELECTION} where {where} order by x.summary_id, x.metric",
        params,
    ):
        grouped[summary_id][metric] = {"precision": precision, "recall": recall, "f1": f1}
    for summary_id, scores in grouped.items():
        summaries[summary_id].scores = scores
    return list(summaries.values())
