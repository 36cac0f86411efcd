"""Readable names for stored settings: what a person reads instead of a parameter hash.

    setting_label("textrank", params)  ->  "textrank · 3 sentences · MMR 0.7"

A label names the method, its budget, and every parameter that differs from the
method's defaults, so two settings of one method never read alike; the hash stays
the store's key. ``compare``, ``show``, ``export`` and ``report`` all label settings
here; the budget's own label is :func:`~summarize.evaluation.budget_labels.budget_label`.
"""

from __future__ import annotations

import json

from summarize.evaluation.budget_labels import BUDGET_RULE_KEY, budget_label, is_matched

# Marks, in a summary's params, that it came from a model trained on other documents.
EVALUATION_KEY = "evaluation"
SEPARATOR = " · "

# Parameters whose value says enough in a few words of its own.
_NAMED = {
    "mmr_lambda": lambda value: f"MMR {value:g}",
    "trained_model": lambda value: f"model #{value}",
    EVALUATION_KEY: str,
}
# Parameters a label leaves out: the budget has its own part; the rest never differ
# between settings of one method, or are described by another part.
_OMITTED = {"budget", BUDGET_RULE_KEY, "objective", "selection_rule"}


def _short_budget(params: dict) -> str:
    if is_matched(params):
        return "reference length"
    label = budget_label(params)
    return label.removeprefix("the method's own length: ")


def _defaults(method: str) -> dict:
    """The parameters of the method built with no settings (none for a method that
    needs a model to be built)."""
    from summarize.methods.registry import REGISTRY

    if method not in REGISTRY or method == "seq2seq":
        return {}
    return REGISTRY[method].stored_class()().get_params()


def _value(value) -> str:
    if isinstance(value, float):
        return f"{value:g}"
    if isinstance(value, dict | list):
        return json.dumps(value, sort_keys=True)
    return str(value)


def _seq2seq_parts(params: dict) -> list[str]:
    model = params.get("model") if isinstance(params.get("model"), dict) else {}
    parts = [model["model_type"]] if model.get("model_type") else []
    if params.get("profile") not in (None, "quality"):
        parts.append(f"{params['profile']} profile")
    if params.get("long_mode") not in (None, "select"):
        parts.append(f"{params['long_mode']} mode")
    if params.get("quantize"):
        parts.append("int8")
    return parts


def _settings_parts(method: str, params: dict) -> list[str]:
    if method == "seq2seq":
        return _seq2seq_parts(params)
    defaults = _defaults(method)
    parts = []
    for key in sorted(params):
        value = params[key]
        if key in _OMITTED or (key in defaults and defaults[key] == value) or value is None:
            continue
        parts.append(_NAMED[key](value) if key in _NAMED else f"{key.replace('_', ' ')} {_value(value)}")
    return parts


def settings_label(method: str, params: dict) -> str:
    """What differs from the method's defaults, without method and budget (empty when
    nothing does): the part of a label that tells two settings of one method apart."""
    return SEPARATOR.join(_settings_parts(method, params))


def setting_label(method: str, params: dict, with_budget: bool = True) -> str:
    """``method · budget · what differs from the defaults`` (``with_budget=False``
    leaves the budget out, for tables that state it once)."""
    parts = [method, *([_short_budget(params)] if with_budget else []), *_settings_parts(method, params)]
    return SEPARATOR.join(parts)
