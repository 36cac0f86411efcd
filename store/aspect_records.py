"""Records for answers to aspects and for digests across documents.

    AspectSummary  one document, one aspect: the sentences that answer it (spans into
                   the document's text) and a confidence; no sentences when the
                   document does not address the aspect
    Digest         one summary across a selection of documents; each sentence cites
                   the document span(s) it stands for
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

from store.records import Span, SummarySentence, param_hash


@dataclass
class AspectSummary:
    aspect: str
    method: str
    params: dict
    sentences: list[SummarySentence]
    confidence: float
    details: dict = field(default_factory=dict)

    @property
    def addressed(self) -> bool:
        return bool(self.sentences)

    @property
    def text(self) -> str:
        return " ".join(s.text.strip() for s in self.sentences)

    @property
    def param_hash(self) -> str:
        return param_hash(f"{self.method}:{self.aspect}", self.params)


@dataclass(frozen=True)
class Citation:
    """Where a digest sentence comes from: a sentence of a stored document, as a span
    into that document's text, with its cosine similarity to the digest sentence (1.0
    for the sentence itself; merged near-duplicates keep their own span)."""

    document_id: int
    span: Span
    similarity: float


@dataclass(frozen=True)
class DigestSentence:
    text: str
    score: float
    citations: tuple[Citation, ...]


@dataclass
class Digest:
    """A summary across documents. ``selection`` says which documents (as given);
    ``settings`` how the digest was made; ``documents`` the (id, sha256) pairs the
    selection resolved to, which decide whether a rerun has anything to do."""

    name: str
    selection: dict
    settings: dict
    documents: list[tuple[int, str]]
    sentences: list[DigestSentence]
    details: dict = field(default_factory=dict)

    @property
    def text(self) -> str:
        return " ".join(s.text.strip() for s in self.sentences)


@dataclass(frozen=True)
class DocumentSelection:
    """Which documents a digest covers; every given criterion must hold.

    ``query``: a search in the grammar ``find`` uses (words, phrases, OR/NOT and
    filters such as ``format:pdf``); ``folder``: documents whose path
    lies under this folder; ``since``/``until``: document dates, inclusive, compared
    as ISO text (``2025``, ``2025-03`` and ``2025-03-14`` all work as bounds);
    ``status``: the stored status (``active`` by default; ``any`` for all but
    replaced versions)."""

    query: str | None = None
    folder: str | None = None
    since: str | None = None
    until: str | None = None
    status: str = "active"

    def as_dict(self) -> dict:
        return {key: value for key, value in self.__dict__.items() if value is not None}

    def describe(self) -> str:
        parts = [f"{key} {value!r}" for key, value in self.as_dict().items()]
        return ", ".join(parts)


# What the store gives back -----------------------------------------------------------


@dataclass(frozen=True)
class AnswerSentence:
    """One sentence of a stored aspect summary: its span and the text it slices."""

    position: int
    start: int
    end: int
    score: float
    text: str


@dataclass(frozen=True)
class StoredAnswer:
    """A stored aspect summary of a current document."""

    aspect_summary_id: int
    document_id: int
    record_key: str
    title: str | None
    date: str | None
    aspect: str
    method: str
    param_hash: str
    addressed: bool
    confidence: float
    details: dict
    run_id: int | None
    sentences: tuple[AnswerSentence, ...]

    @property
    def text(self) -> str:
        return " ".join(s.text.strip() for s in self.sentences)

    def as_dict(self) -> dict:
        return asdict(self) | {"text": self.text}


@dataclass(frozen=True)
class CitedSpan:
    """A citation read back: the document, the span and the text it slices."""

    document_id: int
    record_key: str
    title: str | None
    date: str | None
    start: int
    end: int
    similarity: float
    text: str


@dataclass(frozen=True)
class DigestLine:
    position: int
    score: float
    text: str
    citations: tuple[CitedSpan, ...]


@dataclass(frozen=True)
class StoredDigest:
    """One stored version of a named digest, with its sentences and citations."""

    digest_id: int
    name: str
    version: int
    selection: dict
    settings: dict
    documents: list[int]
    details: dict
    run_id: int | None
    created: str
    sentences: tuple[DigestLine, ...]

    def as_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class DigestVersion:
    """What a rerun compares: the newest version's selection, settings and fingerprint."""

    id: int
    version: int
    selection: dict
    settings: dict
    fingerprint: str


@dataclass(frozen=True)
class DigestListing:
    name: str
    version: int
    created: str
    selection: dict
    documents: int
    sentences: int
