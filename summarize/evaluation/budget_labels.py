"""How long a stored summary was allowed to be, named for a reader, from its parameters
alone (no model or scorer needed, so exports and pages can name budgets cheaply)."""

from __future__ import annotations

from summarize.methods.budget import Budget

# Marks, in a summary's params, a budget set per document from its reference.
BUDGET_RULE_KEY = "budget_rule"
REFERENCE_WORDS = "reference-words"
MATCHED_LABEL = "matched: each reference's length in words"


def budget_label(params: dict) -> str:
    """How long a stored summary was allowed to be, in words a reader understands."""
    if params.get(BUDGET_RULE_KEY) == REFERENCE_WORDS:
        return MATCHED_LABEL
    try:
        return str(Budget(**params["budget"]))
    except (KeyError, TypeError, ValueError):
        pass
    generation = params.get("generation") if isinstance(params.get("generation"), dict) else {}
    if "max_new_tokens" in generation:
        low = generation.get("min_new_tokens", 0)
        return f"the method's own length: {low} to {generation['max_new_tokens']} generated tokens"
    return "the method's own length setting"


def is_matched(params: dict) -> bool:
    return params.get(BUDGET_RULE_KEY) == REFERENCE_WORDS
