"""The aspect summarizer: query-biased centrality, then MMR, with a confidence."""

from __future__ import annotations

import re
from collections.abc import Container, Iterable
from dataclasses import dataclass, field

import numpy as np

from store.aspect_records import AspectSummary
from store.records import Document, Segmentation
from summarize.methods.aspects.definitions import Aspect
from summarize.methods.aspects.lexrank import QueryBiasedLexRank
from summarize.methods.aspects.relevance import QueryRelevance
from summarize.methods.budget import Budget, count_words
from summarize.methods.extractive import (
    CosineRows,
    extracted_sentences,
    mmr_order,
    rank_by_score,
    selectable_sentences,
)

ASPECT_BUDGET = Budget(sentences=2)


# The start of a list item's line: "1. ", "2) ", "- ", "• ", "(a) ", "b) ".
_LIST_ITEM = re.compile(r"[ \t]*(?:\d{1,3}[.)]|[-–•*]|\(?[A-Za-z0-9]{1,3}\))[ \t]")
# A field of a list item: "Owner: ", "Target: ", "Due date: ".
_ITEM_FIELD = re.compile(r"[A-Z][A-Za-z]*(?: [A-Za-z]+){0,2}:[ \t]")


def _line_starts(text: str, segmentation: Segmentation) -> list[int]:
    """Where the line holding each sentence's start begins (one pass over the text,
    so a long document without line breaks costs no more than one with them)."""
    starts = []
    line = 0
    previous = 0
    for span in segmentation.sentences:
        newline = text.rfind("\n", previous, span.start)
        if newline >= 0:
            line = newline + 1
        previous = span.start
        starts.append(line)
    return starts


def list_item_fields(text: str, segmentation: Segmentation) -> dict[int, int]:
    """Field sentences of list items → the item's first sentence. A field ("Owner:
    …", "Target: … by December 2024") follows the first sentence of a list item on
    the same line: the first sentence says what is to be done, the fields who and
    when, so a field alone answers nothing, and what it says counts for its item."""
    fields: dict[int, int] = {}
    head = None
    line = -1
    for index, start in enumerate(_line_starts(text, segmentation)):
        if start != line:
            line = start
            head = index if _LIST_ITEM.match(text, start) else None
        elif head is not None and _ITEM_FIELD.match(text, segmentation.sentences[index].start):
            fields[index] = head
    return fields


def list_lead_ins(text: str, segmentation: Segmentation) -> dict[int, int]:
    """The first sentence of each list item → the sentence ending in a colon that
    introduces the list ("The burst was caused by the combination of:"). The lead-in
    says what the items are; an item alone often does not ("1. the pressure
    transient from the pump trip")."""
    lead_ins: dict[int, int] = {}
    lead_in = None
    line = -1
    for index, start in enumerate(_line_starts(text, segmentation)):
        heading = segmentation.sentence_is_heading[index]
        if start != line:
            line = start
            if lead_in is not None and not heading and _LIST_ITEM.match(text, start):
                lead_ins[index] = lead_in
            else:
                lead_in = None
        if not heading and segmentation.sentences[index].slice(text).rstrip().endswith(":"):
            lead_in = index
    return lead_ins


def judged_texts(text: str, segmentation: Segmentation, texts: list[str]) -> tuple[list[str], dict[int, int]]:
    """The text each sentence's relevance to an aspect is judged on — a list item's
    first sentence together with the list's lead-in (:func:`list_lead_ins`) and the
    item's fields (:func:`list_item_fields`), any other sentence alone — and the
    fields."""
    fields = list_item_fields(text, segmentation)
    judged = list(texts)
    for head, lead_in in list_lead_ins(text, segmentation).items():
        judged[head] = f"{texts[lead_in]} {judged[head]}"
    for field_index, head in fields.items():
        judged[head] += " " + texts[field_index]
    return judged, fields


def answer_candidates(
    segmentation: Segmentation, texts: list[str], words: list[int], min_words: int, max_words: int,
    fields: Container[int] = (),
) -> list[int]:
    """Sentences an answer may use: selectable (no headings, at least ``min_words``
    words), at most ``max_words`` long — longer "sentences" are flattened tables or
    lists, which answer nothing in a few words — not ending in a colon (a line
    that introduces a list says nothing by itself) and not among ``fields`` (list
    item fields, :func:`list_item_fields`)."""
    return [
        i for i in selectable_sentences(segmentation, words, min_words)
        if words[i] <= max_words and not texts[i].rstrip().endswith(":") and i not in fields
    ]


def aspect_params(params: dict, aspect: Aspect) -> dict:
    """A method's parameters for one aspect: the aspect's definition is part of them,
    so editing its phrases makes new summaries rather than reusing old ones."""
    return params | {"aspect": aspect.as_dict()}


def aspect_summary(
    method: str,
    params: dict,
    aspect: Aspect,
    document: Document,
    segmentation: Segmentation,
    chosen: list[int],
    scores: np.ndarray,
    confidence: float,
    details: dict,
) -> AspectSummary:
    """An AspectSummary of the ``chosen`` sentences in document order."""
    sentences = extracted_sentences(document, segmentation, sorted(chosen), scores)
    return AspectSummary(aspect.name, method, aspect_params(params, aspect), sentences, round(float(confidence), 4),
                         details | {"sentence_indices": sorted(chosen)})


@dataclass
class AspectSummarizer:
    """Extractive answer to an aspect: query-biased LexRank (Otterbacher, Erkan &
    Radev 2005) for ranking, MMR (Carbonell & Goldstein 1998) against redundancy.

    1. ``rel(s | q)`` and its rescaled ``evidence(s)`` for every sentence
       (:class:`~summarize.methods.aspects.relevance.QueryRelevance`); a list item's
       first sentence is judged together with the line that introduces the list
       ("… was caused by the combination of:") and the item's fields ("Owner: …",
       "Target: …"), which never answer by themselves (:func:`judged_texts`; our own
       rule).
    2. Candidates: :func:`answer_candidates` (``min_words`` to ``max_words`` words)
       with ``evidence(s) ≥ min_evidence`` and — when the aspect's
       ``phrase_required`` holds, as by default — a guide-phrase match outside a
       negated statement: words of the question met one by one rank sentences but
       never make one an answer. None → the document does not
       address the aspect: no summary, confidence 0 (never a filler sentence).
    3. Ranking: ``p(s | q)`` of query-biased LexRank with ``bias``
       (:class:`~summarize.methods.aspects.lexrank.QueryBiasedLexRank`), over the
       whole document's graph so centrality among all sentences counts.
    4. MMR with ``mmr_lambda`` over TF-IDF cosines, then :meth:`Budget.select`.

    Confidence = mean over the chosen sentences of ``e / (1 + e)`` with ``e =
    evidence(s)`` (evidence read as odds: 0.5 for one guide phrase's worth, 0.75 for
    three). The squashing is our own choice; it orders answers by how much they
    say about the aspect but is not a calibrated probability (the learned variant's
    is closer to one).
    ``fit(texts)`` fits the IDF over the archive.
    """

    budget: Budget = ASPECT_BUDGET
    min_words: int = 4
    max_words: int = 60
    bias: float = 0.85
    mmr_lambda: float = 0.7
    min_evidence: float = 0.5
    top_k: int | None = 50
    name: str = field(default="aspect-lexrank", init=False)

    def get_params(self) -> dict:
        return {
            "budget": self.budget.as_dict(),
            "min_words": self.min_words,
            "max_words": self.max_words,
            "bias": self.bias,
            "mmr_lambda": self.mmr_lambda,
            "min_evidence": self.min_evidence,
            "top_k": self.top_k,
        }

    def fit(self, texts: Iterable[str]) -> AspectSummarizer:
        self.relevance_ = QueryRelevance().fit(texts)
        return self

    def evidence(self, texts: list[str], aspect: Aspect) -> tuple[np.ndarray, np.ndarray]:
        """``evidence(s)`` per sentence and the guide-phrase match counts."""
        relevance, phrase_hits = self._relevance().relevance(texts, aspect)
        return relevance / self._relevance().evidence_unit(aspect), phrase_hits

    def _relevance(self) -> QueryRelevance:
        if not hasattr(self, "relevance_"):
            raise RuntimeError("AspectSummarizer.fit must be called (on the archive) before summarize")
        return self.relevance_

    def summarize(self, document: Document, segmentation: Segmentation, aspect: Aspect) -> AspectSummary:
        texts = segmentation.sentence_texts(document.text)
        words = [count_words(t) for t in texts]
        judged, fields = judged_texts(document.text, segmentation, texts)
        evidence, phrase_hits = self.evidence(judged, aspect)
        candidates = [
            i for i in answer_candidates(segmentation, texts, words, self.min_words, self.max_words, fields)
            if evidence[i] >= self.min_evidence and (phrase_hits[i] > 0 or not aspect.phrase_required)
        ]
        best = float(evidence.max()) if len(evidence) else 0.0
        if not candidates:
            return aspect_summary(self.name, self.get_params(), aspect, document, segmentation, [], np.zeros(0), 0.0,
                                  {"best_evidence": round(best, 4)})
        vectors = self._relevance().sentence_vectors(texts)
        scores = QueryBiasedLexRank(self.bias, self.top_k).scores(vectors, np.clip(evidence, 0, None))
        ranked = mmr_order(scores, CosineRows(vectors), rank_by_score(scores, candidates), self.mmr_lambda)
        chosen = self.budget.select(ranked, words)
        confidence = float(np.mean(evidence[chosen] / (1 + evidence[chosen])))
        return aspect_summary(self.name, self.get_params(), aspect, document, segmentation, chosen, scores, confidence,
                              {"best_evidence": round(best, 4)})
