"""JSON and JSON Lines archives: one document per record.

A .json file holds one object or a list of objects; a .jsonl file holds one
object per line (blank lines are skipped). Which keys hold the text, title,
reference summary, date and id is configurable. A record is located by its
position: 'N' for the N-th element of a .json list (from 1), 'line N' for a
.jsonl line. A bad record is reported on its own and does not cost the file's
good records.
"""

from __future__ import annotations

import json
from dataclasses import dataclass

from summarize.reading.readers.blocks import Extract
from summarize.reading.readers.dates import iso_date
from summarize.reading.readers.decoding import decode_text
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.frontmatter import summary_text
from summarize.reading.readers.text import plain_text_blocks

# Other scalar fields of a record are kept as metadata when short.
_MAX_METADATA_VALUE_CHARS = 200


@dataclass(frozen=True)
class RecordFields:
    """Names of the record keys holding each part of a document."""

    text: str = "text"
    title: str = "title"
    summary: str = "summary"
    date: str = "date"
    id: str = "id"


@dataclass(frozen=True)
class RecordOutcome:
    """One record: its locator ('3' or 'line 7'), the key that identifies it in
    the archive (its id, else its locator number), its canonical JSON bytes, and
    either the extract or the reason it could not be read."""

    locator: str
    key: str
    canonical: bytes
    extract: Extract | None = None
    problem: str | None = None


def read_records(raw: bytes, line_oriented: bool, fields: RecordFields) -> list[RecordOutcome]:
    text, encoding = decode_text(raw)
    if line_oriented:
        located = _jsonl_records(text)
    else:
        located = _json_records(text)
    outcomes: list[RecordOutcome] = []
    seen_ids: set[str] = set()
    for locator, number, record, parse_problem in located:
        outcome = _outcome(locator, number, record, parse_problem, fields, encoding, seen_ids)
        outcomes.append(outcome)
    if not outcomes:
        raise ReadError("no records")
    return outcomes


def canonical_json(record: object) -> bytes:
    return json.dumps(record, sort_keys=True, ensure_ascii=False, separators=(",", ":")).encode("utf-8")


def _json_records(text: str) -> list[tuple[str, int, object, str | None]]:
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise ReadError(f"invalid JSON: {exc.msg} (line {exc.lineno})") from None
    if isinstance(data, dict):
        return [("1", 1, data, None)]
    if isinstance(data, list):
        return [(str(number), number, record, None) for number, record in enumerate(data, start=1)]
    raise ReadError(f"JSON holds a {type(data).__name__}, not an object or a list of objects")


def _jsonl_records(text: str) -> list[tuple[str, int, object, str | None]]:
    located = []
    for number, line in enumerate(text.splitlines(), start=1):
        if not line.strip():
            continue
        try:
            located.append((f"line {number}", number, json.loads(line), None))
        except json.JSONDecodeError as exc:
            located.append((f"line {number}", number, None, f"invalid JSON: {exc.msg}"))
    return located


def _outcome(
    locator: str,
    number: int,
    record: object,
    parse_problem: str | None,
    fields: RecordFields,
    encoding: str,
    seen_ids: set[str],
) -> RecordOutcome:
    canonical = canonical_json(record) if parse_problem is None else b""

    def problem(reason: str) -> RecordOutcome:
        return RecordOutcome(locator, str(number), canonical, problem=reason)

    if parse_problem is not None:
        return problem(parse_problem)
    if not isinstance(record, dict):
        return problem("record is not a JSON object")
    key = str(number)
    record_id = record.get(fields.id)
    if isinstance(record_id, (str, int)) and not isinstance(record_id, bool) and str(record_id).strip():
        key = str(record_id).strip()
    if key in seen_ids:
        return problem(f"its key {key!r} is already used by an earlier record")
    seen_ids.add(key)
    if fields.text not in record:
        return problem(f"no {fields.text!r} field")
    body = record[fields.text]
    if not isinstance(body, str):
        return problem(f"{fields.text!r} field is not a string")
    if not body.strip():
        return problem(f"{fields.text!r} field is empty")
    title = record.get(fields.title)
    summary = summary_text(record.get(fields.summary))
    extract = Extract(
        blocks=plain_text_blocks(body),
        title=" ".join(title.split()) if isinstance(title, str) and title.strip() else None,
        date=iso_date(record.get(fields.date)),
        encoding=encoding,
        metadata=_other_fields(record, fields),
        reference_summary=summary,
        reference_source=f"field:{fields.summary}" if summary else None,
    )
    return RecordOutcome(locator, key, canonical, extract=extract)


def _other_fields(record: dict, fields: RecordFields) -> dict:
    configured = {fields.text, fields.title, fields.summary, fields.date, fields.id}
    return {
        name: value
        for name, value in record.items()
        if name not in configured
        and isinstance(value, (str, int, float, bool))
        and len(str(value)) <= _MAX_METADATA_VALUE_CHARS
    }
