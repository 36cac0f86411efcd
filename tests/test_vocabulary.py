"""One vocabulary: the budget grammar, setting labels, and the method contract.

Common practice, no external source: these pin the project's own contract.
"""

from __future__ import annotations

import inspect
from dataclasses import fields

import pytest

from store.errors import UsageError
from store.records import param_hash
from summarize.evaluation.matched import MatchedBudget
from summarize.methods.budget import Budget, BudgetError
from summarize.methods.contract import (
    BatchCapable,
    NeedsLoading,
    ParamsFromFields,
    ResolvedAtRunTime,
    Summarizer,
    parameter_fields,
    runtime_only_fields,
)
from summarize.methods.extractive import LeadSummarizer, TextRankSummarizer
from summarize.methods.labels import setting_label
from summarize.methods.registry import MATCHED, REGISTRY, RUNNABLE, UnknownMethod, build_method, check_names
from summarize.runs import runner


@pytest.mark.parametrize(
    "spec, budget",
    [("3", Budget(sentences=3)), ("80w", Budget(words=80)), ("10%", Budget(ratio=0.1)), (" 2 ", Budget(sentences=2))],
)
def test_the_budget_grammar(spec, budget):
    assert Budget.parse(spec) == budget
    assert Budget.parse(budget.spec()) == budget
    assert MatchedBudget.parse(spec) == MatchedBudget(fixed=budget)


def test_reference_is_a_matched_budget_and_nothing_else_is_accepted():
    assert MatchedBudget.parse("reference") == MatchedBudget()
    assert MatchedBudget.parse("reference").label() == "matched: each reference's length in words"
    with pytest.raises(BudgetError, match="score, compare and report"):
        Budget.parse("reference")
    for wrong in ("80 words", "lots", "0", "0w", "150%", "3s", ""):
        with pytest.raises(BudgetError) as caught:
            MatchedBudget.parse(wrong)
        assert caught.value.exit_status == 2 and "'80w' (words)" in str(caught.value)


def test_a_label_names_the_budget_and_what_differs_from_the_defaults():
    three = Budget(sentences=3)
    assert setting_label("lead", LeadSummarizer(budget=three).get_params()) == "lead · 3 sentences"
    mmr = TextRankSummarizer(budget=three, mmr_lambda=0.7).get_params()
    assert setting_label("textrank", mmr) == "textrank · 3 sentences · MMR 0.7"
    cosine = TextRankSummarizer(budget=Budget(words=80), similarity="cosine").get_params()
    assert setting_label("textrank", cosine) == "textrank · 80 words · similarity cosine"
    assert setting_label("textrank", cosine, with_budget=False) == "textrank · similarity cosine"
    matched = {**LeadSummarizer().get_params(), "budget_rule": "reference-words"}
    assert setting_label("lead", matched) == "lead · reference length"
    assert setting_label("house-style", {"budget": {"words": 5}, "trained_model": 4}) == "house-style · 5 words · model #4"


def _changed(value):
    """Another value of the same kind, to see that a parameter reaches the hash."""
    if isinstance(value, Budget):
        return Budget(words=17)
    if isinstance(value, bool):
        return not value
    if isinstance(value, int | float):
        return value * 2 + 1
    if value is None:
        return 0.5
    return f"{value}-other"


@pytest.mark.parametrize("name", [name for name in REGISTRY if name != "seq2seq"])
def test_every_field_of_a_registered_method_is_a_parameter_or_runtime_only(name):
    method = build_method(name)
    method_class = type(method)
    assert isinstance(method, ParamsFromFields)
    # A name settled at run time stands for a method until then; every other one is one.
    assert isinstance(method, ResolvedAtRunTime) != isinstance(method, Summarizer)
    every = {item.name for item in fields(method_class)} - {"name"}
    assert set(parameter_fields(method_class)) | set(runtime_only_fields(method_class)) == every
    assert set(method.get_params()) == set(parameter_fields(method_class))
    before = param_hash(name, method.get_params())
    for field_name in parameter_fields(method_class):
        changed = build_method(name)
        setattr(changed, field_name, _changed(getattr(changed, field_name)))
        assert param_hash(name, changed.get_params()) != before, f"{name}.{field_name} does not reach the hash"


@pytest.mark.slow
def test_seq2seq_declares_what_only_changes_how_it_runs(tiny_t5):
    from summarize.methods.seq2seq.abstractive import Seq2SeqSummarizer

    assert set(runtime_only_fields(Seq2SeqSummarizer)) == {"allow_pickle", "batch_size", "threads"}
    base = Seq2SeqSummarizer(str(tiny_t5))
    before = param_hash("seq2seq", base.get_params())
    assert param_hash("seq2seq", Seq2SeqSummarizer(str(tiny_t5), batch_size=3, threads=1).get_params()) == before
    alternatives = {
        "profile": ["fast"], "num_beams": [2, 3], "min_new_tokens": [1, 5], "max_new_tokens": [20, 50],
        "no_repeat_ngram_size": [0, 2], "length_penalty": [0.5, 2.0], "early_stopping": [True, False],
        "quantize": [True, False], "max_input_tokens": [16], "long_mode": ["chunks"], "prefix": ["condense: "],
        "support_links": [1], "support_threshold": [0.3], "stop_words": [None],
    }
    assert set(alternatives) == set(parameter_fields(Seq2SeqSummarizer)) - {"model"}
    for field_name, values in alternatives.items():
        hashes = {param_hash("seq2seq", Seq2SeqSummarizer(str(tiny_t5), **{field_name: v}).get_params()) for v in values}
        assert hashes - {before}, f"seq2seq.{field_name} does not reach the hash"


def test_textrank_convergence_settings_are_parameters():
    params = TextRankSummarizer().get_params()
    assert params["tolerance"] == 1e-10 and params["max_iterations"] == 200


def test_capabilities_are_declared_not_guessed():
    from summarize.methods.seq2seq.abstractive import Seq2SeqSummarizer

    assert issubclass(Seq2SeqSummarizer, NeedsLoading) and issubclass(Seq2SeqSummarizer, BatchCapable)
    for name in ("house-style", "auto"):
        assert isinstance(build_method(name), ResolvedAtRunTime)
    for name in ("lead", "tfidf", "textrank"):
        method = build_method(name)
        assert not isinstance(method, NeedsLoading | BatchCapable | ResolvedAtRunTime)
    assert "hasattr(" not in inspect.getsource(runner)


def test_one_registry_builds_methods_by_name_with_the_settings_they_take():
    from summarize.methods.registry import MethodSettings

    settings = MethodSettings(budget=Budget(words=40), mmr_lambda=0.5)
    lead, textrank = build_method("lead", settings), build_method("textrank", settings)
    assert lead.budget == textrank.budget == Budget(words=40)
    assert textrank.mmr_lambda == 0.5 and not hasattr(lead, "mmr_lambda")
    assert check_names("lead, textrank", RUNNABLE) == ["lead", "textrank"]
    with pytest.raises(UnknownMethod, match="unknown method 'oracle' here"):
        check_names(["oracle"], RUNNABLE)
    with pytest.raises(UnknownMethod) as caught:
        build_method("bogus", usable=MATCHED)
    assert isinstance(caught.value, UsageError) and caught.value.exit_status == 2
