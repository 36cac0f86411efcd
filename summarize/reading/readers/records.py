"""JSON and JSON Lines archives: one document per record.

A .json file holds one object or a list of objects; a .jsonl file holds one
object per line (blank lines are skipped; lines end at '\n' only, so a raw
U+2028, U+2029 or U+0085 inside a string stays in its record). Which keys hold the
text, title, reference summary, date and id is configurable. A record is located
by its position: 'N' for the N-th element of a .json list (from 1), 'line N' for a
.jsonl line. A bad record (or line: invalid, nested too deeply, an integer too long
to convert) is reported on its own and does not cost the file's good records.

A record's key is its id when it has one (a string or an integer; any other type
is refused for that record), else '@N' with N its position: the two namespaces
cannot collide, so an id "1" and the first record without id are both kept.
"""

from __future__ import annotations

import json
from dataclasses import dataclass

from summarize.reading.readers.blocks import DATE_IN_RECORD, Extract
from summarize.reading.readers.dates import date_problem, iso_date
from summarize.reading.readers.decoding import decode_text
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.frontmatter import summary_text
from summarize.reading.readers.text import plain_text_blocks

# Other scalar fields of a record are kept as metadata when short.
_MAX_METADATA_VALUE_CHARS = 200
# Longer ids are refused: a key is shown in every listing and error line.
_MAX_ID_CHARS = 200


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
    the archive (its id, else '@' and its position), its canonical JSON bytes, and
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
    except (ValueError, RecursionError) as exc:
        raise ReadError(f"invalid JSON: {_parse_failure(exc)}") from None
    if isinstance(data, dict):
        return [("1", 1, data, None)]
    if isinstance(data, list):
        return [(str(number), number, record, None) for number, record in enumerate(data, start=1)]
    raise ReadError(f"JSON holds a {type(data).__name__}, not an object or a list of objects")


def _jsonl_records(text: str) -> list[tuple[str, int, object, str | None]]:
    located = []
    # JSON Lines ends lines at '\n' only; str.splitlines would also split at U+2028,
    # U+2029, U+0085 and others, which are valid raw inside a JSON string.
    for number, line in enumerate(text.split("\n"), start=1):
        line = line.removesuffix("\r")
        if not line.strip():
            continue
        try:
            located.append((f"line {number}", number, json.loads(line), None))
        except json.JSONDecodeError as exc:
            located.append((f"line {number}", number, None, f"invalid JSON: {exc.msg}"))
        except (ValueError, RecursionError) as exc:
            located.append((f"line {number}", number, None, f"invalid JSON: {_parse_failure(exc)}"))
    return located


def _parse_failure(exc: Exception) -> str:
    """Python's JSON parser fails on two kinds of valid-looking input: nesting deeper
    than the interpreter's recursion limit, and integers too long to convert."""
    if isinstance(exc, RecursionError):
        return "nested too deeply"
    return "an integer too long to read" if "digits" in str(exc) else str(exc).splitlines()[0]


def _outcome(
    locator: str,
    number: int,
    record: object,
    parse_problem: str | None,
    fields: RecordFields,
    encoding: str,
    seen_ids: set[str],
) -> RecordOutcome:
    def problem(reason: str) -> RecordOutcome:
        return RecordOutcome(locator, f"@{number}", b"", problem=reason)

    if parse_problem is not None:
        return problem(parse_problem)
    if not isinstance(record, dict):
        return problem("record is not a JSON object")
    key, id_problem = _record_key(record.get(fields.id), number, fields.id)
    if id_problem:
        return problem(id_problem)
    if key in seen_ids:
        return problem(f"its id {key!r} is already used by an earlier record")
    seen_ids.add(key)
    try:
        canonical = canonical_json(record)
    except (ValueError, RecursionError) as exc:
        return problem(f"cannot be kept as JSON ({_parse_failure(exc)})")
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
    if extract.date:
        extract.date_source = DATE_IN_RECORD
    problem = date_problem(record.get(fields.date))
    if problem:
        extract.warnings.append(f"{fields.date!r} field: {problem}")
    return RecordOutcome(locator, key, canonical, extract=extract)


def _record_key(record_id: object, number: int, id_field: str) -> tuple[str, str | None]:
    """The record's key and, when its id cannot serve, why. No id (absent or null)
    gives the positional key '@N'."""
    if record_id is None:
        return f"@{number}", None
    if isinstance(record_id, bool) or not isinstance(record_id, (str, int)):
        kind = {bool: "a boolean", float: "a number with a fraction or exponent", list: "a list", dict: "an object"}
        return "", f"{id_field!r} field is {kind.get(type(record_id), type(record_id).__name__)}; ids must be strings or integers"
    key = str(record_id).strip() if isinstance(record_id, str) else str(record_id)
    if not key:
        return "", f"{id_field!r} field is empty"
    if key.startswith("@"):
        return "", f"{id_field!r} field starts with '@', which marks positional keys"
    if len(key) > _MAX_ID_CHARS:
        return "", f"{id_field!r} field is longer than {_MAX_ID_CHARS} characters"
    return key, None


def _other_fields(record: dict, fields: RecordFields) -> dict:
    configured = {fields.text, fields.title, fields.summary, fields.date, fields.id}
    return {
        name: value
        for name, value in record.items()
        if name not in configured
        and isinstance(value, (str, int, float, bool))
        and len(str(value)) <= _MAX_METADATA_VALUE_CHARS
    }
