"""Export stored summaries as CSV, JSON Lines, Markdown or HTML.

By default one method at one budget and setting is exported (see summary_choice.py),
so each document gives one row; documents gone from disk and replaced versions are
left out. Each document's newest answer to each aspect (per aspect method) goes with
it: a readable ``aspect_answers`` cell in CSV, the full records in JSON Lines, a list
under the document in Markdown and HTML. Every format carries the caution (a ``caution`` field per row in CSV and
JSON Lines, a paragraph at the top of Markdown and HTML). In HTML every string taken
from a document or a summary is escaped, and so is HTML in Markdown (a Markdown
viewer would render it); JSON Lines is strict (``summarize.output.strict_json``). The
file is written whole or not at all, and never over the store
(``summarize.output.written``).

CSV is written for spreadsheets: UTF-8 with a byte-order mark (without one, a
spreadsheet may read the file in a legacy code page and garble "m³"), line breaks
inside cells flattened to spaces, and a cell that begins with ``=``, ``+``, ``-``,
``@``, a tab or a carriage return is prefixed with an apostrophe so a spreadsheet
shows it as text instead of running it as a formula (the OWASP "CSV Injection"
guidance).
"""

from __future__ import annotations

import csv
import html
import re
from dataclasses import asdict
from pathlib import Path

from store.aspect_records import StoredAnswer
from store.errors import SummarizerError
from store.exports import ExportRow
from store.store import Store
from summarize.evaluation.budget_labels import budget_label
from summarize.methods.labels import setting_label, settings_label
from summarize.output import strict_json
from summarize.output.caution import CAUTION
from summarize.output.summary_choice import SummaryChoice, choose_summaries
from summarize.output.written import atomic_text_file, check_output_path

FORMATS = ("csv", "jsonl", "md", "html")
CSV_COLUMNS = (
    "document_id", "record_key", "title", "date", "date_source", "status", "format", "method", "budget", "settings",
    "param_hash", "summary", "source_spans", "flags", "rouge_f1", "reference_summary", "reference_source",
    "aspect_answers", "caution",
)
_LINE_BREAKS = re.compile(r"\s*[\r\n\v\f\u0085\u2028\u2029]+\s*")
_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def spreadsheet_cell(value):
    """A CSV cell a spreadsheet shows as written: one line, never a formula."""
    if not isinstance(value, str):
        return value
    if value.startswith(_FORMULA_STARTS):
        value = "'" + value
    return _LINE_BREAKS.sub(" ", value)


def _labels(row: ExportRow) -> dict:
    return {"budget": budget_label(row.params), "settings": settings_label(row.method, row.params)}


def date_label(row: ExportRow) -> str:
    """A document's date, marked when it is only a file property (the day a DOCX or
    PDF was made, which may not be the report's date)."""
    if row.date_source == "file metadata":
        return f"{row.date} (file metadata)"
    return row.date or ""


def _aspect_label(aspect: str) -> str:
    return aspect.replace("_", " ")


def answer_line(answer: StoredAnswer) -> str:
    """One aspect answer in one line: aspect, method, confidence, text, spans."""
    if not answer.addressed:
        return f"{_aspect_label(answer.aspect)} ({answer.method}): not addressed"
    spans = ", ".join(f"{s.start}-{s.end}" for s in answer.sentences)
    text = " ".join(answer.text.split())
    return f"{_aspect_label(answer.aspect)} ({answer.method}, confidence {answer.confidence:.2f}): {text} [chars {spans}]"


def _write_csv(rows: list[ExportRow], out) -> None:
    writer = csv.DictWriter(out, fieldnames=CSV_COLUMNS)
    writer.writeheader()
    for row in rows:
        record = {key: getattr(row, key) for key in CSV_COLUMNS if hasattr(row, key)} | _labels(row)
        for key in ("source_spans", "rouge_f1"):
            record[key] = strict_json.dumps(record[key])
        record["flags"] = "; ".join(row.flags)
        record["aspect_answers"] = " | ".join(answer_line(answer) for answer in row.aspect_answers)
        record["caution"] = CAUTION
        writer.writerow({key: spreadsheet_cell(value) for key, value in record.items()})


def _write_jsonl(rows: list[ExportRow], out) -> None:
    for row in rows:
        out.write(strict_json.dumps(asdict(row) | _labels(row) | {"caution": CAUTION}, ensure_ascii=False) + "\n")


def _markdown_cell(value: str | None) -> str:
    """Text for one Markdown line: HTML escaped (shown, not rendered), table pipes escaped."""
    return html.escape(value or "", quote=False).replace("|", "\\|").replace("\n", " ")


def _write_markdown(rows: list[ExportRow], out) -> None:
    out.write("# Stored summaries\n\n")
    out.write(f"> **Caution.** {CAUTION}\n\n")
    current = None
    for row in rows:
        if row.document_id != current:
            current = row.document_id
            out.write(f"## {_markdown_cell(row.title or row.record_key)}\n\n")
            out.write(f"`{_markdown_cell(row.record_key)}`" + (f" · {date_label(row)}" if row.date else "") + "\n\n")
            if row.reference_summary:
                out.write(f"*Reference ({_markdown_cell(row.reference_source)}):* {_markdown_cell(row.reference_summary)}\n\n")
            if row.aspect_answers:
                out.write("*Aspect answers:*\n\n")
                for answer in row.aspect_answers:
                    out.write(f"- {_markdown_cell(answer_line(answer))}\n")
                out.write("\n")
        scores = ", ".join(f"{m} {v:.3f}" for m, v in sorted(row.rouge_f1.items()))
        out.write(f"**{_markdown_cell(setting_label(row.method, row.params))}**" + (f" (ROUGE F1: {scores})" if scores else "") + "\n\n")
        for sentence in row.summary_sentences:
            spans = ", ".join(f"{s.start}–{s.end}" for s in sentence.sources)
            out.write(f"- {_markdown_cell(sentence.text)}" + (f" ⟨chars {spans}⟩" if spans else "") + "\n")
        for flag in row.flags:
            out.write(f"- ⚠ check: {_markdown_cell(flag)}\n")
        out.write("\n")


_HTML_STYLE = """
body{font-family:system-ui,sans-serif;max-width:60rem;margin:2rem auto;padding:0 1rem;color:#222}
.caution{border-left:4px solid #b35c00;background:#fff4e5;padding:.6rem 1rem}
article{border-top:1px solid #ccc;padding:.5rem 0}
.meta{color:#666;font-size:.9rem}.ref{color:#333;font-style:italic}
.method{font-weight:600;margin-top:.6rem}.span{color:#888;font-size:.8rem}
.flag{color:#a30000}
"""


def _write_html(rows: list[ExportRow], out) -> None:
    e = html.escape
    out.write("<!doctype html><html lang='en'><head><meta charset='utf-8'>")
    out.write(f"<title>Stored summaries</title><style>{_HTML_STYLE}</style></head><body>")
    out.write(f"<h1>Stored summaries</h1><p class='caution'><strong>Caution.</strong> {e(CAUTION)}</p>")
    current = None
    for row in rows:
        if row.document_id != current:
            if current is not None:
                out.write("</article>")
            current = row.document_id
            out.write(f"<article><h2>{e(row.title or row.record_key)}</h2>")
            out.write(f"<p class='meta'>{e(row.record_key)}{' · ' + e(date_label(row)) if row.date else ''}</p>")
            if row.reference_summary:
                out.write(f"<p class='ref'>Reference ({e(row.reference_source or '')}): {e(row.reference_summary)}</p>")
            if row.aspect_answers:
                out.write("<p class='method'>Aspect answers</p><ul class='aspects'>")
                for answer in row.aspect_answers:
                    out.write(f"<li>{e(answer_line(answer))}</li>")
                out.write("</ul>")
        out.write(f"<p class='method'>{e(setting_label(row.method, row.params))}</p><ol>")
        for sentence in row.summary_sentences:
            spans = ", ".join(f"{s.start}–{s.end}" for s in sentence.sources)
            out.write(f"<li>{e(sentence.text)} <span class='span'>chars {e(spans)}</span></li>")
        out.write("</ol>")
        for flag in row.flags:
            out.write(f"<p class='flag'>Check: {e(flag)}</p>")
    if current is not None:
        out.write("</article>")
    out.write("</body></html>\n")


_WRITERS = {"csv": _write_csv, "jsonl": _write_jsonl, "md": _write_markdown, "html": _write_html}
# The byte-order mark tells a spreadsheet the file is UTF-8.
_ENCODINGS = {"csv": "utf-8-sig"}


def selected_rows(
    store: Store,
    choice: SummaryChoice | None,
    methods: list[str] | None = None,
    document_ids: list[int] | None = None,
    statuses: tuple[str, ...] | None = None,
) -> list[ExportRow]:
    """The rows of ``choice`` (None: every stored summary, of ``methods`` if given)."""
    return store.exports.rows(
        methods=[choice.method] if choice else methods,
        param_hashes=list(choice.param_hashes) if choice else None,
        document_ids=document_ids,
        **({"statuses": statuses} if statuses else {}),
    )


def write_rows(rows: list[ExportRow], format: str, out) -> None:
    """Write export rows to the text stream ``out`` in ``format``."""
    if format not in _WRITERS:
        raise ValueError(f"unknown export format {format!r} (expected one of {', '.join(FORMATS)})")
    _WRITERS[format](rows, out)


class NothingToExport(SummarizerError):
    """The selection holds no stored summary."""


def export(
    db_path: str,
    format: str,
    out_path: str | Path,
    method: str | None = None,
    budget: str | None = None,
    setting: str | None = None,
    every_summary: bool = False,
    methods: list[str] | None = None,
    statuses: tuple[str, ...] | None = None,
) -> tuple[int, SummaryChoice | None]:
    """Write one row per document for the summaries chosen by ``method``, ``budget``
    and ``setting`` (see summary_choice.py; by default the choice covering the most
    documents), or with ``every_summary`` every stored summary (of ``methods`` if
    given), to ``out_path``. Returns the number of rows written and the choice. The
    store's own files are never overwritten; an empty selection is
    :class:`NothingToExport`, and nothing is written."""
    check_output_path(out_path, db_path)
    with Store(db_path, read_only=True) as store:
        choice = None if every_summary else choose_summaries(store, method=method, budget=budget, key=setting)
        rows = selected_rows(store, choice, methods=methods, statuses=statuses)
    if not rows:
        chosen = f" of {', '.join(methods)}" if methods else ""
        raise NothingToExport(f"{out_path}: not written: the selection holds no summaries{chosen}")
    with atomic_text_file(out_path, db_path, encoding=_ENCODINGS.get(format, "utf-8")) as out:
        write_rows(rows, format, out)
    return len(rows), choice
