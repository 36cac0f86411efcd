"""Aspect-labelled references: the human answer to each aspect, where the archive has one.

Two places hold them. A reference summary written in labelled sections::

    Cause: A seal on the duty pump failed ...
    Actions: The pump was isolated and ...
    Open items: Replace the standby seal by March 2025.

(a label at the start of a line, then a colon; the section runs to the next label),
and a JSON record's field named after the aspect or one of its labels, which the
reader keeps among the document's metadata. Labels match case-insensitively.
"""

from __future__ import annotations

import re

from store.records import Document
from summarize.methods.aspects.definitions import Aspect


def _label_key(label: str) -> str:
    return re.sub(r"[\s_-]+", " ", label.strip().lower())


def labelled_sections(text: str, aspects: tuple[Aspect, ...]) -> dict[str, str]:
    """Aspect name → section text, for the labelled sections found in ``text``."""
    owners = {_label_key(label): aspect.name for aspect in aspects for label in aspect.all_labels()}
    alternatives = "|".join(sorted((re.escape(label).replace(r"\ ", r"[\s_-]+") for label in owners), key=len, reverse=True))
    heading = re.compile(rf"^[ \t]*(?:[-*#]+[ \t]*)?(?:\*\*)?({alternatives})(?:\*\*)?[ \t]*:(?:\*\*)?[ \t]*", re.I | re.M)
    found = list(heading.finditer(text))
    sections: dict[str, str] = {}
    for index, match in enumerate(found):
        end = found[index + 1].start() if index + 1 < len(found) else len(text)
        body = " ".join(text[match.end() : end].split())
        name = owners[_label_key(match.group(1))]
        if body:
            sections[name] = f"{sections[name]} {body}" if name in sections else body
    return sections


def aspect_references(document: Document, aspects: tuple[Aspect, ...]) -> dict[str, str]:
    """Aspect name → the document's reference answer (labelled sections of its
    reference summary first, then JSON fields kept as metadata)."""
    found = labelled_sections(document.reference_summary or "", aspects)
    fields = {_label_key(key): value for key, value in document.metadata.items() if isinstance(value, str)}
    for aspect in aspects:
        if aspect.name in found:
            continue
        for label in aspect.all_labels():
            value = fields.get(_label_key(label), "").strip()
            if value:
                found[aspect.name] = " ".join(value.split())
                break
    return found
