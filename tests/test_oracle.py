"""The greedy oracle against rouge-score itself, on papers of the ACLSum package
(Takeshita et al. 2024) with their author abstracts as references."""

from __future__ import annotations

from dataclasses import replace

import pytest
from rouge_score import rouge_scorer

from summarize.evaluation.oracle import OracleSummarizer, sentence_objectives
from summarize.methods.budget import Budget, count_words
from summarize.reading.datasets import load_aclsum
from summarize.reading.split import split_document

DIRECT = rouge_scorer.RougeScorer(["rouge1", "rouge2"], use_stemmer=True)


def objective(reference: str, sentences: list[str]) -> float:
    # The objective as documented: mean of ROUGE-1 and ROUGE-2 F1 (common practice).
    values = DIRECT.score(reference, "\n".join(sentences))
    return (values["rouge1"].fmeasure + values["rouge2"].fmeasure) / 2


@pytest.fixture(scope="module")
def papers():
    documents = load_aclsum("val", limit=6)
    return [(document, split_document(document)) for document in documents]


def test_objective_equals_rouge_score_and_budget_holds(papers):
    # External check: the rouge-score package, on ACLSum papers (aclsum package)
    for document, segmentation in papers:
        budget = Budget(words=count_words(document.reference_summary))
        summary = OracleSummarizer(budget=budget).summarize(document, segmentation)
        chosen = [s.text for s in summary.sentences]
        assert summary.details["objective"] == pytest.approx(objective(document.reference_summary, chosen), abs=1e-12)
        assert sum(count_words(s) for s in chosen) <= budget.words
        starts = [s.sources[0].span.start for s in summary.sentences]
        assert starts == sorted(starts)


@pytest.mark.slow
def test_first_choice_is_the_best_single_sentence(papers):
    # External check: the rouge-score package, on ACLSum papers (aclsum package)
    # With a one-sentence budget the greedy search is exhaustive: it must pick the
    # sentence a brute-force search with rouge-score picks (ties: the earlier one).
    for document, segmentation in papers:
        summary = OracleSummarizer(budget=Budget(sentences=1)).summarize(document, segmentation)
        candidates = [
            i for i, text in enumerate(segmentation.sentence_texts(document.text))
            if not segmentation.sentence_is_heading[i] and count_words(text) >= 4
        ]
        values = [objective(document.reference_summary, [segmentation.sentences[i].slice(document.text)]) for i in candidates]
        best = candidates[max(range(len(values)), key=lambda k: (values[k], -k))]
        assert summary.details["sentence_indices"] == [best]


def test_sentence_objectives_equal_rouge_score_on_each_sentence(papers):
    # External check: the rouge-score package, on ACLSum papers (aclsum package)
    for document, segmentation in papers[:3]:
        texts = segmentation.sentence_texts(document.text)
        values = sentence_objectives(texts, document.reference_summary)
        expected = [objective(document.reference_summary, [text]) for text in texts]
        assert values == pytest.approx(expected, abs=1e-12)
    assert len(sentence_objectives([], "a reference")) == 0


def test_adding_sentences_never_lowers_the_objective(papers):
    document, segmentation = papers[0]
    values = [
        OracleSummarizer(budget=Budget(sentences=n)).summarize(document, segmentation).details["objective"]
        for n in (1, 2, 4)
    ]
    assert values == sorted(values)


def test_oracle_needs_a_reference(papers):
    document, segmentation = papers[0]
    with pytest.raises(ValueError):
        OracleSummarizer().summarize(replace(document, reference_summary=None), segmentation)
