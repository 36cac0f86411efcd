"""The settings of a run, one object for the job file, the command line and the API.

    settings = RunSettings(methods=("lead", "textrank"), budget="80w", mmr=0.7)

Field names are the long options of ``summarize run`` with dashes written as
underscores, and the keys of a job file; the run stores :meth:`RunSettings.as_config`
in its configuration, so a stored run says exactly how it was asked for.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field, fields, replace

from store.errors import UsageError
from store.write_groups import DEFAULT_GROUP_DOCUMENTS, DEFAULT_GROUP_SECONDS
from summarize.methods.budget import Budget
from summarize.methods.registry import RUNNABLE, MethodSettings, check_names
from summarize.reading.ingest import RecordFields
from summarize.runs.jobfile import load_job
from summarize.runs.stopping import StopConditions, parse_until


@dataclass(frozen=True)
class RunSettings:
    """How to summarize an archive. ``budget`` is in the budget grammar (``3``,
    ``80w``, ``10%``); ``seq2seq`` holds the seq2seq method's settings (``model``,
    ``profile``, ...); ``until`` is a local time ``HH:MM``."""

    methods: tuple[str, ...] = ("lead", "tfidf", "textrank")
    budget: str = "3"
    mmr: float | None = None
    workers: int = 1
    scheduler: str | None = None
    until: str | None = None
    max_minutes: float | None = None
    wait_lock: float = 0.0
    group_documents: int = DEFAULT_GROUP_DOCUMENTS
    group_seconds: float = DEFAULT_GROUP_SECONDS
    text_field: str = "text"
    title_field: str = "title"
    summary_field: str = "summary"
    date_field: str = "date"
    id_field: str = "id"
    seq2seq: dict = field(default_factory=dict)

    @classmethod
    def from_job(cls, job: dict) -> RunSettings:
        """Settings from a job file's table (see :func:`~summarize.runs.jobfile.load_job`);
        ``paths``, ``db`` and ``log`` are the job's, not the settings'."""
        known = {item.name for item in fields(cls)}
        given = {key: value for key, value in job.items() if key in known}
        if isinstance(given.get("methods"), str):
            given["methods"] = tuple(given["methods"].split(","))
        return cls(**given)

    @classmethod
    def from_job_file(cls, path: str) -> RunSettings:
        return cls.from_job(load_job(path))

    def with_changes(self, **given) -> RunSettings:
        """These settings with the values in ``given`` that are not None on top."""
        return replace(self, **{key: value for key, value in given.items() if value is not None})

    def method_names(self) -> list[str]:
        return check_names(list(self.methods), RUNNABLE)

    def parsed_budget(self) -> Budget:
        return Budget.parse(self.budget)

    def method_settings(self) -> MethodSettings:
        return MethodSettings(budget=self.parsed_budget(), mmr_lambda=self.mmr, seq2seq=dict(self.seq2seq))

    def record_fields(self) -> RecordFields:
        return RecordFields(text=self.text_field, title=self.title_field, summary=self.summary_field,
                            date=self.date_field, id=self.id_field)

    def stop_conditions(self) -> StopConditions:
        return StopConditions(until=parse_until(self.until) if self.until else None, max_minutes=self.max_minutes)

    def check(self) -> RunSettings:
        """Every setting checked (one :class:`~store.errors.UsageError` line each) before a run starts."""
        names = self.method_names()
        self.parsed_budget()
        if self.until:
            parse_until(self.until)
        if self.mmr is not None and not 0 <= self.mmr <= 1:
            raise UsageError(f"mmr must be in [0, 1], got {self.mmr}")
        if self.workers < 1:
            raise UsageError(f"workers must be at least 1, got {self.workers}")
        if self.group_documents < 1:
            raise UsageError(f"group_documents must be at least 1, got {self.group_documents}")
        if self.group_seconds < 0:
            raise UsageError(f"group_seconds must be 0 or more, got {self.group_seconds}")
        if "seq2seq" in names and not self.seq2seq.get("model"):
            raise UsageError("the seq2seq method needs a model (--model DIR, or model in the job file's [seq2seq] table)")
        if self.seq2seq.get("model") and "seq2seq" not in names:
            raise UsageError("a seq2seq model is given but seq2seq is not among the methods: add seq2seq to --methods")
        if "seq2seq" in names:
            from summarize.methods.registry import REGISTRY

            known = {item.name for item in fields(REGISTRY["seq2seq"].method_class()) if item.init}
            unknown = sorted(set(self.seq2seq) - known)
            if unknown:
                raise UsageError(f"unknown seq2seq setting(s) {', '.join(unknown)} (known: {', '.join(sorted(known))})")
        return self

    def as_config(self) -> dict:
        return {**asdict(self), "methods": list(self.methods)}
