"""What the document page shows, prepared from ``store.queries.show``: each summary
with a short code, its readable label, sentences linked to their source spans (and,
for generated sentences, the spans that support them, with their flags), its ROUGE
scores; and the source text cut into marked pieces."""

from __future__ import annotations

import string
from dataclasses import dataclass, field

from summarize.evaluation.rouge import METRIC_LABELS, METRICS
from summarize.methods.labels import setting_label
from summarize.output.site.source_marks import SourceMarks, SourcePiece, span_anchor

# A source link at least this similar is the sentence itself (extractive).
_VERBATIM = 0.999


@dataclass
class SentenceView:
    text: str
    anchor: str | None
    verbatim: bool
    support: list[dict] = field(default_factory=list)
    flags: list[dict] = field(default_factory=list)


@dataclass
class SummaryView:
    code: str
    label: str
    method: str
    sentences: list[SentenceView]
    scores: dict[str, float]
    whole_flags: list[dict]


@dataclass
class DocumentView:
    record: dict
    summaries: list[SummaryView]
    pieces: list[SourcePiece]
    metrics: list[tuple[str, str]]
    codes: dict[str, str]


def summary_code(index: int) -> str:
    """A, B, …, Z, AA, AB, …"""
    letters = string.ascii_uppercase
    code = ""
    index += 1
    while index:
        index, remainder = divmod(index - 1, 26)
        code = letters[remainder] + code
    return code


def document_view(record: dict) -> DocumentView:
    summaries, uses = [], []
    for index, summary in enumerate(record["summaries"]):
        code = summary_code(index)
        sentences = []
        for sentence in summary["sentences"]:
            sources = sentence["sources"]
            verbatim = bool(sources) and sources[0]["similarity"] >= _VERBATIM
            for source in sources:
                uses.append((source["start"], source["end"], code))
            sentences.append(
                SentenceView(
                    text=sentence["text"],
                    anchor=span_anchor(sources[0]["start"], sources[0]["end"]) if sources else None,
                    verbatim=verbatim,
                    support=[] if verbatim else [
                        source | {"anchor": span_anchor(source["start"], source["end"])} for source in sources
                    ],
                    flags=[flag for flag in summary["flags"] if flag["position"] == sentence["position"]],
                )
            )
        summaries.append(
            SummaryView(
                code=code,
                label=setting_label(summary["method"], summary["params"]),
                method=summary["method"],
                sentences=sentences,
                scores={metric: values["f1"] for metric, values in summary["scores"].items()},
                whole_flags=[flag for flag in summary["flags"] if flag["position"] is None],
            )
        )
    metrics = [(m, METRIC_LABELS[m]) for m in METRICS if any(m in s.scores for s in summaries)]
    return DocumentView(
        record=record,
        summaries=summaries,
        pieces=SourceMarks(record["text"], uses).pieces(),
        metrics=metrics,
        codes={s.code: s.label for s in summaries},
    )
