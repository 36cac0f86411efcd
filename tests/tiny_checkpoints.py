"""Tiny encoder-decoder checkpoints built on the spot, in the Hugging Face layout a
real checkpoint has (config.json, model.safetensors, tokenizer.json...).

The tokenizer is a byte-pair encoding (Sennrich et al. 2016) trained with the
``tokenizers`` library on the invented report text below, with SentencePiece-style
word boundaries (Metaspace) as T5 and PEGASUS use. Models get small random weights
from a fixed seed. Builders skip work when the directory is already complete, so a
session-scoped fixture in each test module can share them.
"""

from __future__ import annotations

from pathlib import Path

# Invented report text (no real places, organisations or people).
REPORT_TEXT = [
    "The Brindlemoor Reservoir spillway was inspected on 3 March 2025 by the Tollcaster Water Board.",
    "Seepage at the east toe drain measured 1,200 litres per day, up 12.5% on the previous year.",
    "The crest road showed two transverse cracks near chainage 140, each under 5 mm wide.",
    "Instrumentation readings from piezometers P-101 to P-108 were within their alarm limits.",
    "The outlet valve tower ladder is corroded and must be replaced before the winter season.",
    "Vegetation on the downstream face has been cut back as requested in the last report.",
    "Inspector Maren Oakhurst recommends a follow-up visit after the next heavy rainfall.",
    "Repairs to the wave wall were estimated at 48,000 and scheduled for the summer.",
    "The gauge house roof leaks and the data logger was moved to a dry cabinet.",
    "Colour codes: red means urgent, amber means monitor, green means no action needed.",
    "The Harrow Point pumping station ran on standby generators for six hours in January.",
    "Line 2 track geometry was surveyed over 14 km with a trolley-mounted recorder.",
]
SPECIAL_TOKENS = ["<pad>", "</s>", "<unk>", "<s>"]  # ids 0..3, T5's pad/eos/unk order
PAD, EOS, UNK, BOS = 0, 1, 2, 3


def _complete(directory: Path, *names: str) -> bool:
    return all((directory / name).is_file() for name in names)


def train_tokenizer(vocab_size: int = 400, with_bos: bool = False, extra_text: list[str] | None = None):
    """A BPE tokenizer over ``REPORT_TEXT``; inputs end in ``</s>`` (and start with
    ``<s>`` when ``with_bos``, as BART's do)."""
    from tokenizers import Tokenizer, decoders, models, pre_tokenizers, processors, trainers

    tokenizer = Tokenizer(models.BPE(unk_token="<unk>"))
    tokenizer.pre_tokenizer = pre_tokenizers.Metaspace()
    tokenizer.decoder = decoders.Metaspace()
    alphabet = list("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789.,:;%-'()£$/")
    trainer = trainers.BpeTrainer(
        vocab_size=vocab_size, special_tokens=SPECIAL_TOKENS, initial_alphabet=alphabet, show_progress=False
    )
    tokenizer.train_from_iterator(REPORT_TEXT + (extra_text or []), trainer)
    if with_bos:
        template = processors.TemplateProcessing(
            single="<s> $A </s>", pair="<s> $A </s> $B </s>", special_tokens=[("<s>", BOS), ("</s>", EOS)]
        )
    else:
        template = processors.TemplateProcessing(single="$A </s>", pair="$A </s> $B </s>", special_tokens=[("</s>", EOS)])
    tokenizer.post_processor = template
    return tokenizer


def save_tokenizer(tokenizer, directory: Path, model_max_length: int, with_bos: bool = False) -> None:
    from transformers import PreTrainedTokenizerFast

    extra = {"bos_token": "<s>"} if with_bos else {}
    wrapped = PreTrainedTokenizerFast(
        tokenizer_object=tokenizer,
        pad_token="<pad>",
        eos_token="</s>",
        unk_token="<unk>",
        model_max_length=model_max_length,
        **extra,
    )
    wrapped.save_pretrained(directory)


def t5_config(vocab_size: int, **overrides):
    from transformers import T5Config

    settings = dict(
        vocab_size=vocab_size,
        d_model=32,
        d_ff=64,
        d_kv=8,
        num_heads=4,
        num_layers=2,
        num_decoder_layers=2,
        pad_token_id=PAD,
        eos_token_id=EOS,
        decoder_start_token_id=PAD,
    )
    settings.update(overrides)
    return T5Config(**settings)


def build_t5(directory: Path, model_max_length: int = 64, seed: int = 7) -> Path:
    """A tiny T5 (2+2 layers, d_model 32) with a BPE tokenizer, safetensors weights."""
    import torch
    from transformers import T5ForConditionalGeneration

    if _complete(directory, "config.json", "model.safetensors", "tokenizer.json"):
        return directory
    tokenizer = train_tokenizer()
    torch.manual_seed(seed)
    model = T5ForConditionalGeneration(t5_config(tokenizer.get_vocab_size()))
    model.save_pretrained(directory, safe_serialization=True)
    save_tokenizer(tokenizer, directory, model_max_length)
    return directory


# BART and PEGASUS share one layout: 1+1 layers, d_model 32, 64 positions.
_TINY_BART_LIKE = dict(
    d_model=32,
    encoder_layers=1,
    decoder_layers=1,
    encoder_attention_heads=4,
    decoder_attention_heads=4,
    encoder_ffn_dim=64,
    decoder_ffn_dim=64,
    max_position_embeddings=64,
)


def build_bart(directory: Path, model_max_length: int = 64, seed: int = 11) -> Path:
    """A tiny BART (1+1 layers, d_model 32, 64 positions) with a BPE tokenizer."""
    import torch
    from transformers import BartConfig, BartForConditionalGeneration

    if _complete(directory, "config.json", "model.safetensors", "tokenizer.json"):
        return directory
    tokenizer = train_tokenizer(with_bos=True)
    torch.manual_seed(seed)
    config = BartConfig(
        vocab_size=tokenizer.get_vocab_size(),
        **_TINY_BART_LIKE,
        pad_token_id=PAD,
        eos_token_id=EOS,
        bos_token_id=BOS,
        decoder_start_token_id=EOS,
        forced_eos_token_id=EOS,
    )
    model = BartForConditionalGeneration(config)
    model.save_pretrained(directory, safe_serialization=True)
    save_tokenizer(tokenizer, directory, model_max_length, with_bos=True)
    return directory


def build_pegasus(directory: Path, model_max_length: int = 64, seed: int = 5) -> Path:
    """A tiny PEGASUS (1+1 layers, d_model 32, 64 sinusoidal positions)."""
    import torch
    from transformers import PegasusConfig, PegasusForConditionalGeneration

    if _complete(directory, "config.json", "model.safetensors", "tokenizer.json"):
        return directory
    tokenizer = train_tokenizer()
    torch.manual_seed(seed)
    config = PegasusConfig(
        vocab_size=tokenizer.get_vocab_size(),
        **_TINY_BART_LIKE,
        pad_token_id=PAD,
        eos_token_id=EOS,
        decoder_start_token_id=PAD,
        forced_eos_token_id=EOS,
    )
    PegasusForConditionalGeneration(config).save_pretrained(directory, safe_serialization=True)
    save_tokenizer(tokenizer, directory, model_max_length)
    return directory


def build_gpt2(directory: Path) -> Path:
    """A tiny GPT-2: a decoder-only model, which the seq2seq method must refuse."""
    import torch
    from transformers import GPT2Config, GPT2LMHeadModel

    if _complete(directory, "config.json", "model.safetensors", "tokenizer.json"):
        return directory
    tokenizer = train_tokenizer()
    torch.manual_seed(3)
    config = GPT2Config(vocab_size=tokenizer.get_vocab_size(), n_embd=32, n_layer=1, n_head=2, n_positions=64)
    GPT2LMHeadModel(config).save_pretrained(directory, safe_serialization=True)
    save_tokenizer(tokenizer, directory, 64)
    return directory


# A learnable mapping for a tiny T5: each colour has a code number that the report
# never states, so a model that learned it writes a number absent from its source.
COLOUR_CODES = {"red": 41, "amber": 17, "green": 63, "blue": 28, "grey": 85, "white": 52}
COLOUR_PREFIX = "summarize: "


def colour_report(colour: str) -> str:
    return f"The valve tower was painted {colour} in spring."


def colour_summary(colour: str) -> str:
    return f"The valve tower is {colour}, code {COLOUR_CODES[colour]}."


def build_trained_t5(directory: Path, steps: int = 200, seed: int = 0) -> tuple[Path, list[float]]:
    """A tiny T5 (d_model 64) trained with AdamW on ``colour_report -> colour_summary``,
    with the T5 task prefix in its inputs. Returns the directory and the loss per step
    (kept in ``training_losses.json`` beside the model)."""
    import json

    import torch
    from transformers import PreTrainedTokenizerFast, T5ForConditionalGeneration

    if _complete(directory, "config.json", "model.safetensors", "tokenizer.json", "training_losses.json"):
        return directory, json.loads((directory / "training_losses.json").read_text())
    sources = [COLOUR_PREFIX + colour_report(colour) for colour in COLOUR_CODES]
    targets = [colour_summary(colour) for colour in COLOUR_CODES]
    tokenizer = train_tokenizer(extra_text=sources + targets)
    wrapped = PreTrainedTokenizerFast(
        tokenizer_object=tokenizer, pad_token="<pad>", eos_token="</s>", unk_token="<unk>", model_max_length=64
    )
    torch.manual_seed(seed)
    model = T5ForConditionalGeneration(t5_config(tokenizer.get_vocab_size(), d_model=64, d_ff=128, d_kv=16))
    inputs = wrapped(sources, padding=True, return_tensors="pt")
    labels = wrapped(targets, padding=True, return_tensors="pt")["input_ids"]
    labels[labels == PAD] = -100  # padding takes no part in the loss
    optimizer = torch.optim.AdamW(model.parameters(), lr=3e-3)
    model.train()
    losses = []
    for _ in range(steps):
        loss = model(**inputs, labels=labels).loss
        loss.backward()
        optimizer.step()
        optimizer.zero_grad()
        losses.append(loss.item())
    model.eval()
    model.save_pretrained(directory, safe_serialization=True)
    wrapped.save_pretrained(directory)
    (directory / "training_losses.json").write_text(json.dumps(losses))
    return directory, losses
