"""Aspect summaries and digests as text for the terminal, and digests as files.

Every rendering ends with the caution; in HTML every string from a document is
escaped. Files are written to a temporary name beside the target and renamed, so a
reader never sees half a file.
"""

from __future__ import annotations

import html
import json
import os
import tempfile
import textwrap
from pathlib import Path

from store.aspect_records import CitedSpan, StoredAnswer, StoredDigest
from summarize.output.caution import CAUTION

DIGEST_FORMATS = ("md", "html", "json")


def _label(aspect: str) -> str:
    return aspect.replace("_", " ").replace("-", " ")


def format_aspect_table(rows: list[StoredAnswer], width: int = 100) -> str:
    """One block per document: for each aspect its confidence and answer, with the
    character spans it was taken from; aspects the document does not address say so."""
    lines: list[str] = []
    by_document: dict[int, list[StoredAnswer]] = {}
    for row in rows:
        by_document.setdefault(row.document_id, []).append(row)
    label_width = max([len(_label(row.aspect)) for row in rows] + [6])
    for document_rows in by_document.values():
        first = document_rows[0]
        when = f"  ({first.date})" if first.date else ""
        lines.append(f"#{first.document_id}  {first.title or first.record_key}{when}")
        lines.append(f"  {'aspect':<{label_width}}  conf.  answer")
        for row in document_rows:
            prefix = f"  {_label(row.aspect):<{label_width}}  "
            if not row.addressed:
                lines.append(f"{prefix}  –   (not addressed in this document)")
                continue
            spans = ", ".join(f"{s.start}-{s.end}" for s in row.sentences)
            answer = " ".join(row.text.split()) + f"  [chars {spans}]"
            indent = " " * (len(prefix) + 6)
            lines.append(textwrap.fill(answer, width, initial_indent=f"{prefix}{row.confidence:.2f}  ",
                                       subsequent_indent=indent))
        lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def _citation_label(citation: CitedSpan) -> str:
    when = f", {citation.date}" if citation.date else ""
    # The file name is enough beside the id; record keys are often long absolute paths.
    name = Path(citation.record_key).name
    return f"#{citation.document_id} {name}{when}, chars {citation.start}-{citation.end}"


def _selection_text(selection: dict) -> str:
    return ", ".join(f"{key} {value}" for key, value in selection.items()) or "all documents"


def format_digest(record: StoredDigest, width: int = 100) -> str:
    """A digest for the terminal: numbered sentences, each followed by its citations."""
    aspect = record.settings.get("aspect")
    heading = f"Digest {record.name} (version {record.version}, {len(record.documents)} documents"
    heading += f"; aspect: {aspect['question']})" if aspect else ")"
    lines = [heading, f"  selection: {_selection_text(record.selection)}", ""]
    if not record.sentences:
        lines.append("  (no sentence of the selected documents answers this)")
    for number, sentence in enumerate(record.sentences, 1):
        lines.append(textwrap.fill(" ".join(sentence.text.split()), width, initial_indent=f"{number:>3}. ",
                                   subsequent_indent="     "))
        for citation in sentence.citations:
            same = "" if citation.similarity >= 0.9999 else f" (near-duplicate, cosine {citation.similarity:.2f})"
            lines.append(f"       ← {_citation_label(citation)}{same}")
    lines += ["", CAUTION]
    return "\n".join(lines)


def _digest_markdown(record: StoredDigest) -> str:
    aspect = record.settings.get("aspect")
    lines = [f"# Digest {record.name}", "", f"> {CAUTION}", "",
             f"Version {record.version}, made {record.created}; {len(record.documents)} documents; "
             f"selection: {_selection_text(record.selection)}" + (f"; aspect: {aspect['question']}" if aspect else ""),
             ""]
    for number, sentence in enumerate(record.sentences, 1):
        lines.append(f"{number}. {' '.join(sentence.text.split())}")
        for citation in sentence.citations:
            lines.append(f"    - {_citation_label(citation)}")
    return "\n".join(lines) + "\n"


def _digest_html(record: StoredDigest) -> str:
    escape = html.escape
    aspect = record.settings.get("aspect")
    items = []
    for sentence in record.sentences:
        cites = "".join(
            f"<li>{escape(_citation_label(c))}" + (f" <q>{escape(c.text)}</q>" if c.similarity < 0.9999 else "")
            + "</li>"
            for c in sentence.citations
        )
        items.append(f"<li><p>{escape(' '.join(sentence.text.split()))}</p><ul class=cites>{cites}</ul></li>")
    about = (f"Version {record.version}, made {record.created}; {len(record.documents)} documents; "
             f"selection: {_selection_text(record.selection)}" + (f"; aspect: {aspect['question']}" if aspect else ""))
    return (
        "<!doctype html><html lang=en><meta charset=utf-8>"
        f"<title>Digest {escape(record.name)}</title>"
        "<style>body{font:15px/1.5 system-ui,sans-serif;max-width:52em;margin:2em auto}"
        ".caution{border-left:4px solid #b60;padding:.3em .8em;background:#fff6e8}"
        ".cites{font-size:13px;color:#444}</style>"
        f"<h1>Digest {escape(record.name)}</h1><p class=caution>{escape(CAUTION)}</p>"
        f"<p>{escape(about)}</p><ol>{''.join(items)}</ol></html>\n"
    )


def write_digest(record: StoredDigest, fmt: str, out_path: str) -> Path:
    """Write a digest as Markdown, HTML or JSON (with the caution) to ``out_path``."""
    if fmt not in DIGEST_FORMATS:
        raise ValueError(f"digest format must be one of {', '.join(DIGEST_FORMATS)}, got {fmt!r}")
    if fmt == "md":
        content = _digest_markdown(record)
    elif fmt == "html":
        content = _digest_html(record)
    else:
        content = json.dumps(record.as_dict() | {"caution": CAUTION}, indent=2, ensure_ascii=False) + "\n"
    target = Path(out_path)
    target.parent.mkdir(parents=True, exist_ok=True)
    handle, scratch = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.", suffix=".tmp")
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(content)
        os.replace(scratch, target)
    except BaseException:
        Path(scratch).unlink(missing_ok=True)
        raise
    return target
