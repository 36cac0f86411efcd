"""Aspect summaries: the graph rankings against networkx, the relevance formula, the
selection rules, labelled references."""

from __future__ import annotations

import math
from copy import copy

import networkx as nx
import numpy as np
import pytest
from rouge_score import rouge_scorer

from store.errors import UsageError
from store.records import Document
from summarize.evaluation.matched import MatchedBudget
from summarize.evaluation.oracle import OracleSummarizer
from summarize.methods.aspects.definitions import PAPER_ASPECTS, REPORT_ASPECTS, Aspect, aspects_from_mapping
from summarize.methods.aspects.learned import LearnedAspectSummarizer
from summarize.methods.aspects.lexrank import ContinuousLexRank, QueryBiasedLexRank, cosine_graph
from summarize.methods.aspects.negation import NegationScope
from summarize.methods.aspects.references import aspect_references, labelled_sections
from summarize.methods.aspects.relevance import QueryRelevance
from summarize.methods.aspects.selection import AspectSummarizer, list_item_fields, list_lead_ins
from summarize.methods.budget import count_words
from summarize.reading.datasets import line_segmentation, load_aclsum_aspects
from summarize.reading.split import split_document


@pytest.fixture(scope="module")
def papers():
    documents = load_aclsum_aspects("test", limit=12)
    return [(d, line_segmentation(d)) for d in documents]


@pytest.fixture(scope="module")
def fitted(papers):
    return AspectSummarizer().fit([d.text for d, _ in papers])


def _sentence_vectors(fitted, document, segmentation):
    return fitted.relevance_.sentence_vectors(segmentation.sentence_texts(document.text))


# External check: networkx; Erkan & Radev (2004), Otterbacher, Erkan & Radev (2005)
# networkx's pagerank on the same weighted graph; continuous LexRank as defined by
# Erkan & Radev (2004).
def test_continuous_lexrank_equals_networkx_pagerank(papers, fitted):
    for document, segmentation in papers[:4]:
        vectors = _sentence_vectors(fitted, document, segmentation)
        graph = cosine_graph(vectors)
        ours = ContinuousLexRank(damping=0.85).scores(vectors)
        reference = nx.pagerank(nx.from_scipy_sparse_array(graph), alpha=0.85, weight="weight", tol=1e-14,
                                max_iter=10_000)
        assert np.allclose(ours, [reference[i] for i in range(len(ours))], atol=1e-6)
        # The graph really is the cosine similarity of the l2-normalised rows.
        dense = (vectors @ vectors.T).toarray()
        np.fill_diagonal(dense, 0.0)
        assert np.allclose(graph.toarray(), dense)


# External check: networkx; Erkan & Radev (2004), Otterbacher, Erkan & Radev (2005)
# networkx's personalised PageRank (`personalization`, whose teleport vector also
# receives dangling mass); query-biased LexRank as Otterbacher, Erkan &
# Radev (2005) define it.
def test_query_biased_lexrank_equals_networkx_personalised_pagerank(papers, fitted):
    aspect = PAPER_ASPECTS[2]
    for document, segmentation in papers[:4]:
        texts = segmentation.sentence_texts(document.text)
        vectors = _sentence_vectors(fitted, document, segmentation)
        relevance, _ = fitted.relevance_.relevance(texts, aspect)
        assert relevance.sum() > 0
        ours = QueryBiasedLexRank(bias=0.7).scores(vectors, relevance)
        weights = {i: value / relevance.sum() for i, value in enumerate(relevance)}
        reference = nx.pagerank(nx.from_scipy_sparse_array(cosine_graph(vectors)), alpha=0.3,
                                personalization=weights, weight="weight", tol=1e-14, max_iter=10_000)
        assert np.allclose(ours, [reference[i] for i in range(len(ours))], atol=1e-6)


# External check: Otterbacher, Erkan & Radev (2005); scikit-learn's smooth-IDF formula
# The relevance formula rel(s|q) = Σ_w log(tf(w,s)+1)·log(tf(w,q)+1)·idf(w), worked by hand with
# scikit-learn's documented smooth IDF ln((1+n)/(1+df))+1.
def test_relevance_follows_the_published_formula_worked_by_hand():
    archive = ["the pump failed", "the valve leaked", "pump pump station"]
    aspect = Aspect("cause", "pump", ("valve leak",))
    relevance = QueryRelevance().fit(archive)
    values, hits = relevance.relevance(["pump failed near the pump", "nothing here at all"], aspect)
    idf_pump = math.log(4 / 3) + 1  # in 2 of 3 documents
    idf_valve = math.log(4 / 2) + 1  # "valve": 1 of 3
    idf_leak = math.log(4 / 2) + 1  # "leaked" stems to "leak": 1 of 3
    # query words: pump (once in the question), valve, leak (once each in the phrase)
    expected_first = math.log(3) * math.log(2) * idf_pump
    assert values[0] == pytest.approx(expected_first)
    assert values[1] == 0.0 and list(hits) == [0, 0]
    values, hits = relevance.relevance(["a valve leak"], aspect)
    phrase_idf = idf_valve + idf_leak
    expected = math.log(2) * math.log(2) * (idf_valve + idf_leak) + math.log(2) * math.log(2) * phrase_idf
    assert values[0] == pytest.approx(expected) and hits[0] == 1


def test_aspect_not_addressed_gives_no_summary_rather_than_filler():
    text = ("Quarterly figures\n\nThe committee met on Tuesday and approved the minutes of the last meeting. "
            "Attendance was good and the room was warm. The next meeting is in the spring.")
    document = Document("k", "k.txt", text, "text", "0" * 64, len(text))
    summarizer = AspectSummarizer().fit([text])
    cause = REPORT_ASPECTS[0]
    summary = summarizer.summarize(document, split_document(document), cause)
    assert not summary.addressed and summary.sentences == [] and summary.confidence == 0.0
    text2 = text + " The outage was caused by a failure of the main breaker, because the relay was set too low."
    document2 = Document("k2", "k2.txt", text2, "text", "1" * 64, len(text2))
    answer = AspectSummarizer().fit([text2]).summarize(document2, split_document(document2), cause)
    assert answer.addressed and "caused by a failure" in answer.text
    assert 0 < answer.confidence < 1
    for sentence in answer.sentences:
        assert sentence.sources[0].span.slice(text2) == sentence.text


def test_answers_are_spans_in_document_order_within_budget(papers, fitted):
    for document, segmentation in papers:
        for aspect in PAPER_ASPECTS:
            summary = fitted.summarize(document, segmentation, aspect)
            assert len(summary.sentences) <= 2
            starts = [s.sources[0].span.start for s in summary.sentences]
            assert starts == sorted(starts)
            for sentence in summary.sentences:
                assert sentence.sources[0].span.slice(document.text) == sentence.text
            assert summary.params["aspect"]["name"] == aspect.name


def test_labelled_sections_and_json_fields_become_aspect_references():
    reference = ("The pump failed on Monday.\nCause: A worn bearing.\nActions taken: The pump was isolated\n"
                 "and replaced.\n**Open items:** Audit the greasing records by March 2025.")
    sections = labelled_sections(reference, REPORT_ASPECTS)
    assert sections == {"cause": "A worn bearing.", "actions": "The pump was isolated and replaced.",
                        "open_items": "Audit the greasing records by March 2025."}
    document = Document("r#1", "r.json", "text", "json", "2" * 64, 4, reference_summary="Plain summary.",
                        metadata={"root cause": "Lightning.", "open_items": "Replace the arrester."})
    assert aspect_references(document, REPORT_ASPECTS) == {"cause": "Lightning.", "open_items": "Replace the arrester."}


def test_aspects_from_a_job_table_and_their_errors():
    aspects = aspects_from_mapping({"cost": {"question": "What did it cost?", "phrases": ["£<number>", "cost"]}})
    assert aspects[0].name == "cost"
    assert aspects[0].phrase_patterns()[0].search("about £23,000 in repairs")
    assert aspects[0].phrase_patterns()[0].search("priced at £23") is not None
    with pytest.raises(UsageError):
        aspects_from_mapping({"cost": {"question": "?", "phrases": []}})
    with pytest.raises(UsageError):
        aspects_from_mapping({"cost": {"phrases": ["x"], "colour": "red"}})
    with pytest.raises(UsageError):
        Aspect("Bad Name", "?", ("x",))
    date = REPORT_ASPECTS[2].phrase_patterns()[REPORT_ASPECTS[2].phrases.index("by <date>")]
    assert date.search("to be replaced by 30 April 2025") and date.search("by end of November")


# Common practice (no outside source): invented sentences; the rule is NegEx's
# pre-negation trigger with a clause-bounded window (Chapman et al. 2001, recalled
# from memory).
@pytest.mark.parametrize(("sentence", "phrase", "negated"), [
    ("No water quality failures resulted from the incident.", "resulted from", True),
    ("There was no evidence that the pump failed on the night.", "failed", True),
    ("The delay was not caused by the contractor.", "caused by", True),
    ("Nobody could say why the valve failed.", "failed", True),
    ("The outage resulted from a failed relay at the substation.", "resulted from", False),
    ("No one was hurt, but the fire resulted from a faulty heater.", "resulted from", False),
    ("With no pumps available, the station was shut down.", "was shut down", False),
    ("The hatch seal has not yet been replaced.", "not yet", False),
    ("No spare parts were held in the store for the lubricator on that curve, so it failed.", "failed", False),
])
def test_negated_guide_phrases_are_recognised(sentence, phrase, negated):
    start = sentence.lower().index(phrase)
    assert NegationScope().negated(sentence, start) is negated


# Common practice (no outside source): invented report text. A negated statement and
# question words met one by one ("cause", "it") are not answers; a real guide-phrase
# match is.
def test_relevance_needs_a_guide_phrase_that_is_not_negated():
    cause = REPORT_ASPECTS[0]
    loose = ("Incident review\n\nNo water quality failures resulted from the incident. "
             "The team discussed what might cause it at the next workshop. "
             "Operators met on Tuesday to agree the shift schedule.")
    document = Document("n", "n.txt", loose, "text", "3" * 64, len(loose))
    summarizer = AspectSummarizer().fit([loose])
    texts = split_document(document).sentence_texts(loose)
    evidence, hits = summarizer.evidence(texts, cause)
    assert list(hits) == [0] * len(texts)
    assert max(evidence) > 0  # the question's words still count towards ranking
    summary = summarizer.summarize(document, split_document(document), cause)
    assert not summary.addressed and summary.sentences == []
    answered = loose + " The outage resulted from a failed relay at the substation."
    document = Document("a", "a.txt", answered, "text", "4" * 64, len(answered))
    answer = AspectSummarizer().fit([answered]).summarize(document, split_document(document), cause)
    assert [s.text for s in answer.sentences] == ["The outage resulted from a failed relay at the substation."]


def _split_invented(text: str, key: str):
    """An invented plain-text document, its segmentation, its sentence texts and
    each text's index."""
    document = Document(key, f"{key}.txt", text, "text", key * 64, len(text))
    segmentation = split_document(document)
    texts = segmentation.sentence_texts(text)
    return document, segmentation, texts, {t: i for i, t in enumerate(texts)}


# Common practice (no outside source): invented report text. Incident timelines
# drop the auxiliary verb ("12:10: pressure restored", "fix deployed"); such a
# report addresses the actions aspect, and a closure that is not a response
# (a school shut for its holiday) is not the answer.
def test_timeline_entries_without_an_auxiliary_answer_the_actions_aspect():
    actions = REPORT_ASPECTS[1]
    text = ("Sequence of events\n\n- 03:05: The duty pump tripped on high bearing temperature.\n"
            "- 09:15: A replacement contactor coil was obtained from the stores.\n"
            "- 11:40: Standby pump restarted and pressure restored to the zone.\n"
            "- 14:00: Fix deployed to the telemetry outstation.\n\n"
            "The primary school was closed for the summer holiday. "
            "Attendance at the customer hall was lower than expected.")
    document, segmentation, texts, _ = _split_invented(text, "6")
    summarizer = AspectSummarizer().fit([text])
    _, hits = summarizer.evidence(texts, actions)
    answering = {t for t, h in zip(texts, hits) if h}
    assert any("restarted and pressure restored" in t for t in answering)
    assert any("Fix deployed" in t for t in answering)
    answer = summarizer.summarize(document, segmentation, actions)
    assert answer.addressed
    assert "restarted and pressure restored" in answer.text and "summer holiday" not in answer.text


# Common practice (no outside source): invented report text. An agreed-actions list
# gives each item's fields ("Owner: …", "Target: … by December 2024") as sentences of
# their own after the item's first sentence; a field alone answers nothing, and its
# guide phrase ("by <date>") counts for the item it belongs to.
def test_list_item_fields_count_for_their_item_and_never_answer_alone():
    open_items = REPORT_ASPECTS[2]
    text = ("Agreed actions\n\n"
            "The following items were agreed with the board.\n"
            "1. Replace the three station pumps with variable-speed units. Owner: Jo Bell. "
            "Target: business case to the capital committee by December 2024.\n"
            "2. Review the maintenance records at the station. Owner: Sam Hale. Target: report by February 2025.\n"
            "Note: the pumps date from 1988. The site was visited twice in the summer.")
    document, segmentation, texts, index = _split_invented(text, "7")
    first = index["1. Replace the three station pumps with variable-speed units."]
    second = index["2. Review the maintenance records at the station."]
    assert list_item_fields(text, segmentation) == {
        index["Owner: Jo Bell."]: first,
        index["Target: business case to the capital committee by December 2024."]: first,
        index["Owner: Sam Hale."]: second,
        index["Target: report by February 2025."]: second,
    }  # "Note: …" starts a line that is not a list item: not a field
    answer = AspectSummarizer().fit([text]).summarize(document, segmentation, open_items)
    assert [s.text for s in answer.sentences] == [texts[first], texts[second]]


# Common practice (no outside source): invented report text. A list introduced by
# "… was caused by the combination of:" answers the cause aspect through its items,
# though no item names a cause itself; the list ends at the first line that is not
# an item.
def test_a_list_lead_in_counts_for_the_items_it_introduces():
    cause = REPORT_ASPECTS[0]
    text = ("Findings\n\nThe burst was caused by the combination of:\n"
            "1. a pressure surge from the pump trip, well above the normal working range;\n"
            "2. the first hard frost of the season, with the ground at freezing point overnight.\n"
            "The repair crew arrived at dawn and the road reopened at noon.\n"
            "- Traffic was diverted along the bypass for the day.")
    document, segmentation, texts, index = _split_invented(text, "8")
    lead_in = index["The burst was caused by the combination of:"]
    first = index["1. a pressure surge from the pump trip, well above the normal working range;"]
    second = index["2. the first hard frost of the season, with the ground at freezing point overnight."]
    assert list_lead_ins(text, segmentation) == {first: lead_in, second: lead_in}
    answer = AspectSummarizer().fit([text]).summarize(document, segmentation, cause)
    assert [s.text for s in answer.sentences] == [texts[first], texts[second]]


# Common practice (no outside source): invented sentences. An aspect that every
# document addresses (phrase_required false) may be answered by the question's
# words alone; the default aspect may not.
def test_phrase_required_can_be_switched_off_per_aspect():
    text = ("Review\n\nThe team discussed what might cause it at the next workshop. "
            "Operators met on Tuesday to agree the shift schedule.")
    document = Document("p", "p.txt", text, "text", "5" * 64, len(text))
    aspects = aspects_from_mapping({
        "strict": {"question": "What caused it?", "phrases": ["caused by"]},
        "loose": {"question": "What caused it?", "phrases": ["caused by"], "phrase_required": False},
    })
    summarizer = AspectSummarizer(min_evidence=0.1).fit([text])
    strict, loose = (summarizer.summarize(document, split_document(document), aspect) for aspect in aspects)
    assert not strict.addressed
    assert loose.addressed and "might cause it" in loose.text
    assert loose.params["aspect"]["phrase_required"] is False
    with pytest.raises(UsageError):
        aspects_from_mapping({"x": {"question": "?", "phrases": ["y"], "phrase_required": "yes"}})


# External check: the rouge-score package, on ACLSum papers (aclsum package)
# The labels as the learned scorer's docstring defines them: the greedy oracle's
# sentences against the aspect reference, plus the `label_top` candidates whose own
# mean of ROUGE-1 and ROUGE-2 F1 (computed here by rouge-score) is highest.
def test_learned_labels_are_the_oracle_plus_the_best_single_sentences(papers):
    scorer = rouge_scorer.RougeScorer(["rouge1", "rouge2"], use_stemmer=True)
    aspect = PAPER_ASPECTS[0]
    examples = papers[:3]
    model = LearnedAspectSummarizer(aspects=(aspect,), cue_words=0).fit_features([d.text for d, _ in papers])
    for top in (0, 2):
        model.label_top = top
        rows = model.labelled_rows(examples)[aspect.name]
        for (document, segmentation), (_, labels) in zip(examples, rows):
            reference = document.metadata[aspect.name]
            texts = segmentation.sentence_texts(document.text)
            candidates = [i for i, t in enumerate(texts)
                          if not segmentation.sentence_is_heading[i] and count_words(t) >= model.min_words]
            labelled = copy(document)
            labelled.reference_summary = reference
            oracle = OracleSummarizer(MatchedBudget().budget_for(reference)).summarize(labelled, segmentation)
            expected = set(oracle.details["sentence_indices"])
            alone = {i: sum(v.fmeasure for v in scorer.score(reference, texts[i]).values()) / 2 for i in candidates}
            expected |= set(sorted(candidates, key=lambda i: (-alone[i], i))[:top])
            assert {candidates[k] for k in np.flatnonzero(labels)} == expected
