"""The Python API: one function per command, the same names and the same settings.

    import summarize
    report = summarize.run(["archive/"], "store.sqlite", summarize.RunSettings(budget="80w"))
    summarize.score("store.sqlite")
    print(summarize.compare("store.sqlite", budget="reference").as_dict())

Nothing here prints. Functions that take a while accept ``progress``, a
:data:`~summarize.runs.progress.ProgressCallback` that receives
:class:`~summarize.runs.progress.ProgressEvent` values; the command line shows them on
stderr. Every problem a person can act on is a :class:`~store.errors.SummarizerError`
with a one-line message (its ``exit_status`` is what the command line ends with).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from pathlib import Path

from store.errors import SummarizerError, UsageError
from store.existing import check_existing, open_existing
from summarize.methods.budget import REFERENCE
from summarize.methods.labels import setting_label
from summarize.methods.registry import MATCHED, REGISTRY, check_names
from summarize.runs.progress import ProgressCallback, messages_to
from summarize.runs.runner import run_archive
from summarize.runs.settings import RunSettings

ALL_BUDGETS = "all"


def _known_method(name: str | None) -> str | None:
    """A single method name to select stored summaries by, checked."""
    return None if name is None else check_names([name], tuple(REGISTRY))[0]


def run(
    paths: Iterable[str | Path],
    db: str | Path,
    settings: RunSettings | None = None,
    progress: ProgressCallback | None = None,
    limits=None,
    follow_links_outside: bool = False,
    exclude: Sequence[str] = (),
    strict_exit: bool = False,
    splitter=None,
):
    """Read every document under ``paths``, summarize it with each method, store it;
    returns a :class:`~summarize.runs.runner.RunReport`. A rerun does only what is missing.
    ``limits`` (a :class:`~summarize.reading.ingest.ReadLimits`) bounds what one file may
    cost; symbolic links leading outside ``paths`` are followed only when asked;
    ``exclude`` patterns leave paths out; ``strict_exit`` counts known failures too."""
    settings = (settings or RunSettings()).check()
    paths = [str(path) for path in paths]
    if not paths:
        raise UsageError("give at least one PATH to read")
    method_settings = settings.method_settings()
    return run_archive(
        paths,
        str(db),
        methods=settings.method_names(),
        budget=method_settings.budget,
        mmr_lambda=method_settings.mmr_lambda,
        fields=settings.record_fields(),
        seq2seq_options=method_settings.seq2seq,
        workers=settings.workers,
        scheduler=settings.scheduler,
        stop=settings.stop_conditions(),
        lock_wait_seconds=settings.wait_lock,
        group_documents=settings.group_documents,
        group_seconds=settings.group_seconds,
        progress=progress,
        config_extra={"settings": settings.as_config()},
        **({"limits": limits} if limits is not None else {}),
        follow_links_outside=follow_links_outside,
        exclude=exclude,
        strict_exit=strict_exit,
        **({"splitter": splitter} if splitter is not None else {}),
    )


def score(
    db: str | Path,
    budget: str = REFERENCE,
    methods: Sequence[str] = ("lead", "tfidf", "textrank", "oracle"),
    wait_lock: float = 0.0,
    progress: ProgressCallback | None = None,
):
    """Make each of ``methods`` at the ``budget`` (``reference``, ``3``, ``80w``,
    ``10%``) for every document with a reference, add the oracle at every stored
    budget, and score everything unscored with ROUGE; returns a
    :class:`~summarize.evaluation.scoring.ScoreReport`."""
    from summarize.evaluation.matched import MatchedBudget
    from summarize.evaluation.scoring import score as score_store

    matched = MatchedBudget.parse(budget)
    chosen = check_names(list(methods), MATCHED)
    check_existing(db)
    return score_store(str(db), budget=matched, methods=chosen, progress=messages_to(progress),
                       lock_wait_seconds=wait_lock)


def compare(db: str | Path, budget: str = ALL_BUDGETS, measure: str = "f1", resamples: int = 1000, seed: int = 0):
    """Mean ROUGE per method and budget with bootstrap intervals, paired differences
    from lead, and extractiveness; returns a :class:`~summarize.evaluation.compare.Comparison`."""
    from summarize.evaluation.compare import compare as compare_scores
    from summarize.evaluation.matched import MatchedBudget

    if budget != ALL_BUDGETS:
        MatchedBudget.parse(budget)
    check_existing(db)
    return compare_scores(str(db), measure=measure, budget=budget, resamples=resamples, seed=seed)


def report(
    db: str | Path, out: str | Path, budget: str = ALL_BUDGETS, examples: int = 3, resamples: int = 1000, seed: int = 0
) -> Path:
    """Write the self-contained HTML evaluation report; returns its path."""
    from summarize.evaluation.matched import MatchedBudget
    from summarize.output.report import report as write_report

    if budget != ALL_BUDGETS:
        MatchedBudget.parse(budget)
    check_existing(db)
    return write_report(str(db), out, budget=budget, examples=examples, resamples=resamples, seed=seed)


def train(
    db: str | Path,
    folds: int = 5,
    classifier: str = "gradient-boosting",
    seed: int = 0,
    wait_lock: float = 0.0,
    progress: ProgressCallback | None = None,
):
    """Train the house-style method on the referenced documents (held-out scores
    first); returns ``(run_id, TrainingReport)``."""
    from summarize.methods.learned.house_style import CLASSIFIERS
    from summarize.methods.learned.training import train as train_method

    if classifier not in CLASSIFIERS:
        raise UsageError(f"classifier must be one of {', '.join(CLASSIFIERS)}, got {classifier!r}")
    check_existing(db)
    say = messages_to(progress)
    return train_method(str(db), folds=folds, classifier=classifier, seed=seed, progress=say,
                        lock_wait_seconds=wait_lock)


def choose(
    db: str | Path, folds: int = 5, seed: int = 0, wait_lock: float = 0.0, progress: ProgressCallback | None = None
):
    """Pick the best method on the referenced documents, held out; returns ``(run_id, Decision)``."""
    from summarize.methods.learned.method_choice import choose as choose_method

    check_existing(db)
    return choose_method(str(db), folds=folds, seed=seed, say=messages_to(progress), lock_wait_seconds=wait_lock)


def find(db: str | Path, query: str, method: str | None = None, limit: int = 20, offset: int = 0):
    """Documents matching ``query`` (the search grammar: words, "phrases", prefix*,
    AND / OR / NOT, filters such as ``folder:NAME`` or ``method:NAME``), one hit per
    document, best first; returns a page of :class:`~store.search_queries` hits."""
    from store.search import parse_query

    method = _known_method(method)
    try:
        parsed = parse_query(query + (f" method:{method}" if method else ""))
    except SummarizerError as error:
        raise type(error)(f"query {query!r}: {error}") from None
    with open_existing(db) as store:
        return store.queries.search(parsed, offset=offset, limit=limit)


def _budget_label(budget: str | None) -> str | None:
    """The label of the summaries made at ``budget`` (the budget grammar), to select them by."""
    from summarize.evaluation.matched import MatchedBudget

    return None if budget is None else MatchedBudget.parse(budget).label()


def file_records(db: str | Path, path: str) -> list[dict]:
    """The records stored from one JSON/JSONL file (empty for any other document)."""
    with open_existing(db) as store:
        return store.queries.file_records(str(path))


def show(db: str | Path, document: str, method: str | None = None, budget: str | None = None) -> dict:
    """Everything stored about one document (id, record key or path), optionally
    only the summaries of ``method`` or at ``budget``; each summary carries its
    ``setting`` in words."""
    from summarize.methods.labels import budget_label

    method = _known_method(method)
    wanted = _budget_label(budget)
    with open_existing(db) as store:
        record = store.queries.show(str(document), method=method)
    if wanted is not None:
        record["summaries"] = [s for s in record["summaries"] if budget_label(s["params"]) == wanted]
    for summary in record["summaries"]:
        summary["setting"] = setting_label(summary["method"], summary["params"])
    return record


def export(
    db: str | Path,
    format: str,
    out: str | Path,
    method: str | None = None,
    budget: str | None = None,
    setting: str | None = None,
    every_summary: bool = False,
    methods: Sequence[str] | None = None,
    include_missing: bool = False,
):
    """Write stored summaries as csv, jsonl, md or html: one row per document for one
    ``method`` at one ``budget`` (default: the choice covering most documents), or with
    ``every_summary`` every stored summary (of ``methods``). Returns ``(rows written,
    the choice or None)``."""
    from summarize.output.export import export as export_summaries

    if method is not None:
        _known_method(method)
    if budget is not None:
        _budget_label(budget)
    chosen = check_names(list(methods), tuple(REGISTRY)) if methods else None
    if chosen and not every_summary:
        raise UsageError("--methods selects among every stored summary: give it with --every-summary")
    statuses = ("active", "duplicate", "missing") if include_missing else None
    check_existing(db)
    return export_summaries(str(db), format, out, method=method, budget=budget, setting=setting,
                            every_summary=every_summary, methods=chosen, statuses=statuses)


def review(db: str | Path, host: str = "127.0.0.1", port: int = 0, allowed_hosts: tuple[str, ...] = (),
           say: Callable[[str], None] | None = None) -> None:
    """Serve the read-only review site for the store until interrupted; ``say``
    receives the address to open."""
    from store.errors import SummarizerError
    from summarize.output.site.server import ReviewServer

    check_existing(db)
    try:
        ReviewServer(str(db), host=host, port=port, allowed_hosts=allowed_hosts).serve(say or (lambda _text: None))
    except OSError as error:
        raise SummarizerError(f"cannot listen on {host}:{port}: {error.strerror or error}") from None
