"""Turning the files of an archive into ``Document`` records.

``iter_archive`` walks files and folders and yields a ``Document`` for every
readable unit and an ``IngestProblem`` for everything else, so one bad file
never stops a batch. ``read_file`` reads a single file and raises
``UnreadableFile`` instead.

Conventions:

* Folders are walked depth first, entries sorted by name; names starting with
  '.' are skipped while walking (a hidden path given explicitly is read).
* ``record_key`` is the absolute path (made absolute, links not resolved; bytes
  of a name that are not UTF-8 written ``\\xNN``, the exact bytes kept in the
  metadata as ``path_bytes``); a JSON/JSONL record adds
  '#<id>' (its id field, a string or an integer) or '#@<N>' (its position:
  element N of a .json list, line N of a .jsonl file, both from 1); the '@'
  keeps positions and ids apart.
* Reference summaries are taken, in order of precedence, from a sidecar file
  (``NAME.summary.txt`` or ``.md``), from front matter or a record field, or
  from a leading summary section. A leading summary section is cut out of the
  text even when a sidecar or front matter supplies the reference, since the
  text would otherwise contain its own summary; it is then kept in the
  metadata under 'leading_summary_section'. JSON records take no sidecar.
* Title: the format's own (front matter, <title>, PDF or DOCX properties,
  e-mail subject, record field), else a 'Title:' line near the top, else the
  first heading that is not a numbered section ('1. Scope' names a section,
  not the document), else the file name without suffix. Date: the format's own
  (front matter, e-mail Date header, HTML meta, record field), else a 'Date:' line
  near the top, else a DOCX or PDF file property; ``Document.date_source`` says which.
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Callable, Iterable, Iterator, Sequence
from datetime import UTC, datetime
from pathlib import Path

from store.records import Document
from summarize.reading.exclusions import ArchiveExclusions
from summarize.reading.limits import LimitExceeded, ReadLimits, current_limits, time_limit, using_limits
from summarize.reading.path_hashes import PathHashes
from summarize.reading.readers.blocks import DATE_IN_FILE_METADATA, DATE_IN_TEXT, Extract, lay_out
from summarize.reading.readers.docx import read_docx
from summarize.reading.readers.errors import ReadError
from summarize.reading.readers.headings import is_numbered_section
from summarize.reading.readers.html import read_html
from summarize.reading.readers.mail import read_eml
from summarize.reading.readers.pdf import read_pdf
from summarize.reading.readers.preamble import preamble_fields
from summarize.reading.readers.records import RecordFields, RecordOutcome, read_records
from summarize.reading.readers.references import find_leading_section
from summarize.reading.readers.sidecars import find_sidecar, is_sidecar_name, read_sidecar, sidecar_stem
from summarize.reading.readers.textfiles import read_md, read_rst, read_txt
from summarize.reading.walk import ArchiveWalk, IngestProblem, UnreadableFile, display_path, read_regular_file

__all__ = [
    "SUPPORTED_SUFFIXES",
    "IngestProblem",
    "ReadLimits",
    "RecordFields",
    "UnreadableFile",
    "archive_files",
    "ArchiveFiles",
    "ingest_file",
    "iter_archive",
    "read_file",
]

_FORMAT_BY_SUFFIX = {
    ".txt": "txt",
    ".md": "md",
    ".markdown": "md",
    ".rst": "rst",
    ".html": "html",
    ".htm": "html",
    ".pdf": "pdf",
    ".docx": "docx",
    ".eml": "eml",
    ".json": "json",
    ".jsonl": "jsonl",
}
SUPPORTED_SUFFIXES: frozenset[str] = frozenset(_FORMAT_BY_SUFFIX)

_FILE_READERS: dict[str, Callable[[bytes], Extract]] = {
    "txt": read_txt,
    "md": read_md,
    "rst": read_rst,
    "html": read_html,
    "pdf": read_pdf,
    "docx": read_docx,
    "eml": read_eml,
}
_FORMAT_NAMES = {"txt": "text", "md": "Markdown", "rst": "reStructuredText", "html": "HTML", "pdf": "PDF",
                 "docx": "DOCX", "eml": "e-mail", "json": "JSON", "jsonl": "JSON Lines"}


def iter_archive(
    paths: Iterable[str | Path],
    fields: RecordFields = RecordFields(),
    limits: ReadLimits = ReadLimits(),
    follow_links_outside: bool = False,
    exclude: Sequence[str] = (),
) -> Iterator[Document | IngestProblem]:
    """Documents and problems for the given files and folders, in a
    deterministic order. Summary sidecars next to a document are not yielded; a
    file reached twice (through links) is read once; ``exclude`` patterns (see
    ``summarize.reading.exclusions``) leave paths out. See ``summarize.reading.walk``
    for what the walk reads and what it reports."""
    files = ArchiveFiles(paths, follow_links_outside, exclude)
    for entry in files:
        if isinstance(entry, IngestProblem):
            yield entry
        else:
            yield from ingest_file(entry, fields, limits, files.walk)


class ArchiveFiles:
    """The walk of :func:`iter_archive` without the reading: the files to read (each
    once, however many links reach it) and the problems of the walk itself, in
    order. A run reads the files elsewhere (``ingest_file``, in worker processes)."""

    def __init__(self, paths: Iterable[str | Path], follow_links_outside: bool = False, exclude: Sequence[str] = ()):
        # Absolute keys, so that `archive/` one night and `/srv/archive` the next name
        # the same records (links are not resolved: the path the operator uses counts).
        self.roots = [os.path.abspath(given) for given in paths]
        self.exclusions = ArchiveExclusions.load(self.roots, exclude)
        self.walk = ArchiveWalk(self.roots, follow_links_outside)

    def __iter__(self) -> Iterator[Path | IngestProblem]:
        for problem_path, reason in self.exclusions.problems:
            yield IngestProblem(display_path(problem_path), reason, "error")
        # The resolved paths read so far (as hashes: a few bytes a file), so that a
        # file reached again through a link is read once. Two different paths with
        # the same hash would leave the second unread: see PathHashes.
        seen = PathHashes()
        for file in self.walk:
            if _left_out(file, self.exclusions):
                continue
            if isinstance(file, IngestProblem):
                yield file
                continue
            resolved = os.path.realpath(file)
            if resolved in seen:
                continue
            seen.add(resolved)
            yield file


def ingest_file(
    path: Path, fields: RecordFields, limits: ReadLimits, walk: ArchiveWalk | None = None
) -> list[Document | IngestProblem]:
    """What one file of the walk gives: its documents and problems, in file order
    (sidecars and unsupported files give a problem or nothing). Never raises for the
    file's own faults; ``walk`` bounds where its sidecar may lie."""
    return list(_ingest(path, fields, limits, walk))


def archive_files(
    paths: Iterable[str | Path], follow_links_outside: bool = False, exclude: Sequence[str] = ()
) -> Iterator[str]:
    """The document files under ``paths``, named as documents' paths are, without
    reading any of them: what a full walk would read."""
    roots = [os.path.abspath(given) for given in paths]
    exclusions = ArchiveExclusions.load(roots, exclude)
    for file in ArchiveWalk(roots, follow_links_outside):
        if isinstance(file, IngestProblem) or _left_out(file, exclusions):
            continue
        if file.suffix.lower() in SUPPORTED_SUFFIXES and not is_sidecar_name(file):
            yield display_path(file)


def _left_out(found: Path | IngestProblem, exclusions: ArchiveExclusions) -> bool:
    """Whether the exclude patterns leave out a file the walk found, or a folder it
    could not list."""
    if isinstance(found, IngestProblem):
        return exclusions.excludes(found.path, is_folder=found.unlisted)
    return exclusions.excludes(found)


def read_file(
    path: str | Path, fields: RecordFields = RecordFields(), limits: ReadLimits = ReadLimits()
) -> list[Document]:
    """The documents in one file (one per record for JSON/JSONL). Raises
    ``UnreadableFile`` when the file, its sidecar or any of its records is bad;
    warnings (a document read despite a fault) do not raise."""
    key = display_path(Path(path))
    items = _read(Path(path), fields, limits)
    problems = [item for item in items if isinstance(item, IngestProblem) and item.kind != "warning"]
    if problems:
        more = f" (and {len(problems) - 1} more)" if len(problems) > 1 else ""
        raise UnreadableFile(key, _problem_within(problems[0], key) + more)
    return [item for item in items if isinstance(item, Document)]


def _problem_within(problem: IngestProblem, key: str) -> str:
    """A problem described relative to its file: 'line 7: ...', 'record 3: ...',
    or the sidecar's own path and reason."""
    prefix = key + "#"
    if problem.path.startswith(prefix):
        locator = problem.path[len(prefix) :]
        where = locator if locator.startswith("line") else f"record {locator}"
        return f"{where}: {problem.reason}"
    return str(problem)


def _ingest(
    path: Path, fields: RecordFields, limits: ReadLimits, walk: ArchiveWalk | None
) -> Iterator[Document | IngestProblem]:
    if is_sidecar_name(path):
        if not _has_partner_document(path):
            yield IngestProblem(display_path(path), "summary sidecar with no document of the same name beside it", "skipped")
        return
    if path.suffix.lower() not in SUPPORTED_SUFFIXES:
        yield IngestProblem(display_path(path), _unsupported(path), "skipped")
        return
    try:
        yield from _read(path, fields, limits, walk)
    except UnreadableFile as exc:
        yield IngestProblem(exc.path, exc.reason, "error")


def _has_partner_document(sidecar: Path) -> bool:
    stem = sidecar_stem(sidecar)
    return any(sidecar.with_name(stem + suffix).is_file() for suffix in SUPPORTED_SUFFIXES)


def _read(
    path: Path, fields: RecordFields, limits: ReadLimits, walk: ArchiveWalk | None = None
) -> list[Document | IngestProblem]:
    """Documents of one file, in file order, with the problems that did not stop
    it (bad records, an unreadable sidecar). Raises ``UnreadableFile`` when the
    file as a whole cannot be read. Reading runs under ``limits`` (sizes, parts,
    metadata, and the time limit per document)."""
    key = display_path(path)
    if path.is_dir():
        raise UnreadableFile(key, "is a directory")
    file_format = _FORMAT_BY_SUFFIX.get(path.suffix.lower())
    if file_format is None:
        raise UnreadableFile(key, _unsupported(path))
    raw = read_regular_file(path, limits.max_file_bytes)
    if not raw:
        raise UnreadableFile(key, "empty file")
    try:
        with using_limits(limits), time_limit(limits.document_seconds):
            if file_format in ("json", "jsonl"):
                return _record_documents(path, key, raw, file_format, fields)
            extract = _FILE_READERS[file_format](raw)
            problems = _add_sidecar(path, extract, limits, walk)
            document = _document(extract, key, key, file_format, raw, fallback_title=display_path(path.stem))
            document.modified = _modified(path)
            problems += [IngestProblem(key, warning, "warning") for warning in extract.warnings]
    except ReadError as exc:
        raise UnreadableFile(key, str(exc)) from None
    except RecursionError:
        raise UnreadableFile(key, f"{_FORMAT_NAMES[file_format]} structure nested too deeply to read") from None
    except MemoryError:
        raise UnreadableFile(key, f"{_FORMAT_NAMES[file_format]} file needs more memory than there is to read") from None
    except Exception as exc:  # noqa: BLE001 - parser libraries raise anything; the batch must go on
        raise UnreadableFile(key, _unexpected(file_format, exc)) from None
    if key != str(path):
        # The path is not UTF-8: keep its exact bytes, so that the file can be found again.
        document.metadata["path_bytes"] = os.fsencode(path).hex()
    return [*problems, document]


def _modified(path: Path) -> str | None:
    """The file's modification time (UTC, ISO 8601): the last tie-breaker between
    identical copies (``store/duplicates.py``)."""
    try:
        return datetime.fromtimestamp(path.stat().st_mtime, UTC).isoformat(timespec="seconds")
    except OSError:
        return None


def _unsupported(path: Path) -> str:
    return f"unsupported file type '{path.suffix}'" if path.suffix else "unsupported file type (no suffix)"


def _add_sidecar(path: Path, extract: Extract, limits: ReadLimits, walk: ArchiveWalk | None) -> list[IngestProblem]:
    sidecar = find_sidecar(path)
    if sidecar is None:
        return []
    if walk is not None and not walk.follow_links_outside and not walk.inside(str(sidecar)):
        return [IngestProblem(display_path(sidecar), "summary sidecar links outside the archive; not read "
                              "(allow with --follow-links-outside)", "error")]
    try:
        if sidecar.stat().st_size > limits.max_file_bytes:
            raise LimitExceeded("summary sidecar size", "max_file_bytes", limits.max_file_bytes)
        summary = read_sidecar(sidecar)
    except (ReadError, OSError) as exc:
        return [IngestProblem(display_path(sidecar), str(exc), "error")]
    extract.reference_summary = summary
    extract.reference_source = f"sidecar:{sidecar.name}"
    return []


def _record_documents(
    path: Path, key: str, raw: bytes, file_format: str, fields: RecordFields
) -> list[Document | IngestProblem]:
    items: list[Document | IngestProblem] = []
    modified = _modified(path)
    for outcome in read_records(raw, line_oriented=file_format == "jsonl", fields=fields):
        record_path = f"{key}#{outcome.locator}"
        if outcome.extract is None:
            items.append(IngestProblem(record_path, outcome.problem or "unreadable record", "error"))
            continue
        try:
            items.append(_record_document(path, key, outcome, file_format))
            items[-1].modified = modified
            items.extend(IngestProblem(record_path, warning, "warning") for warning in outcome.extract.warnings)
        except ReadError as exc:
            items.append(IngestProblem(record_path, str(exc), "error"))
    return items


def _record_document(path: Path, key: str, outcome: RecordOutcome, file_format: str) -> Document:
    return _document(
        outcome.extract,
        record_key=f"{key}#{outcome.key}",
        path=key,
        file_format=file_format,
        raw=outcome.canonical,
        fallback_title=f"{display_path(path.stem)} #{outcome.key.removeprefix('@')}",
    )


def _document(extract: Extract, record_key: str, path: str, file_format: str, raw: bytes, fallback_title: str) -> Document:
    blocks = extract.blocks
    leading = find_leading_section(blocks)
    if leading is not None:
        blocks = leading.remaining
        if extract.reference_summary is None:
            extract.reference_summary = leading.body
            extract.reference_source = f"section:{leading.heading}"
        else:
            extract.metadata["leading_summary_section"] = {"heading": leading.heading, "text": leading.body}
    layout = lay_out(blocks)
    text, headings = layout.text, layout.headings
    if layout.parts:
        extract.metadata["email_parts"] = [
            {"part": part, "start": span.start, "end": span.end} for part, span in layout.parts
        ]
    if not text:
        raise ReadError("no text content")
    limits = current_limits()
    if len(json.dumps(extract.metadata, default=str).encode("utf-8")) > limits.max_metadata_bytes:
        raise LimitExceeded("metadata", "max_metadata_bytes", limits.max_metadata_bytes)
    preamble_title, preamble_date = preamble_fields(blocks)
    date, date_source = extract.date, extract.date_source
    # A 'Date:' line in the text says more than a file property (often the day the
    # file was made or converted), and is used when the format gives no date.
    if preamble_date and (date is None or date_source == DATE_IN_FILE_METADATA):
        date, date_source = preamble_date, DATE_IN_TEXT
    title_heading = next(
        (span.slice(text) for span in headings if not is_numbered_section(span.slice(text))), None
    )
    return Document(
        record_key=record_key,
        path=path,
        text=text,
        format=file_format,
        sha256=hashlib.sha256(raw).hexdigest(),
        size=len(raw),
        title=extract.title or preamble_title or title_heading or fallback_title,
        date=date,
        date_source=date_source if date else None,
        encoding=extract.encoding,
        reference_summary=extract.reference_summary,
        reference_source=extract.reference_source,
        headings=headings,
        metadata=extract.metadata,
    )


def _unexpected(file_format: str, exc: Exception) -> str:
    lines = str(exc).strip().splitlines()
    detail = f"{type(exc).__name__}: {lines[0]}" if lines else type(exc).__name__
    return f"could not read {_FORMAT_NAMES[file_format]} file ({detail})"
