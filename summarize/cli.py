"""The ``summarize`` command: a thin layer over the Python API (``summarize.api``).

Each command parses its arguments, calls the API function of the same name, and
prints: progress and errors on stderr, results on stdout (``--json`` for machines).
Only :class:`~store.errors.SummarizerError` is caught, shown as one ``error:`` line
and turned into its exit status; anything else is a bug and shows as one.
"""

from __future__ import annotations

import math
import os
import sys
import textwrap

import click

from store.errors import SummarizerError, UsageError
from store.health import sqlite_failure
from store.printable import printable, terminal_text
from store.search_queries import MARK_END, MARK_START
from summarize import api
from summarize.methods.budget import GRAMMAR
from summarize.methods.registry import MATCHED
from summarize.output import strict_json
from summarize.output.caution import CAUTION
from summarize.output.export import FORMATS
from summarize.reading.exclusions import BadExcludePattern, check_patterns
from summarize.reading.ingest import ReadLimits
from summarize.reading.limits import MIB
from summarize.reading.sentences import SentenceSplitter
from summarize.runs.allocator import release_large_blocks
from summarize.runs.jobfile import load_job
from summarize.runs.progress import TerminalProgress, configure_log_file
from summarize.runs.progress import log as run_log
from summarize.runs.runner import EXIT_STOPPED_EARLY
from summarize.runs.settings import RunSettings


class _Commands(click.Group):
    """The command group: a :class:`SummarizerError` from any command becomes one
    ``error:`` line on stderr and the error's exit status; SQLite's own errors are
    named for the store the command was given. Anything else is a bug and shows as one."""

    def parse_args(self, ctx, args):
        ctx.meta["arguments"] = list(args)
        return super().parse_args(ctx, args)

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except SummarizerError as error:
            self._fail(ctx, error)
        except Exception as error:
            translated = sqlite_failure(error, _store_argument(ctx))
            if translated is None:
                raise
            self._fail(ctx, translated)

    @staticmethod
    def _fail(ctx, error: SummarizerError) -> None:
        run_log.error(str(error))
        click.echo(f"error: {printable(str(error))}", err=True)
        ctx.exit(error.exit_status)


def _store_argument(ctx) -> str:
    """The --db the command was given (for naming it in an error)."""
    arguments = ctx.meta.get("arguments", [])
    for index, argument in enumerate(arguments):
        if argument == "--db" and index + 1 < len(arguments):
            return arguments[index + 1]
        if argument.startswith("--db="):
            return argument.removeprefix("--db=")
    return "the store"


# Options several commands share, defined once.
def db_option(help_text: str = "The SQLite store.", required: bool = True):
    return click.option("--db", "db_path", required=required, type=click.Path(dir_okay=False), help=help_text)


json_option = click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
wait_lock_option = click.option(
    "--wait-lock", type=click.FloatRange(0), default=None, show_default="0",
    help="Seconds to wait for another run holding the store, instead of refusing at once.",
)


def seed_option(help_text: str):
    return click.option("--seed", type=int, default=0, show_default=True, help=help_text)


def budget_option(default: str | None, purpose: str):
    shown = {"show_default": True} if default is not None else {}
    return click.option("--budget", default=default, **shown, help=f"{purpose} Budget grammar: {GRAMMAR}.")


def _methods(value: str | None) -> tuple[str, ...] | None:
    return None if value is None else tuple(m.strip() for m in value.split(",") if m.strip())


@click.group(cls=_Commands, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="archive-summarizer")
def main() -> None:
    """Summarize document archives in batch and keep everything in one SQLite file.

    Summaries are finding aids: check the source before acting on safety, legal or
    personnel matters. The store holds full text and falls under the archive's access
    and retention rules.
    """


def _load_job(ctx, _param, value):
    """--job FILE: the run's settings from a TOML job file; flags given override them."""
    if value:
        ctx.meta["job"] = load_job(value)
    return value


_DEFAULTS = RunSettings()


# Read limits and link policy of `run` (summarize/reading/limits.py), in one block.
_READ_LIMIT_OPTIONS = (
    click.option("--max-file-mb", type=click.FloatRange(0, min_open=True), default=ReadLimits.max_file_bytes / MIB,
                 show_default=True, help="Largest file read, in MB."),
    click.option("--max-unpacked-mb", type=click.FloatRange(0, min_open=True),
                 default=ReadLimits.max_unpacked_bytes / MIB, show_default=True,
                 help="Most a DOCX may unpack to, and most text a PDF or e-mail body may give, in MB."),
    click.option("--max-parts", type=click.IntRange(1), default=ReadLimits.max_parts, show_default=True,
                 help="Most DOCX paragraphs, PDF pages or e-mail MIME parts in one file."),
    click.option("--max-metadata-kb", type=click.FloatRange(0, min_open=True),
                 default=ReadLimits.max_metadata_bytes / 1024, show_default=True,
                 help="Most metadata (front matter, properties, fields) kept per document, in KB of JSON."),
    click.option("--max-yaml-nodes", type=click.IntRange(1), default=ReadLimits.yaml_nodes, show_default=True,
                 help="Most values in a front-matter block, every alias counted where it is used."),
    click.option("--document-seconds", type=click.FloatRange(0), default=ReadLimits.document_seconds,
                 show_default=True, help="Longest time to read and split one document (0: no limit)."),
    click.option("--follow-links-outside", is_flag=True,
                 help="Also read symbolic links whose target is outside the archive paths."),
)


def _read_limit_options(command):
    for option in reversed(_READ_LIMIT_OPTIONS):
        command = option(command)
    return command


def _read_limits(options: dict) -> ReadLimits:
    return ReadLimits(
        max_file_bytes=int(options["max_file_mb"] * MIB),
        max_unpacked_bytes=int(options["max_unpacked_mb"] * MIB),
        max_parts=options["max_parts"],
        max_metadata_bytes=int(options["max_metadata_kb"] * 1024),
        yaml_nodes=options["max_yaml_nodes"],
        document_seconds=options["document_seconds"],
    )




# Words a shell splits off a budget written with a space ("--budget 80 words"): as PATHs
# that do not exist they are a slip in the budget, caught before any work is done.
_BUDGET_UNIT_WORDS = {"w", "word", "words", "sentence", "sentences", "%", "percent"}


def _refuse_budget_units_as_paths(paths: list[str]) -> None:
    for path in paths:
        if str(path).lower() in _BUDGET_UNIT_WORDS and not os.path.lexists(path):
            raise UsageError(
                f"{path}: no such file or folder; a budget is written in one piece, e.g. --budget 80w "
                "(words), --budget 3 (sentences), --budget 10% (of the document)"
            )


@main.command()
@_read_limit_options
@click.argument("paths", nargs=-1, type=click.Path())
@click.option("--job", type=click.Path(dir_okay=False), callback=_load_job, is_eager=True, expose_value=False,
              help="TOML job file with the run's settings; flags given here override it.")
@db_option("SQLite store (created if missing).", required=False)
@click.option("--methods", default=None, show_default=",".join(_DEFAULTS.methods),
              help="Comma-separated methods: lead, tfidf, textrank, seq2seq; house-style (trained on the archive's "
                   "reference summaries; see `summarize train`); auto (the best of these by held-out ROUGE).")
@budget_option(None, f"Summary length (default {_DEFAULTS.budget}).")
@click.option("--mmr", type=click.FloatRange(0, 1), default=None,
              help="MMR redundancy control for tfidf/textrank: λ in [0, 1] (1 = relevance only).")
@click.option("--workers", default=None, type=click.IntRange(1), show_default=str(_DEFAULTS.workers),
              help="Local worker processes for the per-document work (the store has one writer).")
@click.option("--group-documents", default=None, type=click.IntRange(1), show_default=str(_DEFAULTS.group_documents),
              help="Commit stored documents together, this many per transaction at most.")
@click.option("--group-seconds", default=None, type=click.FloatRange(0), show_default=str(_DEFAULTS.group_seconds),
              help="... or after this many seconds, whichever comes first (a kill loses at most one group).")
@click.option("--scheduler", default=None, help="Address of a Dask scheduler (tcp://HOST:PORT) to send the work to.")
@click.option("--until", default=None, help="Stop cleanly between documents at this local time (HH:MM).")
@click.option("--max-minutes", default=None, type=click.FloatRange(0, min_open=True), help="Stop cleanly after this many minutes.")
@wait_lock_option
@click.option("--log", default=None, type=click.Path(dir_okay=False), help="Also append progress and errors to this file.")
@click.option("--quiet", is_flag=True, help="Only errors on stderr.")
@click.option("--text-field", default=None, show_default=_DEFAULTS.text_field, help="JSON/JSONL field holding the text.")
@click.option("--title-field", default=None, show_default=_DEFAULTS.title_field, help="JSON/JSONL field holding the title.")
@click.option("--summary-field", default=None, show_default=_DEFAULTS.summary_field,
              help="JSON/JSONL field holding the reference summary.")
@click.option("--date-field", default=None, show_default=_DEFAULTS.date_field, help="JSON/JSONL field holding the date.")
@click.option("--id-field", default=None, show_default=_DEFAULTS.id_field, help="JSON/JSONL field identifying a record.")
@json_option
@click.option("--exclude", "exclude", multiple=True, metavar="PATTERN",
              help="Leave out paths matching PATTERN (repeatable; added to the job file's and the archive's "
                   ".summarize-exclude patterns): 'drafts', '*.tmp', 'scans/2019', '**/raw/'.")
@click.option("--strict-exit", is_flag=True, default=None,
              help="Exit 3 on any failure, also on files that failed before with unchanged content.")
@click.option("--abbreviation", multiple=True, metavar="ABBR",
              help="An abbreviation that never ends a sentence before a number, a lower-case word or a name "
                   "(e.g. 'Harb.'); repeatable. Added to the built-in report abbreviations.")
@click.option("--model", default=None, metavar="DIR",
              help="seq2seq: checkpoint directory, or a repository id already in the local Hugging Face cache.")
@click.option("--allow-pickle-weights", is_flag=True,
              help="seq2seq: accept a checkpoint whose only weights are pickle files (they can run code: trusted sources only).")
@click.option("--seq2seq-profile", type=click.Choice(["quality", "fast"]), default=None,
              help="seq2seq: 'quality' (default; beam search, float32) or 'fast' (greedy, int8, 80 new tokens, batches of 8).")
@click.option("--threads", type=click.IntRange(1), default=None, help="seq2seq: CPU threads for the model.")
@click.option("--batch-size", type=click.IntRange(1), default=None, help="seq2seq: inputs generated together.")
@click.option("--quantize/--no-quantize", default=None, help="seq2seq: int8 weights in linear layers (default: per profile).")
@click.option("--max-input-tokens", type=click.IntRange(1), default=None,
              help="seq2seq: input window in tokens (default: the model's own).")
@click.option("--long-mode", type=click.Choice(["select", "chunks"]), default=None,
              help="seq2seq: read the most salient sentences that fit (select, default) or the whole document in chunks.")
@click.pass_context
def run(ctx, paths, db_path, methods, budget, mmr, workers, group_documents, group_seconds, scheduler, until, max_minutes, wait_lock, log, quiet,
        text_field, title_field, summary_field, date_field, id_field, as_json, exclude, strict_exit, abbreviation, model,
        allow_pickle_weights, seq2seq_profile, threads, batch_size, quantize, max_input_tokens, long_mode,
        **read_options):
    """Read every document under PATHS, summarize it with each method, store it.

    A rerun does only what is missing. Exit status: 0 all done (files that failed
    before with unchanged content are listed as known failures, not counted); 1
    nothing could be done (store locked or unusable, model unusable); 2 bad command
    line or job file; 3 finished, but some files or summaries failed anew (listed on
    stderr and in the store); 4 stopped early by the time budget or a signal (rerun to finish).
    """
    job = ctx.meta.get("job", {})
    paths = list(paths) or job.get("paths", [])
    db_path = db_path or job.get("db")
    if not paths:
        raise UsageError("give at least one PATH (or a --job file with paths)")
    if not db_path:
        raise UsageError("--db is required (or a --job file with db)")
    _refuse_budget_units_as_paths(paths)
    given_seq2seq = {
        "model": model,
        "allow_pickle": allow_pickle_weights or None,
        "profile": seq2seq_profile,
        "threads": threads,
        "batch_size": batch_size,
        "quantize": quantize,
        "max_input_tokens": max_input_tokens,
        "long_mode": long_mode,
    }
    settings = RunSettings.from_job(job).with_changes(
        methods=_methods(methods), budget=budget, mmr=mmr, workers=workers, group_documents=group_documents,
        group_seconds=group_seconds, scheduler=scheduler, until=until,
        max_minutes=max_minutes, wait_lock=wait_lock, text_field=text_field, title_field=title_field,
        summary_field=summary_field, date_field=date_field, id_field=id_field,
    )
    settings = settings.with_changes(
        seq2seq={**settings.seq2seq, **{key: value for key, value in given_seq2seq.items() if value is not None}}
    ).check()
    try:
        exclude = check_patterns([*job.get("exclude", []), *exclude])
    except BadExcludePattern as error:
        raise UsageError(f"--exclude: {error}") from None
    strict_exit = bool(strict_exit if strict_exit is not None else job.get("strict_exit", False))
    for key in read_options:  # read limits and link policy given in the job file, unless given here
        if key in job and ctx.get_parameter_source(key) is click.core.ParameterSource.DEFAULT:
            read_options[key] = job[key]
    configure_log_file(log or job.get("log"))
    # A night's run is a long process of its own: keep its memory from creeping up.
    release_large_blocks()
    try:
        report = api.run(paths, db_path, settings, progress=TerminalProgress(quiet=quiet),
                         limits=_read_limits(read_options), follow_links_outside=read_options["follow_links_outside"],
                         exclude=exclude, strict_exit=strict_exit,
                         splitter=SentenceSplitter(abbreviations=tuple(abbreviation)))
    except KeyboardInterrupt:  # a second Ctrl-C: every finished document is already committed
        click.echo("interrupted; rerun the same command to finish", err=True)
        sys.exit(EXIT_STOPPED_EARLY)
    counts = report.counts()
    if as_json:
        click.echo(strict_json.dumps(
            {"run_id": report.run_id, **counts, "errors": report.errors, "known_errors": report.known_failures}, indent=2
        ))
    else:
        click.echo(_run_summary(report.run_id, counts))
        for line in report.known_failures:
            click.echo(f"  known failure: {line}")
    run_log.info(_run_summary(report.run_id, counts))
    if report.stop_reason:
        click.echo(f"stopped early ({report.stop_reason}); rerun the same command to finish", err=True)
    sys.exit(report.exit_status)


@main.command("fetch-model")
@click.argument("repo_id")
@click.option("--dest", required=True, type=click.Path(file_okay=False), help="Directory to put the checkpoint in.")
@click.option("--revision", default=None, help="Branch, tag or commit to fetch (default: the main branch).")
@click.option("--allow-pickle-weights", is_flag=True,
              help="Also fetch pickle weights (pytorch_model.bin) when the repository has no safetensors.")
def fetch_model(repo_id, dest, revision, allow_pickle_weights):
    """Copy checkpoint REPO_ID from the Hugging Face Hub into --dest (needs a network),
    then check that it loads. Runs use it with `--model DIR`, offline."""
    from summarize.methods.seq2seq.fetch import fetch_checkpoint
    from summarize.methods.seq2seq.models import load_checkpoint

    path = fetch_checkpoint(repo_id, dest, allow_pickle=allow_pickle_weights, revision=revision)
    checkpoint = load_checkpoint(path, allow_pickle=allow_pickle_weights)
    identity = checkpoint.identity
    click.echo(
        f"fetched {repo_id} into {path}: {identity['model_type']}, {identity['parameters']:,} parameters, "
        f"{identity['weights_format']} weights, input window {checkpoint.input_window} tokens"
    )


def _run_summary(run_id: int, counts: dict) -> str:
    rate = f", {counts['documents_per_second']:.2f} documents/s" if counts["documents_per_second"] else ""
    unread = f", {counts['files_unread']} files not read yet" if counts["files_unread"] else ""
    return (
        f"run {run_id}: {counts['documents_seen']} documents read "
        f"({counts['documents_added']} new, {counts['duplicates']} duplicates, {counts['missing']} gone from disk); "
        f"{counts['documents_summarized']} documents summarized ({counts['summaries_added']} summaries added, "
        f"{counts['summaries_skipped']} already stored, {counts['summaries_failed']} failed); "
        f"{counts['files_failed']} files failed, {counts['files_skipped']} skipped, "
        f"{counts['known_failures']} known failures (failed before, content unchanged); "
        f"{counts['documents_remaining']} documents remaining{unread}; {counts['seconds']:.1f}s{rate}"
    )


@main.command()
@click.argument("query")
@db_option()
@click.option("--method", default=None, help="Only documents summarized by this method (same as method:NAME).")
@click.option("--limit", default=20, show_default=True, type=click.IntRange(1))
@click.option("--offset", default=0, show_default=True, type=click.IntRange(0), help="Skip this many hits (paging).")
@json_option
def find(query, db_path, method, limit, offset, as_json):
    """Search document titles, text and summaries, one hit per document, best first.

    QUERY: words (stemmed), "phrases", prefix*, AND / OR / NOT, parentheses, and
    filters folder:NAME format:EXT from:DATE to:DATE status:STATUS method:NAME
    has:reference has:flags (see the README).
    """
    page = api.find(db_path, query, method=method, limit=limit, offset=offset)
    if as_json:
        hits = [
            {
                "document_id": hit.document_id, "record_key": hit.record_key, "title": hit.title, "date": hit.date,
                "format": hit.format, "status": hit.status,
                "snippet": _bracketed(hit.snippet),
                "summary_matches": [{"method": m.method, "snippet": _bracketed(m.snippet)} for m in hit.summary_matches],
            }
            for hit in page.hits
        ]
        click.echo(strict_json.dumps({"total": page.total, "offset": offset, "hits": hits}, indent=2, ensure_ascii=False))
        return
    if not page.hits:
        click.echo(f"no matches for {query!r}", err=True)
        return
    for hit in page.hits:
        status = "" if hit.status == "active" else f"  ({hit.status})"
        date = f"  {hit.date}" if hit.date else ""
        title, key = printable(hit.title or "(untitled)"), printable(hit.record_key)
        click.echo(f"#{hit.document_id}  {title}  [{key}]{printable(date)}{status}")
        if hit.snippet:
            click.echo(f"    text: {printable(_bracketed(hit.snippet))}")
        for match in hit.summary_matches[:3]:
            click.echo(f"    {match.method}: {printable(_bracketed(match.snippet))}")
    shown = f"{offset + 1}-{offset + len(page.hits)}"
    click.echo(f"{shown} of {page.total} documents" + (f"; next: --offset {offset + limit}" if page.total > offset + limit else ""), err=True)


def _bracketed(snippet: str | None) -> str | None:
    return snippet.replace(MARK_START, "[").replace(MARK_END, "]") if snippet else snippet


def _score_text(value: float | None) -> str:
    """A stored score; SQLite keeps NaN as NULL, and infinity is no score either."""
    return f"{value:.3f}" if isinstance(value, float) and math.isfinite(value) else "-"


def _print_aspect_answers(answers: list[dict]) -> None:
    """Each stored aspect answer: aspect, method, confidence, sentences with spans."""
    if answers:
        click.echo("\nAspect answers:")
    for answer in answers:
        aspect = answer["aspect"].replace("_", " ")
        head = f"  {aspect}  ({answer['method']}, parameters {answer['param_hash']}, run {answer['run_id']})"
        if not answer["addressed"]:
            click.echo(f"{head}  not addressed in this document")
            continue
        click.echo(f"{head}  confidence {answer['confidence']:.2f}")
        for sentence in answer["sentences"]:
            click.echo(textwrap.fill(printable(sentence["text"]), 88,
                                     initial_indent=f"    {sentence['position'] + 1}. ", subsequent_indent="       "))
            click.echo(f"       from chars {sentence['start']}-{sentence['end']}")


def _print_file_records(path: str, records: list[dict], as_json: bool) -> None:
    """A JSON/JSONL file holding several records: list them, to be shown one by one."""
    if as_json:
        click.echo(strict_json.dumps({"file": path, "records": records}, indent=2, ensure_ascii=False))
        return
    click.echo(f"{printable(path)} holds {len(records)} records; show one by its id or record id:")
    for record in records:
        date = f"  {printable(record['date'])}" if record["date"] else ""
        title = printable(record["title"] or "(untitled)")
        click.echo(f"  #{record['id']}  {printable(record['record_id'])}  {title}{date}  [{record['status']}]")


def _print_document(record: dict, highlight: bool) -> None:
    """Everything taken from a document passes through ``printable`` (one line) or
    ``terminal_text`` (the source text): a document cannot send the terminal control
    sequences."""
    doc = {key: printable(value) if isinstance(value, str) else value for key, value in record["document"].items()}
    click.echo(f"#{doc['id']}  {doc['title'] or '(untitled)'}")
    click.echo(f"  source   {doc['path']}  ({doc['format']}, {doc['size']} bytes, {doc['characters']} characters)")
    date = f"{doc['date']} (from {doc['date_source']})" if doc["date"] and doc.get("date_source") else doc["date"] or "-"
    click.echo(f"  record   {doc['record_key']}   status {doc['status']}   date {date}")
    click.echo(f"  sha256   {doc['sha256']}")
    if len(record["versions"]) > 1:
        versions = ", ".join(f"#{v['id']} {v['status']}" for v in record["versions"])
        click.echo(f"  versions {versions}")
    canonical = record.get("canonical_copy")
    if canonical:
        click.echo(
            f"  duplicate of #{canonical['id']} {printable(canonical['title'] or '')} "
            f"[{printable(canonical['record_key'])}]: "
            "its reference and summaries follow"
        )
    reference = record["reference_summary"]
    if reference:
        since = f", current since {reference['since']}" if reference.get("since") else ""
        click.echo(f"\nReference summary ({reference['source']}{since}):")
        click.echo(textwrap.indent(textwrap.fill(printable(reference["text"]), 88), "  "))
    for earlier in record.get("reference_history", []):
        click.echo(
            f"  earlier reference ({printable(earlier['source'] or '')}, {earlier['since'] or '?'} to {earlier['until']}; "
            f"{earlier['scores']} scores kept against it)"
        )
    for summary in record["summaries"]:
        scores = "  ".join(f"{m} F1 {_score_text(v['f1'])}" for m, v in sorted(summary["scores"].items()))
        click.echo(f"\n{summary['setting']}  (run {summary['run_id']}){'  ' + scores if scores else ''}")
        for sentence in summary["sentences"]:
            click.echo(textwrap.fill(printable(sentence["text"]), 88, initial_indent=f"  {sentence['position'] + 1}. ", subsequent_indent="     "))
            for source in sentence["sources"]:
                label = "from" if source["similarity"] >= 0.999 else f"supported by ({source['similarity']:.2f})"
                click.echo(f"     {label} chars {source['start']}-{source['end']}")
        for flag in summary["flags"]:
            where = f" (sentence {flag['position'] + 1})" if flag["position"] is not None else ""
            click.echo(f"  ! check {flag['kind']}: {printable(flag['detail'])}{where}")
    _print_aspect_answers(record.get("aspect_answers", []))
    if highlight:
        text = record["text"]
        marks = sorted({(s["start"], s["end"]) for summary in record["summaries"] for sent in summary["sentences"] for s in sent["sources"]})
        pieces, cursor = [], 0
        for start, end in marks:
            if start < cursor:
                continue
            pieces += [terminal_text(text[cursor:start]), click.style(f">>{terminal_text(text[start:end])}<<", bold=True)]
            cursor = end
        pieces.append(terminal_text(text[cursor:]))
        click.echo("\nSource text (summary sentences marked >> <<):\n")
        click.echo("".join(pieces))
    click.echo(f"\n{CAUTION}")


@main.command()
@click.argument("document")
@db_option()
@click.option("--method", default=None, help="Only this method's summaries and aspect answers.")
@budget_option(None, "Only the summaries made at this budget.")
@click.option("--highlight", is_flag=True, help="Also print the source text with summary sentences marked.")
@json_option
def show(document, db_path, method, budget, highlight, as_json):
    """Show one DOCUMENT (id, record key, path or JSON record id): metadata, reference,
    summaries with their source spans, flags and scores, and its newest answer to each
    aspect. A JSON/JSONL file with several records lists them."""
    records = api.file_records(db_path, document)
    if len(records) > 1:
        _print_file_records(document, records, as_json)
        return
    record = api.show(db_path, document, method=method, budget=budget)
    if as_json:
        click.echo(strict_json.dumps(record, indent=2, ensure_ascii=False))
    else:
        _print_document(record, highlight)


@main.command()
@db_option()
@click.option("--format", "fmt", required=True, type=click.Choice(FORMATS))
@click.option("--out", "out_path", required=True, type=click.Path(dir_okay=False), help="File to write.")
@click.option("--method", default=None, help="The method whose summaries to export (default: the one covering most documents).")
@budget_option(None, "Its budget.")
@click.option("--setting", default=None, help="The key of one stored setting, when a method has several at a budget.")
@click.option("--every-summary", is_flag=True, help="Every stored summary instead: one row per summary.")
@click.option("--methods", default=None, help="With --every-summary: only these comma-separated methods.")
@click.option("--include-missing", is_flag=True, help="Also documents whose files are gone from disk.")
def export(db_path, fmt, out_path, method, budget, setting, every_summary, methods, include_missing):
    """Write stored summaries to a CSV, JSON Lines, Markdown or HTML file: one row per
    document for one method at one budget, unless --every-summary."""
    count, choice = api.export(
        db_path, fmt, out_path, method=method, budget=budget, setting=setting, every_summary=every_summary,
        methods=_methods(methods), include_missing=include_missing,
    )
    what = f"{choice.label} (setting {choice.key})" if choice else "every stored summary"
    click.echo(f"wrote {count} rows to {out_path}: {what}")


@main.command()
@db_option()
@click.option("--port", default=0, show_default=True, type=click.IntRange(0, 65535), help="Port (0: a free one).")
@click.option("--host", default="127.0.0.1", show_default=True,
              help="Address to listen on; anything but loopback lets other machines read the store.")
@click.option("--allow-host", "allowed_hosts", multiple=True,
              help="Another name the site may be reached by (checked against the Host header).")
def review(db_path, port, host, allowed_hosts):
    """Serve a read-only review site for the store: search, each document beside its
    summaries with click-to-source highlighting, the comparison, CSV/JSON Lines
    downloads. Prints the address and serves until Ctrl-C."""
    try:
        api.review(db_path, host=host, port=port, allowed_hosts=tuple(allowed_hosts),
                   say=lambda text: click.echo(text, err=True))
    except KeyboardInterrupt:
        click.echo("stopped", err=True)


@main.command()
@db_option()
@budget_option("reference", "The budget every method gets.")
@click.option("--methods", default="lead,tfidf,textrank,oracle", show_default=True,
              help=f"Methods to summarize at that budget (known: {', '.join(MATCHED)}; oracle: upper bound; "
                   "random: chance level).")
@wait_lock_option
@json_option
def score(db_path, budget, methods, wait_lock, as_json):
    """Score stored summaries against the documents' reference summaries (ROUGE).

    First, for every document with a reference, each method summarizes it at the
    budget, and the oracle is added at every budget already stored; then every
    summary without scores is scored. A rerun scores only what is new.
    """
    outcome = api.score(db_path, budget=budget, methods=_methods(methods), wait_lock=wait_lock or 0.0,
                        progress=TerminalProgress())
    if as_json:
        click.echo(strict_json.dumps(outcome.as_dict(), indent=2))
    else:
        click.echo(
            f"score run {outcome.run_id}: {outcome.summaries_added} summaries added at budget "
            f"'{outcome.budget}', {outcome.oracles_added} oracle summaries at stored budgets, "
            f"{outcome.summaries_scored} summaries scored in {outcome.seconds:.1f}s"
        )


@main.command()
@db_option()
@budget_option(api.ALL_BUDGETS, "Which budget to show ('all': every budget, one table each).")
@click.option("--measure", type=click.Choice(("f1", "precision", "recall")), default="f1", show_default=True)
@click.option("--resamples", type=click.IntRange(100), default=1000, show_default=True, help="Bootstrap resamples.")
@seed_option("Bootstrap seed.")
@json_option
def compare(db_path, budget, measure, resamples, seed, as_json):
    """Compare methods on the stored scores: mean ROUGE per method with bootstrap
    intervals, paired differences from lead, and how much each method copies."""
    from summarize.output.tables import comparison_json, format_comparison

    comparison = api.compare(db_path, budget=budget, measure=measure, resamples=resamples, seed=seed)
    click.echo(comparison_json(comparison) if as_json else format_comparison(comparison))


@main.command()
@db_option()
@click.option("--out", "out_path", required=True, type=click.Path(dir_okay=False), help="HTML file to write.")
@budget_option(api.ALL_BUDGETS, "Which budget to show ('all': every budget).")
@click.option("--examples", type=click.IntRange(0), default=3, show_default=True,
              help="How many best- and worst-scored documents to show.")
@click.option("--resamples", type=click.IntRange(100), default=1000, show_default=True, help="Bootstrap resamples.")
@seed_option("Bootstrap seed.")
def report(db_path, out_path, budget, examples, resamples, seed):
    """Write one self-contained HTML report: comparison tables, charts, and the
    best- and worst-scored documents with the chosen sentences highlighted."""
    written = api.report(db_path, out_path, budget=budget, examples=examples, resamples=resamples, seed=seed)
    click.echo(f"wrote {written}")


@main.command()
@db_option()
@click.option("--folds", type=click.IntRange(2), default=5, show_default=True,
              help="Cross-validation folds over documents (lowered so each keeps at least four documents).")
@click.option("--classifier", type=click.Choice(("gradient-boosting", "logistic")),
              default="gradient-boosting", show_default=True, help="The classifier behind the sentence scores.")
@seed_option("Seed for folds and classifier.")
@wait_lock_option
@json_option
def train(db_path, folds, classifier, seed, wait_lock, as_json):
    """Train the house-style method on the documents that have reference summaries.

    Each referenced document first gets a held-out summary from a model trained on
    the other folds, scored beside lead, TF-IDF, TextRank and the oracle at the
    reference's length; then the method is trained on all of them and kept in the
    store, where `summarize run --methods house-style` finds it. Needs at least 20
    documents with reference summaries.
    """
    from summarize.output.tables import format_comparison

    run_id, outcome = api.train(db_path, folds=folds, classifier=classifier, seed=seed,
                                wait_lock=wait_lock or 0.0, progress=None if as_json else TerminalProgress())
    comparison = api.compare(db_path, budget="reference")
    if as_json:
        click.echo(strict_json.dumps({"run_id": run_id, **outcome.as_dict(), "comparison": comparison.as_dict()}, indent=2))
        return
    kept = "reused stored model" if outcome.reused_model else "stored model"
    click.echo(
        f"train run {run_id}: {kept} #{outcome.model_id}, trained on {outcome.documents} documents; "
        f"{outcome.folds}-fold held-out summaries added: {outcome.held_out_added}; {outcome.seconds:.1f}s\n"
    )
    click.echo(format_comparison(comparison))


@main.command()
@db_option()
@click.option("--folds", type=click.IntRange(2), default=5, show_default=True, help="Cross-validation folds for house-style.")
@seed_option("Seed for folds and classifier.")
@wait_lock_option
@json_option
def choose(db_path, folds, seed, wait_lock, as_json):
    """Pick the method that does best on the documents with reference summaries.

    Lead, TF-IDF, TextRank and (with at least 20 referenced documents) house-style
    are compared held out, at each reference's length, by the mean of ROUGE-1,
    ROUGE-2 and ROUGE-L F1. `summarize run --methods auto` makes the same choice and
    applies it. The decision is kept in the store as a run of its own.
    """
    run_id, decision = api.choose(db_path, folds=folds, seed=seed, wait_lock=wait_lock or 0.0,
                                  progress=TerminalProgress())
    if as_json:
        click.echo(strict_json.dumps({"run_id": run_id, **decision.as_dict()}, indent=2))
        return
    click.echo(f"choose run {run_id}: {decision.method}{' (fallback)' if decision.fallback else ''}")
    click.echo(f"  why: {decision.reason}")
    if decision.scores:
        click.echo(f"  score: {decision.selection_rule}")
        for name, value in sorted(decision.scores.items(), key=lambda item: -item[1]):
            click.echo(f"    {name:<12} {100 * value:6.2f}")
    click.echo(f"\n{CAUTION}")


# Aspect summaries and digests live in their own module.
from summarize.answer_commands import COMMANDS as _ANSWER_COMMANDS  # noqa: E402

for _command in _ANSWER_COMMANDS:
    main.add_command(_command)
