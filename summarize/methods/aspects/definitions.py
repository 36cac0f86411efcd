"""Aspects: named questions with guide phrases, and the default set for report archives.

An aspect is what an analyst asks of every report ("what caused it?"). Its guide
phrases are the words reports use when they answer it; ``labels`` are the headings
under which a reference gives that aspect's answer ("Cause:" in a sidecar, a
``cause`` field of a JSON record). The default phrases below are our own choice for
incident, inspection and audit reports; an archive with other habits brings its own
(job file ``[aspects.NAME]`` tables, or :func:`aspects_from_mapping`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from store.errors import UsageError

# "<date>" and "<number>" in a guide phrase stand for any date or number.
_PLACEHOLDERS = {
    "<date>": r"(?:\d{1,2}\s+[A-Z][a-z]+\s+\d{4}|[A-Z][a-z]+\s+\d{4}|\d{4}-\d{2}-\d{2}|\d{1,2}/\d{1,2}/\d{2,4}"
    r"|(?:end|mid|start)\s+of\s+[A-Za-z]+|Q[1-4](?:\s+\d{4})?)",
    "<number>": r"\d+(?:[.,]\d+)?",
}


@dataclass(frozen=True)
class Aspect:
    """A named question and the phrases that signal an answer to it.

    ``name`` identifies the aspect in the store and on the command line; ``question``
    is shown to people and joins the query; ``phrases`` are matched case-insensitively
    on word boundaries, with ``<date>`` and ``<number>`` as wildcards; ``labels`` are
    the headings of this aspect in labelled references (the name itself always
    counts). ``phrase_required``: a sentence answers only if it holds a guide phrase
    outside a negated statement (the default, for archives where many documents do
    not address an aspect); False lets the phrases and the question's words only rank
    — for aspects every document addresses, such as a paper's problem and results.
    """

    name: str
    question: str
    phrases: tuple[str, ...]
    labels: tuple[str, ...] = field(default_factory=tuple)
    phrase_required: bool = True

    def __post_init__(self) -> None:
        if not re.fullmatch(r"[a-z][a-z0-9_-]*", self.name):
            raise UsageError(f"aspect name {self.name!r}: use lower-case letters, digits, '-' or '_'")
        if not self.phrases:
            raise UsageError(f"aspect {self.name!r} needs at least one guide phrase")

    def phrase_patterns(self) -> list[re.Pattern]:
        patterns = []
        for phrase in self.phrases:
            pieces = re.split(r"(<date>|<number>)", phrase.strip())
            body = "".join(_PLACEHOLDERS.get(piece, re.escape(piece)) for piece in pieces)
            patterns.append(re.compile(rf"(?<!\w){body}(?!\w)", re.IGNORECASE))
        return patterns

    def query_text(self) -> str:
        """The words of the question and the phrases, placeholders left out."""
        phrases = " ".join(re.sub(r"<date>|<number>", " ", p) for p in self.phrases)
        return f"{self.question} {phrases}"

    def all_labels(self) -> tuple[str, ...]:
        return (self.name.replace("_", " ").replace("-", " "), *self.labels)

    def as_dict(self) -> dict:
        return {"name": self.name, "question": self.question, "phrases": list(self.phrases), "labels": list(self.labels),
                "phrase_required": self.phrase_required}


REPORT_ASPECTS: tuple[Aspect, ...] = (
    Aspect(
        "cause",
        "What caused it?",
        ("root cause", "because", "due to", "caused by", "failure of", "failed", "was traced to",
         "contributing factor", "causal factor", "resulted from", "as a result of", "led to"),
        ("Cause", "Causes", "Root cause", "Why it happened"),
    ),
    Aspect(
        "actions",
        "What was done in response?",
        ("immediate action", "was isolated", "were isolated", "we replaced", "was replaced", "were replaced",
         "was repaired", "was shut down", "was closed", "was issued", "were notified", "was stopped",
         "straight away", "at once", "within hours", "in response", "were taken", "called back",
         "was informed", "were informed",
         # Timelines drop the auxiliary ("12:10: pressure restored", "fix deployed"), so
         # participles that rarely describe anything but a response stand alone.
         "restored", "restarted", "reinstated", "deployed", "disabled", "fitted", "was fixed", "were fixed",
         "been fixed"),
        ("Actions", "Actions taken", "Action taken", "What was done", "Response"),
    ),
    Aspect(
        "open_items",
        "What is still outstanding?",
        ("recommendation", "recommend", "recommended", "by <date>", "by the end of", "outstanding", "remains open",
         "still open", "to be completed", "is to be", "are to be", "follow-up", "pending", "is due", "are due",
         "target date", "not yet", "still to be", "agreed actions"),
        ("Open items", "Open points", "Outstanding", "Still open", "Follow-up"),
    ),
)


def aspects_from_mapping(table: dict) -> tuple[Aspect, ...]:
    """Aspects from a job file's ``[aspects]`` table: one sub-table per aspect with
    ``question`` (text), ``phrases`` (list of text) and optionally ``labels`` and
    ``phrase_required`` (true or false)."""
    aspects = []
    for name, entry in table.items():
        if not isinstance(entry, dict):
            raise UsageError(f"aspect {name!r}: expected a table with question and phrases")
        unknown = set(entry) - {"question", "phrases", "labels", "phrase_required"}
        if unknown:
            raise UsageError(f"aspect {name!r}: unknown setting(s) {', '.join(sorted(unknown))}")
        phrases = entry.get("phrases") or []
        labels = entry.get("labels") or []
        if not all(isinstance(p, str) for p in [*phrases, *labels]):
            raise UsageError(f"aspect {name!r}: phrases and labels must be lists of text")
        required = entry.get("phrase_required", True)
        if not isinstance(required, bool):
            raise UsageError(f"aspect {name!r}: phrase_required must be true or false")
        aspects.append(Aspect(name, str(entry.get("question") or name), tuple(phrases), tuple(labels), required))
    if not aspects:
        raise UsageError("the [aspects] table defines no aspect")
    return tuple(aspects)


def choose_aspects(names: list[str] | None, aspects: tuple[Aspect, ...] = REPORT_ASPECTS) -> tuple[Aspect, ...]:
    """The aspects named (all when ``names`` is empty), in the order given."""
    if not names:
        return aspects
    known = {aspect.name: aspect for aspect in aspects}
    missing = [name for name in names if name not in known]
    if missing:
        raise UsageError(f"unknown aspect(s) {', '.join(missing)} (known: {', '.join(known)})")
    return tuple(known[name] for name in names)


# Aspects of a research paper, named as ACLSum names them (Takeshita et al. 2024);
# the phrases are our own choice. Every paper states its problem, approach and
# results, so a guide phrase ranks sentences but is not required of an answer (on
# ACLSum's validation split requiring one left 6 of 50 papers without a challenge and
# lowered ROUGE-1).
PAPER_ASPECTS: tuple[Aspect, ...] = (
    Aspect(
        "challenge",
        "What problem or challenge does the paper address?",
        ("problem", "challenge", "however", "difficult", "limitation", "remains", "lack", "costly", "expensive",
         "suffer", "unclear", "issue"),
        phrase_required=False,
    ),
    Aspect(
        "approach",
        "What approach does the paper propose?",
        ("we propose", "we present", "we introduce", "our method", "our approach", "our model", "this paper",
         "in this paper", "based on", "framework", "method"),
        phrase_required=False,
    ),
    Aspect(
        "outcome",
        "What are the results?",
        ("results show", "outperforms", "improves", "significantly", "achieves", "state-of-the-art", "experiments show",
         "we show", "demonstrate", "better than", "improvement"),
        phrase_required=False,
    ),
)
