"""The contract every summarization method keeps, and the capabilities some add.

A method is a small dataclass: the constructor only stores parameters; ``fit(texts)``
learns archive-wide statistics; ``summarize(document, segmentation)`` returns a
:class:`~store.records.Summary`; ``get_params()`` returns every setting that shapes
the output. With the method's name, those parameters make the parameter hash that
keeps one stored summary per (document, method, setting), so a parameter missing from
``get_params`` would silently reuse summaries made under another setting. Deriving
``get_params`` from the dataclass fields (:class:`ParamsFromFields`) rules that out:
every field is a parameter unless it is declared :func:`runtime_only` (it changes how
a method runs, never what it writes).

Capabilities beyond the contract are declared by subclassing, and the runner asks for
them with ``isinstance`` at run time:

- :class:`NeedsLoading`: a model to load and check before the store is touched;
- :class:`BatchCapable`: many documents summarized together, in this process;
- :class:`ResolvedAtRunTime`: settled only once the archive is read (a trained model,
  a choice by held-out ROUGE);
- :class:`SkipsDocuments`: documents the method must not summarize (those a model was
  trained on).
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from collections.abc import Callable, Iterable
from dataclasses import Field, field, fields, is_dataclass
from typing import Any, Protocol, runtime_checkable

from store.records import Document, Segmentation, Summary
from summarize.methods.budget import Budget

RUNTIME_ONLY = "runtime_only"


def runtime_only(default: Any = None, **kwargs) -> Any:
    """A dataclass field that changes how a method runs (threads, batch size, where a
    model file lies), never its output, so it is left out of ``get_params``."""
    return field(default=default, metadata={RUNTIME_ONLY: True}, **kwargs)


@runtime_checkable
class Summarizer(Protocol):
    """What the runner, scoring, training and the API need of a method."""

    name: str

    def get_params(self) -> dict: ...

    def fit(self, texts: Iterable[str]) -> Summarizer: ...

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary: ...


def _is_parameter(item: Field) -> bool:
    return item.name != "name" and not item.metadata.get(RUNTIME_ONLY)


def parameter_fields(method_class: type) -> list[str]:
    """Fields of a method class that are parameters (all but ``name`` and the runtime-only ones)."""
    return [item.name for item in fields(method_class) if _is_parameter(item)]


def runtime_only_fields(method_class: type) -> list[str]:
    return [item.name for item in fields(method_class) if item.metadata.get(RUNTIME_ONLY)]


def plain_value(value: Any) -> Any:
    """A parameter as it is stored: a budget becomes its dict."""
    return value.as_dict() if isinstance(value, Budget) else value


class ParamsFromFields:
    """``get_params`` read from the dataclass fields, so no parameter can be forgotten."""

    def get_params(self) -> dict:
        assert is_dataclass(self), f"{type(self).__name__} must be a dataclass"
        return {item.name: plain_value(getattr(self, item.name)) for item in fields(self) if _is_parameter(item)}


class NeedsLoading(ABC):
    """A method with a model to load and check once, before any document is read."""

    @abstractmethod
    def load(self) -> NeedsLoading: ...

    def runtime_settings(self) -> dict:
        """Settings the run records that do not change the output."""
        return {}


class BatchCapable(ABC):
    """A method that summarizes many documents at once (in the writing process)."""

    batch_documents: int = 16

    @abstractmethod
    def summarize_many(self, documents: list[tuple[Document, Segmentation]]) -> list[Summary | Exception]: ...


class ResolvedAtRunTime(ABC):
    """A method name that becomes a concrete method once the archive is read.

    ``resolve`` returns the method to run; ``decision`` then says what was chosen and why.
    """

    decision: dict | None = None

    @abstractmethod
    def resolve(self, store, run_id: int, say: Callable[[str], None] | None = None) -> Summarizer: ...


class SkipsDocuments(ABC):
    """A method that leaves some stored documents alone: a trained model never
    summarizes the documents it was trained on."""

    @property
    @abstractmethod
    def skipped_document_ids(self) -> frozenset[int]: ...
