"""The records every stage passes on: a document holds its text once; everything
downstream refers to it by character spans.

    Document  --split-->  Segmentation (paragraph and sentence spans)
              --method->  Summary (sentences, each with the source span(s) behind it)
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from dataclasses import dataclass, field


@dataclass(frozen=True, order=True)
class Span:
    """Half-open character range ``[start, end)`` into ``Document.text``."""

    start: int
    end: int

    def __post_init__(self) -> None:
        if not 0 <= self.start <= self.end:
            raise ValueError(f"invalid span [{self.start}, {self.end})")

    def slice(self, text: str) -> str:
        return text[self.start : self.end]

    def __len__(self) -> int:
        return self.end - self.start


@dataclass
class Document:
    """One readable unit of an archive (a file, or one record of a JSON/JSONL file).

    ``text`` is what is summarized: the reference summary, when one was found inside
    the file, has already been cut out of it. ``record_key`` identifies the unit
    across runs (the path, plus ``#N`` for the N-th record of a JSON file);
    ``sha256`` is the hash of the raw bytes of the file (or of the canonical JSON of
    the record), so identical content under two names is recognised. ``date_source``
    says where ``date`` was found: 'document text', 'front matter', 'header', 'e-mail',
    'record field' or 'file metadata' (a DOCX or PDF property, which may be the day
    the file was made rather than the report's date). ``modified`` is the file's
    modification time, which breaks ties between identical copies.
    """

    record_key: str
    path: str
    text: str
    format: str
    sha256: str
    size: int
    title: str | None = None
    date: str | None = None
    encoding: str | None = None
    reference_summary: str | None = None
    reference_source: str | None = None
    headings: list[Span] = field(default_factory=list)
    metadata: dict = field(default_factory=dict)
    date_source: str | None = None
    modified: str | None = None

    def aside_spans(self) -> list[Span]:
        """Spans of the marked parts that are not the message (``metadata['email_parts']``)."""
        return [Span(part["start"], part["end"]) for part in self.metadata.get("email_parts", [])]


@dataclass(frozen=True)
class Segmentation:
    """Paragraph and sentence spans of one document, both in document order.

    ``sentence_paragraph[i]`` is the index of the paragraph holding sentence ``i``;
    ``sentence_is_heading[i]`` tells whether that sentence is a heading line, which
    methods may skip; ``sentence_is_aside[i]`` whether it lies in a marked part that
    is not the document's message (an e-mail's greeting, signature, quoted earlier
    message), which no method selects. Empty means no sentence is an aside.
    """

    paragraphs: tuple[Span, ...]
    sentences: tuple[Span, ...]
    sentence_paragraph: tuple[int, ...]
    sentence_is_heading: tuple[bool, ...]
    sentence_is_aside: tuple[bool, ...] = ()

    def is_aside(self, index: int) -> bool:
        return bool(self.sentence_is_aside) and self.sentence_is_aside[index]

    def with_asides(self, parts: list[Span]) -> Segmentation:
        """The same segmentation with every sentence inside one of ``parts`` an aside."""
        flags = tuple(any(p.start <= s.start and s.end <= p.end for p in parts) for s in self.sentences)
        return dataclasses.replace(self, sentence_is_aside=flags if any(flags) else ())

    def sentence_texts(self, text: str) -> list[str]:
        return [span.slice(text) for span in self.sentences]


@dataclass(frozen=True)
class SourceLink:
    """A source span that a summary sentence came from (extractive, similarity 1.0)
    or is best supported by (abstractive, similarity in [0, 1])."""

    span: Span
    similarity: float


@dataclass(frozen=True)
class SummarySentence:
    text: str
    score: float
    sources: tuple[SourceLink, ...]


@dataclass(frozen=True)
class Flag:
    """Something a reader should check in a summary, e.g. ``kind="unsupported-number"``
    for a number that occurs nowhere in the source. ``position`` is the index of the
    summary sentence it concerns (None for the whole summary)."""

    kind: str
    detail: str
    position: int | None = None


@dataclass
class Summary:
    """The output of one method on one document.

    ``params`` is the method's full parameter set; ``param_hash`` is derived from it
    and the method name, and together with the document it makes a summary unique in
    the store. ``details`` carries method-specific facts worth keeping (for example
    how much of the document a seq2seq model saw).
    """

    method: str
    params: dict
    sentences: list[SummarySentence]
    seconds: float = 0.0
    details: dict = field(default_factory=dict)
    flags: list[Flag] = field(default_factory=list)

    @property
    def text(self) -> str:
        return " ".join(s.text.strip() for s in self.sentences)

    @property
    def param_hash(self) -> str:
        return param_hash(self.method, self.params)


def param_hash(method: str, params: dict) -> str:
    """Stable 16-hex-digit hash of a method name and its parameters."""
    canonical = json.dumps({"method": method, "params": params}, sort_keys=True, default=str)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()[:16]
