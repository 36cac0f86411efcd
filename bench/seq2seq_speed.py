"""Seq2seq speed on CPU: documents per minute, a plain generation loop beside the
``seq2seq`` method at the same settings and with its fast profile, in one run.

    python -m bench.seq2seq_speed [--documents N] [--new-tokens 60] [--threads 2] [--rounds 3]

The model has the dimensions of t5-small (Raffel et al. 2020: 6 encoder and 6 decoder
layers, d_model 512, d_ff 2048, 8 heads, vocabulary 32,128) with random weights from a
fixed seed: a forward pass costs what it costs with the released weights. The
tokenizer is a byte-pair encoding trained on the documents themselves, padded with
extra tokens to the full vocabulary, so inputs run to the model's 512-token window as
real reports do. Every configuration writes exactly ``--new-tokens`` tokens per
document (minimum = maximum), so random weights cannot stop early and all do the same
work:

* naive: one document at a time, float32, beam search (4 beams), no
  ``inference_mode``, the default thread count, input truncated to 512 tokens — a
  plain transformers loop;
* tool: the ``seq2seq`` method at the same generation settings (4 beams, float32),
  length-sorted batches, ``inference_mode``, ``--threads`` threads, salient sentences
  fitted to the window;
* tool greedy fp32: the same with greedy decoding, the reference for int8 agreement;
* fast: the fast profile (greedy, int8 linear layers, batches of 8).

Times cover generation and everything the method does around it (input selection,
sentence splitting of the output, provenance, flags), not model loading. Documents are
the demo archive's Markdown and text reports, or ACLSum papers when the demo archive
is absent.
"""

from __future__ import annotations

import argparse
import os
import statistics
import tempfile
import time
from pathlib import Path

import torch

from store.records import Document
from summarize.methods.seq2seq.abstractive import Seq2SeqSummarizer
from summarize.reading.split import split_document

DEMO_ARCHIVE = Path(__file__).resolve().parent.parent / "demo_archive"
T5_SMALL = dict(
    vocab_size=32128, d_model=512, d_ff=2048, d_kv=64, num_heads=8, num_layers=6, num_decoder_layers=6
)
WINDOW = 512
BEAMS = 4
GROUP = 8  # documents per turn; also the batch size of the method's configurations


def load_documents(limit: int) -> tuple[list[Document], str]:
    """The demo archive's .md and .txt reports (identical texts once), else ACLSum."""
    from summarize.reading.ingest import IngestProblem, RecordFields, iter_archive

    documents, texts = [], set()
    if DEMO_ARCHIVE.is_dir():
        files = sorted(
            p
            for p in DEMO_ARCHIVE.rglob("*")
            if p.suffix in (".md", ".txt") and not p.name.endswith(".summary.txt") and "awkward" not in p.parts
        )
        for item in iter_archive([str(p) for p in files], RecordFields()):
            if isinstance(item, IngestProblem) or item.text in texts or len(item.text.split()) < 100:
                continue
            texts.add(item.text)
            documents.append(item)
    if documents:
        return documents[:limit], "demo archive (.md, .txt)"
    from summarize.reading.datasets import load_aclsum

    return load_aclsum("test", limit=limit), "ACLSum test papers"


def build_checkpoint(directory: Path, texts: list[str]) -> Path:
    """A t5-small-sized T5 with random weights and a BPE tokenizer, saved as a
    checkpoint directory that the method loads through its normal path."""
    from tokenizers import Tokenizer, decoders, models, pre_tokenizers, processors, trainers
    from transformers import PreTrainedTokenizerFast, T5Config, T5ForConditionalGeneration

    special = ["<pad>", "</s>", "<unk>"]
    tokenizer = Tokenizer(models.BPE(unk_token="<unk>"))
    tokenizer.pre_tokenizer = pre_tokenizers.Metaspace()
    tokenizer.decoder = decoders.Metaspace()
    trainer = trainers.BpeTrainer(vocab_size=T5_SMALL["vocab_size"], special_tokens=special, show_progress=False)
    tokenizer.train_from_iterator(texts, trainer)
    tokenizer.post_processor = processors.TemplateProcessing(single="$A </s>", special_tokens=[("</s>", 1)])
    wrapped = PreTrainedTokenizerFast(
        tokenizer_object=tokenizer, pad_token="<pad>", eos_token="</s>", unk_token="<unk>", model_max_length=WINDOW
    )
    # T5 likewise fills its vocabulary with sentinel tokens beyond the SentencePiece
    # ones; ordinary added tokens, so a decoded output re-encodes to the same ids.
    filler = T5_SMALL["vocab_size"] - len(wrapped)
    wrapped.add_tokens([f"<extra_id_{i}>" for i in range(filler)])
    torch.manual_seed(0)
    config = T5Config(**T5_SMALL, pad_token_id=0, eos_token_id=1, decoder_start_token_id=0)
    T5ForConditionalGeneration(config).save_pretrained(directory, safe_serialization=True)
    wrapped.save_pretrained(directory)
    return directory


def load_plain(model_dir: Path):
    """The model and tokenizer as a first script would load them."""
    from transformers import AutoModelForSeq2SeqLM, AutoTokenizer

    tokenizer = AutoTokenizer.from_pretrained(model_dir, local_files_only=True)
    model = AutoModelForSeq2SeqLM.from_pretrained(model_dir, local_files_only=True)
    return model, tokenizer


def run_naive(model, tokenizer, documents: list[Document], new_tokens: int) -> tuple[float, list[int]]:
    """One document at a time, as a first script would do it."""
    lengths = []
    started = time.perf_counter()
    for document in documents:
        inputs = tokenizer("summarize: " + document.text, truncation=True, max_length=WINDOW, return_tensors="pt")
        lengths.append(int(inputs["input_ids"].shape[1]))
        output = model.generate(
            **inputs, num_beams=BEAMS, min_new_tokens=new_tokens, max_new_tokens=new_tokens,
            no_repeat_ngram_size=3, length_penalty=1.0, early_stopping=True,
        )
        tokenizer.decode(output[0], skip_special_tokens=True)
    return time.perf_counter() - started, lengths


def tool(model_dir: Path, documents: list[Document], new_tokens: int, threads: int, **settings) -> Seq2SeqSummarizer:
    summarizer = Seq2SeqSummarizer(
        str(model_dir), min_new_tokens=new_tokens, max_new_tokens=new_tokens, threads=threads, **settings
    )
    summarizer.fit([d.text for d in documents]).load()
    return summarizer


def run_tool(summarizer: Seq2SeqSummarizer, items) -> tuple[float, list]:
    started = time.perf_counter()
    results = []
    size = summarizer.batch_documents
    for first in range(0, len(items), size):
        results.extend(summarizer.summarize_many(items[first : first + size]))
    seconds = time.perf_counter() - started
    failures = [r for r in results if isinstance(r, Exception)]
    if failures:
        raise RuntimeError(f"{len(failures)} documents failed, first: {failures[0]}")
    return seconds, results


def token_agreement(tokenizer, reference: list, other: list) -> tuple[float, float, float]:
    """Position-wise agreement of output tokens, share of identical outputs, and the
    mean position of the first differing token among outputs that differ (None when
    all are identical)."""
    same = total = identical = 0
    first_difference = []
    for a, b in zip(reference, other):
        ids_a = tokenizer(a.text, add_special_tokens=False)["input_ids"]
        ids_b = tokenizer(b.text, add_special_tokens=False)["input_ids"]
        length = max(len(ids_a), len(ids_b))
        matches = [x == y for x, y in zip(ids_a, ids_b)] + [False] * (length - min(len(ids_a), len(ids_b)))
        same += sum(matches)
        total += length
        if ids_a == ids_b:
            identical += 1
        else:
            first_difference.append(matches.index(False))
    return same / total, identical / len(reference), statistics.mean(first_difference) if first_difference else None


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--documents", type=int, default=20)
    parser.add_argument("--new-tokens", type=int, default=60)
    parser.add_argument("--threads", type=int, default=2)
    parser.add_argument("--rounds", type=int, default=3, help="repeat every configuration; the best round counts")
    args = parser.parse_args(argv)
    from transformers.utils import logging as hf_logging

    hf_logging.disable_progress_bar()

    documents, source = load_documents(args.documents)
    items = [(document, split_document(document)) for document in documents]
    default_threads = torch.get_num_threads()
    with tempfile.TemporaryDirectory() as folder:
        model_dir = build_checkpoint(Path(folder), [d.text for d in documents])
        beam = tool(model_dir, documents, args.new_tokens, args.threads, num_beams=BEAMS, quantize=False,
                    batch_size=GROUP, no_repeat_ngram_size=3, length_penalty=1.0, early_stopping=True)
        greedy = tool(model_dir, documents, args.new_tokens, args.threads, num_beams=1, quantize=False,
                      batch_size=GROUP, no_repeat_ngram_size=3)
        fast = tool(model_dir, documents, args.new_tokens, args.threads, profile="fast", no_repeat_ngram_size=3)
        plain = load_plain(model_dir)
        configurations = (("tool", beam), ("greedy", greedy), ("fast", fast))
        # Configurations take turns on each group of documents, so a change in the
        # machine's load during the run falls on all of them alike.
        groups = [list(range(k, min(k + GROUP, len(items)))) for k in range(0, len(items), GROUP)]
        seconds = {name: [[] for _ in groups] for name in ("naive", "tool", "greedy", "fast")}
        outputs: dict[str, list] = {name: [None] * len(items) for name, _ in configurations}
        naive_lengths = []
        load_before = os.getloadavg()[0]
        for _ in range(args.rounds):
            for number, group in enumerate(groups):
                elapsed, lengths = run_naive(*plain, [documents[i] for i in group], args.new_tokens)
                seconds["naive"][number].append(elapsed)
                naive_lengths.extend(lengths)
                for name, summarizer in configurations:
                    elapsed, results = run_tool(summarizer, [items[i] for i in group])
                    seconds[name][number].append(elapsed)
                    for i, result in zip(group, results):
                        outputs[name][i] = result
        tool_results, greedy_results, fast_results = outputs["tool"], outputs["greedy"], outputs["fast"]
        agreement, identical, first_difference = token_agreement(
            greedy.checkpoint_.tokenizer, greedy_results, fast_results
        )

    count = len(documents)
    # Best of the rounds for each group: other work on the machine only ever adds time.
    rate = {name: 60 * count / sum(min(times) for times in per_group) for name, per_group in seconds.items()}
    tool_lengths = [n for r in tool_results for n in r.details["input_tokens"]]
    rows = [
        ("naive", f"one at a time, fp32, {BEAMS} beams, no inference_mode, {default_threads} threads (default)", "naive"),
        ("tool, same settings", f"sorted batches of 8, fp32, {BEAMS} beams, inference_mode, {args.threads} threads", "tool"),
        ("tool, greedy fp32", f"sorted batches of 8, fp32, greedy, {args.threads} threads", "greedy"),
        ("tool, fast profile", f"sorted batches of 8, int8 linear layers, greedy, {args.threads} threads", "fast"),
    ]
    print(f"{count} documents from the {source}; mean input {statistics.mean(naive_lengths):.0f} tokens (naive, truncated) "
          f"and {statistics.mean(tool_lengths):.0f} tokens (tool, salient sentences); {args.new_tokens} new tokens each; "
          f"t5-small dimensions, random weights; torch {torch.__version__}; best of {args.rounds} round(s) per group of "
          f"{GROUP} documents; load average {load_before:.1f} before, {os.getloadavg()[0]:.1f} after\n")
    print("| configuration | how | documents / minute | speed-up over naive |")
    print("|---|---|---:|---:|")
    for label, how, key in rows:
        print(f"| {label} | {how} | {rate[key]:.1f} | {rate[key] / rate['naive']:.1f}x |")
    where = f", first difference at token {first_difference:.1f} on average where they differ" if first_difference is not None else ""
    print(
        f"\nint8 against fp32 greedy: {100 * agreement:.1f}% of output tokens agree position by position, "
        f"{100 * identical:.0f}% of outputs identical{where}."
    )


if __name__ == "__main__":
    main()
