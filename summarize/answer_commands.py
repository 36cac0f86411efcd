"""Command-line commands for aspect summaries and digests: ``summarize aspects``,
``summarize train-aspects`` and the ``summarize digest`` group. Each parses, calls
one function of :mod:`summarize.runs.aspect_runs` or :mod:`summarize.runs.digest_runs`,
and prints (``--json`` for machines)."""

from __future__ import annotations

import json
import sys
from dataclasses import asdict
from pathlib import Path

import click

from store.aspect_records import DocumentSelection
from store.errors import SummarizerError
from store.lock import StoreLocked
from summarize.methods.aspects.definitions import REPORT_ASPECTS, choose_aspects
from summarize.methods.budget import Budget
from summarize.methods.digests import DigestSummarizer
from summarize.output.caution import CAUTION


def _fail(error: Exception) -> None:
    click.echo(f"error: {error}", err=True)
    sys.exit(getattr(error, "exit_status", 1))


def _existing_store(db_path: str) -> str:
    if not Path(db_path).exists():
        _fail(SummarizerError(f"{db_path}: no such store (create one with `summarize run PATH --db {db_path}`)"))
    return db_path


def _budget(_ctx, _param, value: str) -> Budget:
    try:
        return Budget.parse(value)
    except ValueError as error:
        raise click.BadParameter(str(error)) from None


def _aspects(job: str | None, names: tuple[str, ...]):
    from summarize.runs.aspect_runs import load_aspects

    defined = load_aspects(job) if job else REPORT_ASPECTS
    return choose_aspects(list(names), defined)


def _say(text: str) -> None:
    click.echo(text, err=True)


@click.command("aspects")
@click.argument("documents", nargs=-1)
@click.option("--db", "db_path", required=True, type=click.Path(dir_okay=False))
@click.option("--aspect", "names", multiple=True, help="Aspect to answer (repeat; default: all defined).")
@click.option("--job", type=click.Path(dir_okay=False), default=None,
              help="TOML job file whose [aspects.NAME] tables define the aspects (question, phrases, labels).")
@click.option("--method", type=click.Choice(("aspect-lexrank", "aspect-learned")), default="aspect-lexrank",
              show_default=True, help="aspect-learned needs `summarize train-aspects` first.")
@click.option("--budget", default="2", show_default=True, callback=_budget,
              help="Length of each answer: '2' sentences, '40w' words or '5%'.")
@click.option("--wait-lock", type=click.FloatRange(0), default=0.0, help="Seconds to wait for a run that holds the store.")
@click.option("--json", "as_json", is_flag=True, help="Print the aspect summaries as JSON.")
def aspects_command(documents, db_path, names, job, method, budget, wait_lock, as_json):
    """Answer each aspect (cause, actions, open items by default) for DOCUMENTS (ids,
    record keys or paths; all active documents when none are given) and store the
    answers. An aspect a document does not address gets no answer, not a filler."""
    from summarize.output.answers import format_aspect_table
    from summarize.runs.aspect_runs import summarize_aspects

    _existing_store(db_path)
    try:
        outcome = summarize_aspects(db_path, list(documents) or None, _aspects(job, names), method, budget,
                                    lock_wait_seconds=wait_lock)
    except (SummarizerError, StoreLocked) as error:
        _fail(error)
    if as_json:
        click.echo(json.dumps(outcome.as_dict() | {"caution": CAUTION}, indent=2, ensure_ascii=False))
        return
    click.echo(format_aspect_table(outcome.rows))
    _say(f"aspects run {outcome.run_id}: {outcome.added} answers added, {outcome.kept} already stored")


@click.command("train-aspects")
@click.option("--db", "db_path", required=True, type=click.Path(dir_okay=False))
@click.option("--aspect", "names", multiple=True, help="Aspect to train (repeat; default: all defined).")
@click.option("--job", type=click.Path(dir_okay=False), default=None, help="TOML job file with [aspects.NAME] tables.")
@click.option("--folds", type=click.IntRange(2), default=5, show_default=True, help="Cross-validation folds.")
@click.option("--seed", type=int, default=0, show_default=True)
@click.option("--wait-lock", type=click.FloatRange(0), default=0.0, help="Seconds to wait for a run that holds the store.")
@click.option("--json", "as_json", is_flag=True, help="Print the outcome as JSON.")
def train_aspects_command(db_path, names, job, folds, seed, wait_lock, as_json):
    """Train the aspect-learned method on documents whose references are labelled by
    aspect ('Cause:' sections, or JSON fields named after aspects), after a held-out
    comparison with aspect-lexrank."""
    from summarize.runs.aspect_runs import train_aspects

    _existing_store(db_path)
    try:
        outcome = train_aspects(db_path, _aspects(job, names), folds=folds, seed=seed, lock_wait_seconds=wait_lock,
                                progress=None if as_json else _say)
    except (SummarizerError, StoreLocked) as error:
        _fail(error)
    if as_json:
        click.echo(json.dumps(outcome.as_dict(), indent=2))
        return
    click.echo(f"train-aspects run {outcome.run_id}: stored model #{outcome.model_id}; "
               f"{outcome.folds}-fold held-out ROUGE-1 F1 ×100")
    click.echo(f"  {'aspect':<14} {'documents':>9} {'aspect-learned':>15} {'aspect-lexrank':>15}")
    for aspect, values in outcome.held_out.items():
        click.echo(f"  {aspect:<14} {outcome.documents.get(aspect, 0):>9} {100 * values['aspect-learned']:>15.1f} "
                   f"{100 * values['aspect-lexrank']:>15.1f}")


@click.group("digest")
def digest_group():
    """Digests: one cited summary across a selection of documents, kept in the store
    with its selection and settings, and made again when the archive changes."""


def _print_digest(outcome, as_json: bool, out_path: str | None, fmt: str | None) -> None:
    from summarize.output.answers import format_digest, write_digest

    if out_path:
        chosen = fmt or Path(out_path).suffix.lstrip(".").lower()
        try:
            write_digest(outcome.record, chosen, out_path)
        except ValueError as error:
            raise click.BadParameter(str(error), param_hint="--format") from None
        _say(f"wrote {out_path}")
    if as_json:
        click.echo(json.dumps(outcome.as_dict() | {"caution": CAUTION}, indent=2, ensure_ascii=False))
        return
    state = f"stored as version {outcome.version}" if outcome.added else f"unchanged (version {outcome.version})"
    _say(f"digest {outcome.name}: {outcome.documents} documents, {state}")
    click.echo(format_digest(outcome.record))


_OUT = click.option("--out", "out_path", type=click.Path(dir_okay=False), default=None,
                    help="Also write the digest to this file (.md, .html or .json).")
_FORMAT = click.option("--format", "fmt", type=click.Choice(("md", "html", "json")), default=None,
                       help="Format of --out (default: from its extension).")
_JSON = click.option("--json", "as_json", is_flag=True, help="Print the digest as JSON.")
_WAIT = click.option("--wait-lock", type=click.FloatRange(0), default=0.0,
                     help="Seconds to wait for a run that holds the store.")


@digest_group.command("new")
@click.option("--db", "db_path", required=True, type=click.Path(dir_okay=False))
@click.option("--name", default=None, help="Name to keep the digest under (default: made from the selection).")
@click.option("--query", default=None, help="A search as `find` takes it (words, \"phrases\", OR, NOT, filters such as format:pdf).")
@click.option("--folder", default=None, help="Only documents under this folder.")
@click.option("--since", default=None, help="Only documents dated on or after this (2025, 2025-03, 2025-03-14).")
@click.option("--until", default=None, help="Only documents dated on or before this.")
@click.option("--status", default="active", show_default=True, help="Stored status: active, missing, duplicate or any.")
@click.option("--aspect", default=None, help="Digest only what answers this aspect.")
@click.option("--job", type=click.Path(dir_okay=False), default=None, help="TOML job file with [aspects.NAME] tables.")
@click.option("--budget", default="8", show_default=True, callback=_budget, help="Digest length: '8' sentences or '200w'.")
@click.option("--mmr", type=click.FloatRange(0, 1), default=0.7, show_default=True, help="MMR λ (1 = relevance only).")
@click.option("--per-document", type=click.IntRange(1), default=2, show_default=True,
              help="At most this many digest sentences led by one document.")
@click.option("--duplicate-threshold", type=click.FloatRange(0, 1, min_open=True), default=0.8, show_default=True,
              help="Cosine at or above which sentences are merged as near-duplicates.")
@_OUT
@_FORMAT
@_JSON
@_WAIT
def digest_new(db_path, name, query, folder, since, until, status, aspect, job, budget, mmr, per_document,
               duplicate_threshold, out_path, fmt, as_json, wait_lock):
    """Make a digest of the documents the selection names (all active documents when
    no criterion is given); a rerun on an unchanged archive writes nothing."""
    from summarize.runs.digest_runs import make_digest

    _existing_store(db_path)
    try:
        chosen = _aspects(job, (aspect,))[0] if aspect else None
        selection = DocumentSelection(query=query, folder=folder, since=since, until=until, status=status)
        summarizer = DigestSummarizer(budget=budget, mmr_lambda=mmr, per_document=per_document,
                                      duplicate_threshold=duplicate_threshold)
        outcome = make_digest(db_path, selection, name, chosen, summarizer, lock_wait_seconds=wait_lock,
                              progress=None if as_json else _say)
    except (SummarizerError, StoreLocked) as error:
        _fail(error)
    _print_digest(outcome, as_json, out_path, fmt)


@digest_group.command("rerun")
@click.argument("name")
@click.option("--db", "db_path", required=True, type=click.Path(dir_okay=False))
@_OUT
@_FORMAT
@_JSON
@_WAIT
def digest_rerun(name, db_path, out_path, fmt, as_json, wait_lock):
    """Make digest NAME again with its stored selection and settings; a new version
    only when the selected documents changed."""
    from summarize.runs.digest_runs import rerun_digest

    _existing_store(db_path)
    try:
        outcome = rerun_digest(db_path, name, lock_wait_seconds=wait_lock, progress=None if as_json else _say)
    except (SummarizerError, StoreLocked) as error:
        _fail(error)
    _print_digest(outcome, as_json, out_path, fmt)


@digest_group.command("show")
@click.argument("name")
@click.option("--db", "db_path", required=True, type=click.Path(dir_okay=False))
@click.option("--version", "version", type=click.IntRange(1), default=None, help="An earlier version (default: newest).")
@_OUT
@_FORMAT
@_JSON
def digest_show(name, db_path, version, out_path, fmt, as_json):
    """Show stored digest NAME with every sentence's citations."""
    from summarize.output.answers import format_digest, write_digest
    from summarize.runs.digest_runs import read_digest

    _existing_store(db_path)
    try:
        record = read_digest(db_path, name, version)
    except SummarizerError as error:
        _fail(error)
    if out_path:
        try:
            write_digest(record, fmt or Path(out_path).suffix.lstrip(".").lower(), out_path)
        except ValueError as error:
            raise click.BadParameter(str(error), param_hint="--format") from None
        _say(f"wrote {out_path}")
    click.echo(json.dumps(record.as_dict() | {"caution": CAUTION}, indent=2, ensure_ascii=False) if as_json
               else format_digest(record))


@digest_group.command("list")
@click.option("--db", "db_path", required=True, type=click.Path(dir_okay=False))
@_JSON
def digest_list_command(db_path, as_json):
    """List stored digests (newest version of each)."""
    from summarize.runs.digest_runs import list_digests

    rows = list_digests(_existing_store(db_path))
    if as_json:
        click.echo(json.dumps([asdict(row) for row in rows], indent=2, ensure_ascii=False))
        return
    if not rows:
        _say("no digests stored yet (make one with `summarize digest new`)")
    for row in rows:
        selection = ", ".join(f"{k} {v}" for k, v in row.selection.items())
        click.echo(f"{row.name}  version {row.version}  {row.documents} documents, "
                   f"{row.sentences} sentences  ({selection})  {row.created}")


COMMANDS = (aspects_command, train_aspects_command, digest_group)
