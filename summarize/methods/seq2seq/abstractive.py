"""The ``seq2seq`` method: a pretrained encoder-decoder model writes the summary.

Works with any Hugging Face encoder-decoder summarization checkpoint on CPU: BART
(Lewis et al. 2020), T5 (Raffel et al. 2020) and PEGASUS (Zhang et al. 2020) and
their distilled and fine-tuned relatives. Procedure for each document:

1. What the model reads (``long_mode``):
   ``"select"`` (default, extract-then-generate): sentences ranked by TF-IDF salience
   (their cosine to the whole document under the archive IDF; see
   :class:`summarize.methods.extractive.TfidfSummarizer`), the best that fit the input
   window, in document order. ``"chunks"``: the document in consecutive windows; each
   is summarized, and the partial summaries are joined when together they are no
   longer than ``max_new_tokens``, else summarized again in the same way.
   The window is the checkpoint's (tokenizer limit capped by its position table) or
   ``max_input_tokens``; how much of the document the model read is recorded in
   ``Summary.details`` (``coverage`` = characters read / characters of all sentences).
2. The task prefix T5 was trained with (``"summarize: "``, or the checkpoint's
   ``task_specific_params`` prefix) is put in front; BART and PEGASUS take none.
3. Generation (greedy or beam search) in length-sorted batches, see
   :mod:`summarize.methods.seq2seq.generation`.
4. The output is split into sentences; each is linked to the source sentences that
   support it best (:mod:`summarize.methods.seq2seq.support`) and checked for numbers, dates and names
   absent from the source (:mod:`summarize.methods.seq2seq.faithfulness`).

Settings come from, in increasing priority: this module's defaults, the checkpoint's
own recommendations, the ``profile`` ("quality": nothing more; "fast": greedy decoding,
int8 weights, 80 new tokens at most, batches of 8), and any setting given explicitly.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from store.errors import UsageError
from store.records import Document, Segmentation, Summary, SummarySentence
from summarize.methods.contract import BatchCapable, NeedsLoading, runtime_only
from summarize.methods.extractive import TfidfSummarizer
from summarize.methods.seq2seq.faithfulness import unsupported_facts
from summarize.methods.seq2seq.models import Checkpoint, load_checkpoint
from summarize.methods.seq2seq.support import supporting_sources
from summarize.methods.seq2seq.windowing import ModelInput, TokenCounter, consecutive_chunks, select_salient
from summarize.reading.split import sentence_spans

DEFAULT_SETTINGS = {
    "num_beams": 4,
    "min_new_tokens": 16,
    "max_new_tokens": 128,
    "no_repeat_ngram_size": 3,
    "length_penalty": 1.0,
    "early_stopping": True,
    "quantize": False,
    "batch_size": 4,
}
PROFILES = {
    "quality": {},
    "fast": {"num_beams": 1, "max_new_tokens": 80, "quantize": True, "batch_size": 8},
}
LONG_MODES = ("select", "chunks")
# Model families trained with a task prefix, and the prefix for summarization.
_FAMILY_PREFIX = {"t5": "summarize: ", "mt5": "summarize: ", "umt5": "summarize: ", "longt5": "summarize: "}
# Rounds of summarizing partial summaries in "chunks" mode before joining what is left.
_MAX_MERGE_ROUNDS = 4


class Seq2SeqSettingError(UsageError, ValueError):
    """A seq2seq setting out of its range (profile, long mode, batch size, window, generation)."""


@dataclass
class _Plan:
    """One document in flight: what the model reads and what it has written so far."""

    document: Document
    segmentation: Segmentation
    inputs: list[str] = field(default_factory=list)
    seen: list[ModelInput] = field(default_factory=list)
    partials: list[str] = field(default_factory=list)
    input_tokens: list[int] = field(default_factory=list)
    output_tokens: int = 0
    seconds: float = 0.0
    rounds: int = 1
    error: Exception | None = None


@dataclass
class Seq2SeqSummarizer(NeedsLoading, BatchCapable):
    """Abstractive summaries from a local encoder-decoder checkpoint (see module doc).

    ``model`` is a checkpoint directory or a repository id already in the local
    Hugging Face cache. Generation settings left ``None`` are resolved on ``load``.
    """

    model: str
    profile: str = "quality"
    allow_pickle: bool = runtime_only(False)
    num_beams: int | None = None
    min_new_tokens: int | None = None
    max_new_tokens: int | None = None
    no_repeat_ngram_size: int | None = None
    length_penalty: float | None = None
    early_stopping: bool | None = None
    quantize: bool | None = None
    batch_size: int | None = runtime_only()
    threads: int | None = runtime_only()
    max_input_tokens: int | None = None
    long_mode: str = "select"
    prefix: str | None = None
    support_links: int = 2
    support_threshold: float = 0.1
    stop_words: str | None = "english"
    name: str = field(default="seq2seq", init=False)

    # loading ------------------------------------------------------------------------

    def load(self) -> Seq2SeqSummarizer:
        """Load and check the checkpoint once (raises ``ModelLoadError``), then settle
        every setting the run records."""
        if hasattr(self, "checkpoint_"):
            return self
        if self.profile not in PROFILES:
            raise Seq2SeqSettingError(f"profile must be one of {', '.join(PROFILES)}, got {self.profile!r}")
        if self.long_mode not in LONG_MODES:
            raise Seq2SeqSettingError(f"long_mode must be one of {', '.join(LONG_MODES)}, got {self.long_mode!r}")
        from summarize.methods.seq2seq.generation import GenerationSettings, quantize_int8

        checkpoint = load_checkpoint(self.model, allow_pickle=self.allow_pickle)
        explicit = {
            key: value
            for key in DEFAULT_SETTINGS
            if (value := getattr(self, key)) is not None
        }
        settings = {**DEFAULT_SETTINGS, **checkpoint.recommended, **PROFILES[self.profile], **explicit}
        if "min_new_tokens" not in explicit:
            # A checkpoint's or profile's minimum yields to a shorter maximum; a
            # minimum given explicitly is checked instead.
            settings["min_new_tokens"] = min(settings["min_new_tokens"], settings["max_new_tokens"])
        try:
            self.generation_ = GenerationSettings(
                **{key: settings[key] for key in GenerationSettings.__dataclass_fields__}
            )
        except ValueError as error:
            raise Seq2SeqSettingError(str(error)) from None
        self.quantized_ = bool(settings["quantize"])
        self.batch_size_ = int(settings["batch_size"])
        if self.batch_size_ < 1:
            raise Seq2SeqSettingError(f"batch_size must be at least 1, got {self.batch_size_}")
        if self.prefix is not None:
            self.prefix_ = self.prefix
        else:
            self.prefix_ = checkpoint.recommended.get("prefix", _FAMILY_PREFIX.get(checkpoint.config.model_type, ""))
        self.window_ = self._window(checkpoint)
        if self.quantized_:
            quantize_int8(checkpoint.model)
        self.checkpoint_: Checkpoint = checkpoint
        return self

    def _window(self, checkpoint: Checkpoint) -> int:
        if self.max_input_tokens is None:
            return checkpoint.input_window
        if self.max_input_tokens < 1:
            raise Seq2SeqSettingError(f"max_input_tokens must be at least 1, got {self.max_input_tokens}")
        # Absolute position tables (BART, PEGASUS) are a hard limit; T5's relative
        # positions are not, so a larger window is the user's choice there.
        positions = getattr(checkpoint.config, "max_position_embeddings", None)
        return min(self.max_input_tokens, positions) if isinstance(positions, int) else self.max_input_tokens

    # the method's shape -------------------------------------------------------------

    def get_params(self) -> dict:
        """Everything that shapes the output: model identity (content hashes, not the
        path, so a moved checkpoint is the same model), prefix, window, generation
        settings, quantization, provenance settings. These are the settled values of the
        parameter fields (every field but the runtime-only ones), so two spellings of the
        same settings share their stored summaries."""
        self.load()
        return {
            "model": self.checkpoint_.identity,
            "profile": self.profile,
            "prefix": self.prefix_,
            "input_window": self.window_,
            "long_mode": self.long_mode,
            "generation": self.generation_.as_dict(),
            "quantize": "int8-dynamic-linear" if self.quantized_ else None,
            "support": {"max_links": self.support_links, "min_similarity": self.support_threshold},
            "stop_words": self.stop_words,
        }

    def runtime_settings(self) -> dict:
        """Settings of a run that do not change the output: where the model was found,
        batch size and threads."""
        import torch

        self.load()
        return {
            "model_path": str(self.checkpoint_.path),
            "batch_size": self.batch_size_,
            "threads": self.threads if self.threads is not None else torch.get_num_threads(),
        }

    @property
    def batch_documents(self) -> int:
        """How many documents the runner hands to ``summarize_many`` at once: a few
        batches' worth, so length sorting has something to sort."""
        self.load()
        return 4 * self.batch_size_

    def fit(self, texts: list[str]) -> Seq2SeqSummarizer:
        """Fit the salience ranker's IDF over the archive (one text per document)."""
        self.ranker_ = TfidfSummarizer(stop_words=self.stop_words).fit(texts)
        return self

    def summarize(self, document: Document, segmentation: Segmentation) -> Summary:
        result = self.summarize_many([(document, segmentation)])[0]
        if isinstance(result, Exception):
            raise result
        return result

    def summarize_many(self, items: Sequence[tuple[Document, Segmentation]]) -> list[Summary | Exception]:
        """Summaries of many documents, generated in length-sorted batches; a document
        that fails gets its exception in its place and the others go on."""
        import torch

        if not hasattr(self, "ranker_"):
            raise RuntimeError("Seq2SeqSummarizer.fit must be called (on the archive) before summarize")
        self.load()
        previous_threads = torch.get_num_threads()
        if self.threads is not None:
            torch.set_num_threads(self.threads)
        try:
            plans = [self._plan(document, segmentation) for document, segmentation in items]
            self._generate_round(plans, first=True)
            if self.long_mode == "chunks":
                self._merge_partials(plans)
        finally:
            torch.set_num_threads(previous_threads)
        return [plan.error if plan.error is not None else self._summary(plan) for plan in plans]

    # steps ----------------------------------------------------------------------------

    def _counter(self) -> TokenCounter:
        return TokenCounter(self.checkpoint_.tokenizer, self.prefix_)

    def _plan(self, document: Document, segmentation: Segmentation) -> _Plan:
        started = time.perf_counter()
        plan = _Plan(document, segmentation)
        try:
            if self.long_mode == "select":
                salience, _ = self.ranker_.sentence_scores(document, segmentation)
                chosen = select_salient(
                    document.text, segmentation.sentences, np.nan_to_num(salience), self._counter(), self.window_
                )
                plan.seen = [chosen]
            else:
                plan.seen = consecutive_chunks(document.text, segmentation.sentences, self._counter(), self.window_)
            plan.inputs = [model_input.text for model_input in plan.seen]
        except Exception as error:  # an unplannable document fails alone
            plan.error = error
        plan.seconds += time.perf_counter() - started
        return plan

    def _generate_round(self, plans: list[_Plan], first: bool) -> None:
        """Generate every pending input of every plan in one sorted, batched pass; the
        outputs replace each plan's ``partials``."""
        from summarize.methods.seq2seq.generation import generate_texts

        queue = [(plan, text) for plan in plans if plan.error is None for text in plan.inputs]
        results = generate_texts(
            self.checkpoint_.model,
            self.checkpoint_.tokenizer,
            [self.prefix_ + text for _, text in queue],
            self.generation_,
            self.batch_size_,
        )
        for plan in plans:
            if plan.error is None and plan.inputs:
                plan.partials = []
        for (plan, _), result in zip(queue, results):
            if plan.error is not None:
                continue
            if isinstance(result, Exception):
                plan.error = RuntimeError(f"generation failed ({result})")
                continue
            plan.partials.append(result.text)
            plan.output_tokens += result.output_tokens
            plan.seconds += result.seconds
            if first:
                plan.input_tokens.append(result.input_tokens)
        for plan in plans:
            plan.inputs = []

    def _merge_partials(self, plans: list[_Plan]) -> None:
        """Chunks mode: join partial summaries that fit the target length; summarize
        longer ones again, until one text is left or the rounds run out."""
        counter = self._counter()
        for _ in range(_MAX_MERGE_ROUNDS):
            pending = []
            for plan in plans:
                if plan.error is not None or len(plan.partials) <= 1:
                    continue
                joined = " ".join(plan.partials)
                spans = sentence_spans(joined)
                if not spans or sum(counter.piece_tokens(plan.partials)) <= self.generation_.max_new_tokens:
                    plan.partials = [joined]
                    continue
                try:
                    inputs = consecutive_chunks(joined, spans, counter, self.window_)
                except ValueError as error:
                    plan.error = error
                    continue
                if len(inputs) >= len(plan.partials):
                    plan.partials = [joined]  # another round would not shorten it
                    continue
                plan.inputs = [model_input.text for model_input in inputs]
                plan.rounds += 1
                pending.append(plan)
            if not pending:
                break
            self._generate_round(pending, first=False)
        for plan in plans:
            if plan.error is None and len(plan.partials) > 1:
                plan.partials = [" ".join(plan.partials)]

    def _summary(self, plan: _Plan) -> Summary:
        started = time.perf_counter()
        document, segmentation = plan.document, plan.segmentation
        text = " ".join(plan.partials).strip()
        sentences = [span.slice(text) for span in sentence_spans(text)]
        links = supporting_sources(
            sentences, document, segmentation, self.ranker_.vectorizer_, self.support_links, self.support_threshold
        )
        document_chars = sum(len(span) for span in segmentation.sentences)
        input_chars = sum(model_input.chars for model_input in plan.seen)
        seen_sentences = {index for model_input in plan.seen for index in model_input.sentences}
        summary_sentences = [
            SummarySentence(text=sentence, score=sources[0].similarity if sources else 0.0, sources=sources)
            for sentence, sources in zip(sentences, links)
        ]
        details = {
            "model": {**self.checkpoint_.identity, "path": str(self.checkpoint_.path)},
            "long_mode": self.long_mode,
            "input_window": self.window_,
            "model_inputs": len(plan.seen),
            "input_tokens": plan.input_tokens,
            "input_sentences": len(seen_sentences),
            "document_sentences": len(segmentation.sentences),
            "input_chars": input_chars,
            "document_chars": document_chars,
            "coverage": round(input_chars / document_chars, 6) if document_chars else 0.0,
            "generated_tokens": plan.output_tokens,
            "generation_rounds": plan.rounds,
            "quantized": self.quantized_,
        }
        flags = unsupported_facts(sentences, document.text)
        return Summary(
            method=self.name,
            params=self.get_params(),
            sentences=summary_sentences,
            seconds=plan.seconds + time.perf_counter() - started,
            details=details,
            flags=flags,
        )
