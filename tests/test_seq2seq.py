"""The seq2seq method on tiny checkpoints built here: batching, input windows,
quantization, provenance, flags, and a whole run into the store.

Tiny models run with one thread: their matrices are too small to gain from two, and
on a busy machine two threads mostly wait for each other.
"""

from __future__ import annotations

import json
import sqlite3

import pytest
import torch
from tiny_checkpoints import (
    COLOUR_CODES,
    REPORT_TEXT,
    colour_report,
    colour_summary,
)

from store.records import Document, Span
from summarize.methods.seq2seq.abstractive import Seq2SeqSummarizer
from summarize.methods.seq2seq.generation import GenerationSettings, generate_texts
from summarize.methods.seq2seq.models import load_checkpoint
from summarize.methods.seq2seq.windowing import TokenCounter
from summarize.reading.split import split_document
from summarize.runs.runner import run_archive

GREEDY = dict(num_beams=1, min_new_tokens=6, max_new_tokens=12, threads=1)


def _document(key: str, text: str) -> Document:
    return Document(record_key=key, path=f"{key}.txt", text=text, format="txt", sha256=key, size=len(text))


def _archive(count: int = 4) -> list[tuple[Document, object]]:
    """Documents of 1..count paragraphs of invented report sentences."""
    items = []
    for k in range(count):
        paragraphs = [
            " ".join(REPORT_TEXT[(k + 3 * p + i) % len(REPORT_TEXT)] for i in range(3)) for p in range(k + 1)
        ]
        document = _document(f"report-{k}", "\n\n".join(paragraphs))
        items.append((document, split_document(document)))
    return items


def _fitted(model_dir, items, **settings) -> Seq2SeqSummarizer:
    return Seq2SeqSummarizer(str(model_dir), **{**GREEDY, **settings}).fit([d.text for d, _ in items])


# Batching -------------------------------------------------------------------------------


@pytest.mark.parametrize("builder", ["tiny_t5", "tiny_bart", "tiny_pegasus"])
def test_batched_greedy_output_equals_one_at_a_time(builder, request):
    # External check: transformers' own generate()
    checkpoint = load_checkpoint(request.getfixturevalue(builder))
    torch.set_num_threads(1)
    texts = ["summarize: " + " ".join(REPORT_TEXT[n].split()[: 3 + 2 * n]) for n in range(6)]  # lengths differ
    settings = GenerationSettings(
        num_beams=1, min_new_tokens=5, max_new_tokens=10, no_repeat_ngram_size=0, length_penalty=1.0, early_stopping=True
    )
    batched = generate_texts(checkpoint.model, checkpoint.tokenizer, texts, settings, batch_size=4)
    single = generate_texts(checkpoint.model, checkpoint.tokenizer, texts, settings, batch_size=1)
    assert [g.text for g in batched] == [g.text for g in single]
    # Reference: transformers' own greedy generate, one unpadded input at a time.
    for text, generated in zip(texts, batched):
        encoded = checkpoint.tokenizer(text, return_tensors="pt")
        with torch.no_grad():
            ids = checkpoint.model.generate(**encoded, do_sample=False, num_beams=1, min_new_tokens=5, max_new_tokens=10)
        assert generated.text == checkpoint.tokenizer.decode(ids[0], skip_special_tokens=True).strip()
        assert generated.input_tokens == encoded["input_ids"].shape[1]


@pytest.mark.parametrize("builder", ["tiny_t5", "tiny_bart", "tiny_pegasus"])
def test_beam_search_keeps_transformers_results(builder, request):
    # External check: transformers' own beam search
    """Sharing encoder work among beams must not change beam search output."""
    checkpoint = load_checkpoint(request.getfixturevalue(builder))
    torch.set_num_threads(1)
    texts = [" ".join(REPORT_TEXT[n].split()[: 4 + 3 * n]) for n in range(4)]  # lengths differ, all fit 64 positions
    settings = GenerationSettings(
        num_beams=3, min_new_tokens=4, max_new_tokens=9, no_repeat_ngram_size=0, length_penalty=1.0, early_stopping=True
    )
    ours = generate_texts(checkpoint.model, checkpoint.tokenizer, texts, settings, batch_size=4)
    # Reference: transformers' beam search with its own cache, same padded batch.
    encoded = checkpoint.tokenizer(texts, padding=True, return_tensors="pt")
    order = sorted(range(len(texts)), key=lambda i: -int(encoded["attention_mask"][i].sum()))
    with torch.no_grad():
        ids = checkpoint.model.generate(
            input_ids=encoded["input_ids"][order],
            attention_mask=encoded["attention_mask"][order],
            generation_config=settings.generation_config(checkpoint.model.generation_config),
        )
    reference = checkpoint.tokenizer.batch_decode(ids, skip_special_tokens=True)
    assert [ours[i].text for i in order] == [text.strip() for text in reference]


# Input windows --------------------------------------------------------------------------


def test_select_mode_respects_the_window_and_records_what_was_read(tiny_t5):
    items = _archive(4)
    summarizer = _fitted(tiny_t5, items)
    long_document, segmentation = items[-1]
    summary = summarizer.summarize(long_document, segmentation)
    details = summary.details
    window = summarizer.get_params()["input_window"]
    assert window == 64
    counter = TokenCounter(summarizer.checkpoint_.tokenizer, "summarize: ")
    # The whole document does not fit, so only part of it was read.
    assert counter.input_tokens(long_document.text) > window
    assert details["input_tokens"] and all(n <= window for n in details["input_tokens"])
    assert details["input_sentences"] < details["document_sentences"] == len(segmentation.sentences)
    document_chars = sum(len(s) for s in segmentation.sentences)
    assert details["document_chars"] == document_chars
    assert 0 < details["input_chars"] < document_chars
    assert details["coverage"] == pytest.approx(details["input_chars"] / document_chars, abs=1e-6)
    assert details["long_mode"] == "select"
    # The most salient sentence (TF-IDF centroid cosine, the tfidf method's scores) is read.
    scores, _ = summarizer.ranker_.sentence_scores(long_document, segmentation)
    best = segmentation.sentences[int(scores.argmax())]
    plan = summarizer._plan(long_document, segmentation)
    assert best in plan.seen[0].spans
    assert counter.input_tokens(plan.seen[0].text) == details["input_tokens"][0]


def test_short_document_is_read_whole(tiny_t5):
    document = _document("short", REPORT_TEXT[2] + "\n\n" + REPORT_TEXT[5])
    items = [(document, split_document(document))]
    summary = _fitted(tiny_t5, items).summarize(*items[0])
    assert summary.details["coverage"] == 1.0
    assert summary.details["input_sentences"] == summary.details["document_sentences"]


def test_max_input_tokens_narrows_the_window(tiny_t5):
    items = _archive(2)
    summarizer = _fitted(tiny_t5, items, max_input_tokens=24)
    summary = summarizer.summarize(*items[1])
    assert summarizer.get_params()["input_window"] == 24
    assert all(n <= 24 for n in summary.details["input_tokens"])


def test_chunks_mode_reads_every_sentence(tiny_t5):
    items = _archive(4)
    summarizer = _fitted(tiny_t5, items, long_mode="chunks")
    summary = summarizer.summarize(*items[-1])
    details = summary.details
    assert details["coverage"] == 1.0
    assert details["input_sentences"] == details["document_sentences"]
    assert details["model_inputs"] > 1 and len(details["input_tokens"]) == details["model_inputs"]
    assert all(n <= 64 for n in details["input_tokens"])
    assert summary.text


def test_a_sentence_longer_than_the_window_is_cut_and_says_so(tiny_bart):
    long_sentence = " ".join(REPORT_TEXT).replace(".", ",")[:-1] + "."
    document = _document("one-long-sentence", long_sentence)
    segmentation = split_document(document)
    assert len(segmentation.sentences) == 1
    summarizer = _fitted(tiny_bart, [(document, segmentation)])
    summary = summarizer.summarize(document, segmentation)
    assert summary.details["input_sentences"] == 1
    assert 0 < summary.details["coverage"] < 1
    assert all(n <= 64 for n in summary.details["input_tokens"])


# Settings -------------------------------------------------------------------------------


def test_quantized_path_runs_and_is_recorded(tiny_t5):
    items = _archive(2)
    plain = _fitted(tiny_t5, items)
    quantized = _fitted(tiny_t5, items, quantize=True)
    summary = quantized.summarize(*items[1])
    assert quantized.get_params()["quantize"] == "int8-dynamic-linear"
    assert plain.get_params()["quantize"] is None
    assert summary.params["quantize"] == "int8-dynamic-linear" and summary.details["quantized"]
    modules = list(quantized.checkpoint_.model.modules())
    dynamic = torch.ao.nn.quantized.dynamic.Linear
    assert not any(type(m) is torch.nn.Linear for m in modules)
    assert sum(isinstance(m, dynamic) for m in modules) == sum(
        type(m) is torch.nn.Linear for m in plain.checkpoint_.model.modules()
    )
    assert summary.param_hash != plain.summarize(*items[1]).param_hash
    assert summary.details["generated_tokens"] >= GREEDY["min_new_tokens"]


def test_profiles_and_explicit_settings(tiny_t5):
    fast = Seq2SeqSummarizer(str(tiny_t5), profile="fast").load()
    assert fast.generation_.num_beams == 1 and fast.quantized_ and fast.batch_size_ == 8
    assert fast.generation_.max_new_tokens == 80
    quality = Seq2SeqSummarizer(str(tiny_t5)).load()
    assert quality.generation_.num_beams == 4 and not quality.quantized_
    overridden = Seq2SeqSummarizer(str(tiny_t5), profile="fast", num_beams=2, quantize=False).load()
    assert overridden.generation_.num_beams == 2 and not overridden.quantized_
    params = overridden.get_params()
    assert set(params["generation"]) == {
        "num_beams", "min_new_tokens", "max_new_tokens", "no_repeat_ngram_size", "length_penalty", "early_stopping"
    }
    assert "path" not in params["model"] and overridden.runtime_settings()["model_path"] == str(tiny_t5.resolve())
    # A profile's minimum yields to a shorter explicit maximum; an explicit minimum is checked.
    assert Seq2SeqSummarizer(str(tiny_t5), max_new_tokens=8).load().generation_.min_new_tokens == 8
    with pytest.raises(ValueError, match="min_new_tokens"):
        Seq2SeqSummarizer(str(tiny_t5), min_new_tokens=30, max_new_tokens=10).load()


def test_t5_gets_its_task_prefix_and_bart_none(tiny_t5, tiny_bart):
    # Raffel et al. 2020 train T5 with "summarize: " in front of the input; BART and
    # PEGASUS take the bare text (Lewis et al. 2020; Zhang et al. 2020).
    assert Seq2SeqSummarizer(str(tiny_t5)).get_params()["prefix"] == "summarize: "
    assert Seq2SeqSummarizer(str(tiny_bart)).get_params()["prefix"] == ""


# What the trained model writes: mapping learned, provenance, flags -----------------------


@pytest.mark.slow
def test_tiny_t5_learns_a_mapping(trained_t5):
    # External check: common practice, no published source (a model trained on a mapping learns it)
    model_dir, losses = trained_t5
    assert losses[-1] < 0.1 * losses[0]
    checkpoint = load_checkpoint(model_dir)
    settings = GenerationSettings(
        num_beams=1, min_new_tokens=1, max_new_tokens=20, no_repeat_ngram_size=0, length_penalty=1.0, early_stopping=True
    )
    texts = ["summarize: " + colour_report(colour) for colour in COLOUR_CODES]
    outputs = generate_texts(checkpoint.model, checkpoint.tokenizer, texts, settings, batch_size=3)
    assert [g.text for g in outputs] == [colour_summary(colour) for colour in COLOUR_CODES]


@pytest.mark.slow
def test_generated_sentences_link_to_valid_source_spans_and_flag_the_invented_number(trained_t5):
    model_dir, _ = trained_t5
    items = []
    for colour in ("red", "amber"):
        document = _document(f"tower-{colour}", colour_report(colour))
        items.append((document, split_document(document)))
    summarizer = _fitted(model_dir, items, min_new_tokens=1, max_new_tokens=20)
    summaries = summarizer.summarize_many(items)
    for (document, segmentation), summary in zip(items, summaries):
        colour = document.record_key.split("-")[1]
        assert summary.text == colour_summary(colour)
        for sentence in summary.sentences:
            assert sentence.sources, "the generated sentence shares words with its source"
            for link in sentence.sources:
                assert 0 <= link.span.start < link.span.end <= len(document.text)
                assert link.span in segmentation.sentences
                assert 0 < link.similarity <= 1
        code = str(COLOUR_CODES[colour])
        assert [(f.kind, f.detail, f.position) for f in summary.flags] == [("unsupported-number", code, 0)]


def test_a_failing_document_does_not_stop_the_others(tiny_t5, monkeypatch):
    import summarize.methods.seq2seq.generation as generation

    items = _archive(3)
    real = generation._batch_generate
    poisoned = items[1][0].text.split(".")[0]

    def failing(model, encoded, config, pad_id):
        tokenizer = summarizer.checkpoint_.tokenizer
        if any(poisoned in tokenizer.decode(ids) for ids in encoded):
            raise RuntimeError("simulated out-of-memory")
        return real(model, encoded, config, pad_id)

    summarizer = _fitted(tiny_t5, items, batch_size=3)
    monkeypatch.setattr(generation, "_batch_generate", failing)
    results = summarizer.summarize_many(items)
    assert isinstance(results[1], Exception) and "simulated out-of-memory" in str(results[1])
    assert all(r.text for i, r in enumerate(results) if i != 1)


# A whole run into the store -------------------------------------------------------------


@pytest.mark.slow
def test_run_archive_stores_seq2seq_summaries_with_sources_and_flags(trained_t5, tmp_path):
    model_dir, _ = trained_t5
    archive = tmp_path / "archive"
    archive.mkdir()
    for colour in ("red", "green", "white"):
        (archive / f"tower_{colour}.txt").write_text(colour_report(colour) + "\n", encoding="utf-8")
    db_path = tmp_path / "store.sqlite"
    options = {"model": str(model_dir), "num_beams": 2, "min_new_tokens": 1, "max_new_tokens": 20, "threads": 1}
    report = run_archive([archive], str(db_path), methods=["lead", "seq2seq"], seq2seq_options=options)
    assert report.failed_summaries == [] and report.summaries_added == 6

    db = sqlite3.connect(db_path)
    rows = db.execute(
        "select s.id, s.text, s.params, s.details, d.text from summaries s join documents d on d.id = s.document_id "
        "where s.method = 'seq2seq' order by d.record_key"
    ).fetchall()
    assert len(rows) == 3
    for summary_id, text, params, details, source in rows:
        colour = next(c for c in COLOUR_CODES if f" {c} " in source)
        assert text == colour_summary(colour)
        sources = db.execute("select start, end, similarity from sentence_sources where summary_id = ?", [summary_id]).fetchall()
        assert sources and all(0 <= start < end <= len(source) and 0 < sim <= 1 for start, end, sim in sources)
        flags = db.execute("select kind, detail, position from flags where summary_id = ?", [summary_id]).fetchall()
        assert flags == [("unsupported-number", str(COLOUR_CODES[colour]), 0)]
        assert json.loads(details)["coverage"] == 1.0
        assert json.loads(params)["generation"]["num_beams"] == 2

    config = json.loads(db.execute("select config from runs order by id desc limit 1").fetchone()[0])
    seq2seq = config["methods"]["seq2seq"]
    assert seq2seq["generation"] == {
        "num_beams": 2, "min_new_tokens": 1, "max_new_tokens": 20,
        "no_repeat_ngram_size": 3, "length_penalty": 1.0, "early_stopping": True,
    }
    assert seq2seq["model"]["model_type"] == "t5"
    assert len(seq2seq["model"]["weights_sha256"]["model.safetensors"]) == 64
    assert config["runtime"]["seq2seq"]["threads"] == 1
    db.close()

    # A rerun with the same model and settings finds everything stored.
    again = run_archive([archive], str(db_path), methods=["lead", "seq2seq"], seq2seq_options=options)
    assert again.summaries_added == 0


@pytest.mark.slow
def test_spans_in_the_store_slice_back_to_source_sentences(trained_t5, tmp_path):
    model_dir, _ = trained_t5
    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "tower.txt").write_text(colour_report("blue") + "\n", encoding="utf-8")
    db_path = tmp_path / "store.sqlite"
    run_archive(
        [archive], str(db_path), methods=["seq2seq"],
        seq2seq_options={"model": str(model_dir), "num_beams": 1, "min_new_tokens": 1, "max_new_tokens": 20, "threads": 1},
    )
    db = sqlite3.connect(db_path)
    (text,) = db.execute("select text from documents").fetchone()
    spans = db.execute("select start, end from sentence_sources").fetchall()
    stored = {Span(s, e) for s, e in db.execute("select start, end from document_sentences").fetchall()}
    assert spans and all(Span(s, e) in stored and text[s:e].strip() for s, e in spans)
    db.close()


def test_an_unusable_model_stops_run_archive_before_the_store_is_opened(tmp_path):
    from summarize.methods.seq2seq.models import ModelLoadError

    archive = tmp_path / "archive"
    archive.mkdir()
    (archive / "tower.txt").write_text(colour_report("red") + "\n", encoding="utf-8")
    db_path = tmp_path / "store.sqlite"
    with pytest.raises(ModelLoadError):
        run_archive([archive], str(db_path), methods=["lead", "seq2seq"], seq2seq_options={"model": str(tmp_path / "none")})
    assert not db_path.exists()
