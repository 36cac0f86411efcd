"""Open datasets with reference summaries, as :class:`Document` records.

ACLSum (Takeshita et al. 2024; the ``aclsum`` package, MIT licence) carries 250 ACL
Anthology papers with their full-text parse in the S2ORC JSON layout. Here a paper's
reference summary is its author abstract, and its text is the body without the
abstract: each section heading on a line of its own, each paragraph a block. The
data is read from where the package installs it; nothing is copied.
"""

from __future__ import annotations

import hashlib
import json

from store.records import Document, Segmentation, Span

ACLSUM_SPLITS = ("train", "val", "test")


def _abstract(parse: dict) -> str:
    paragraphs = [p["text"].strip() for p in parse["pdf_parse"].get("abstract") or [] if p["text"].strip()]
    return "\n".join(paragraphs) if paragraphs else (parse.get("abstract") or "").strip()


def _body(parse: dict) -> tuple[str, list[Span]]:
    """Body text and heading spans; paragraphs of an abstract section are left out."""
    blocks: list[str] = []
    headings: list[Span] = []
    offset = 0
    current_section = None

    def add(block: str, heading: bool) -> None:
        nonlocal offset
        if blocks:
            offset += 2  # the blank line between blocks
        if heading:
            headings.append(Span(offset, offset + len(block)))
        blocks.append(block)
        offset += len(block)

    for paragraph in parse["pdf_parse"]["body_text"]:
        section = (paragraph.get("section") or "").strip()
        text = paragraph["text"].strip()
        if section.lower() == "abstract" or not text:
            continue
        if section and section != current_section:
            number = paragraph.get("sec_num")
            add(f"{number} {section}" if number else section, heading=True)
        current_section = section
        add(text, heading=False)
    return "\n\n".join(blocks), headings


def load_aclsum(split: str | None = None, limit: int | None = None) -> list[Document]:
    """ACLSum papers as documents: ``split`` is "train", "val", "test" or None for
    all three (in that order); ``limit`` keeps the first papers."""
    from aclsum import ACLSum

    splits = ACLSUM_SPLITS if split is None else (split,)
    unknown = set(splits) - set(ACLSUM_SPLITS)
    if unknown:
        raise ValueError(f"ACLSum split must be one of {', '.join(ACLSUM_SPLITS)}, got {split!r}")
    documents: list[Document] = []
    for name in splits:
        for paper in ACLSum(name):
            if limit is not None and len(documents) >= limit:
                return documents
            parse = paper.get_fulltext_parse()
            raw = json.dumps(parse, sort_keys=True, ensure_ascii=False).encode("utf-8")
            text, headings = _body(parse)
            documents.append(
                Document(
                    record_key=f"aclsum/{name}/{paper.id}",
                    path=f"aclsum/{name}/{paper.id}.json",
                    text=text,
                    format="s2orc-json",
                    sha256=hashlib.sha256(raw).hexdigest(),
                    size=len(raw),
                    title=paper.title,
                    date=parse.get("year") or None,
                    encoding="utf-8",
                    reference_summary=_abstract(parse),
                    reference_source="author abstract (ACLSum)",
                    headings=headings,
                    metadata={"dataset": "ACLSum", "split": name, "anthology_id": paper.id},
                )
            )
    return documents


ACLSUM_ASPECTS = ("challenge", "approach", "outcome")
ACLSUM_SECTIONS = ("abstract", "introduction", "conclusion")


def load_aclsum_aspects(split: str, limit: int | None = None) -> list[Document]:
    """ACLSum papers as the aspect task sees them: the package's own sentences of the
    abstract, introduction and conclusion (each section under a heading line, one
    sentence per line, so spans match the package's segmentation), with the three
    aspect summaries (challenge, approach, outcome) as metadata fields of those
    names. No generic reference summary is set."""
    from aclsum import ACLSum

    if split not in ACLSUM_SPLITS:
        raise ValueError(f"ACLSum split must be one of {', '.join(ACLSUM_SPLITS)}, got {split!r}")
    documents: list[Document] = []
    for paper in ACLSum(split):
        if limit is not None and len(documents) >= limit:
            break
        lines: list[str] = []
        headings: list[Span] = []
        offset = 0
        for section in ACLSUM_SECTIONS:
            sentences = [" ".join(s.split()) for s in paper.sentences[section] if s.strip()]
            if not sentences:
                continue
            heading = section.title()
            headings.append(Span(offset, offset + len(heading)))
            for line in (heading, *sentences):
                lines.append(line)
                offset += len(line) + 1
        text = "\n".join(lines)
        raw = json.dumps({"id": paper.id, "sentences": paper.sentences}, sort_keys=True).encode("utf-8")
        documents.append(
            Document(
                record_key=f"aclsum-aspects/{split}/{paper.id}",
                path=f"aclsum/{split}/{paper.id}",
                text=text,
                format="aclsum-sentences",
                sha256=hashlib.sha256(raw).hexdigest(),
                size=len(raw),
                title=paper.title,
                encoding="utf-8",
                headings=headings,
                metadata={"dataset": "ACLSum", "split": split, "anthology_id": paper.id}
                | {aspect: paper.summaries[aspect] for aspect in ACLSUM_ASPECTS},
            )
        )
    return documents


def line_segmentation(document: Document) -> Segmentation:
    """One sentence per line (the package's own sentence split), one paragraph per
    section; heading lines marked."""
    heading_starts = {span.start for span in document.headings}
    sentences, owners, is_heading, paragraphs = [], [], [], []
    offset = 0
    for line in document.text.split("\n"):
        span = Span(offset, offset + len(line))
        offset += len(line) + 1
        if span.start in heading_starts or not paragraphs:
            paragraphs.append([span.start, span.end])
        paragraphs[-1][1] = span.end
        sentences.append(span)
        owners.append(len(paragraphs) - 1)
        is_heading.append(span.start in heading_starts)
    return Segmentation(
        paragraphs=tuple(Span(*bounds) for bounds in paragraphs),
        sentences=tuple(sentences),
        sentence_paragraph=tuple(owners),
        sentence_is_heading=tuple(is_heading),
    )
