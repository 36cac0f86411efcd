"""Batched text generation on CPU: length-sorted batches, padding with attention
masks, optional int8 weights.

Inputs are sorted by token length and cut into batches of ``batch_size``, so each
batch pads little. Padding is on the right with an attention mask, which the encoder
and the decoder's cross-attention both honour: a padded input yields the same greedy
output as the same input alone. Generation runs under ``torch.inference_mode()``.

Beam search (``num_beams > 1``) runs every input as ``num_beams`` rows. All beams of
one input share the same encoder states, and beams never move between inputs, so two
costs of the library's beam search buy nothing and are avoided here, with identical
outputs:

* the encoder and the cross-attention keys and values are computed once per input,
  then copied to its beams (the library computes the keys and values once per beam);
* the cross-attention part of the cache is not reordered at every step to follow the
  surviving beams (:class:`BeamSharedCrossAttentionCache`), which on CPU was most of
  the per-step cost for long inputs.
"""

from __future__ import annotations

import time
import warnings
from collections.abc import Sequence
from dataclasses import asdict, dataclass

import torch
from transformers import GenerationConfig
from transformers.cache_utils import DynamicCache, EncoderDecoderCache


@dataclass(frozen=True)
class GenerationSettings:
    """Decoding settings (greedy when ``num_beams == 1``, else beam search; no sampling,
    so output is deterministic). ``length_penalty`` divides a beam's log-probability by
    ``length ** length_penalty``; ``early_stopping`` ends beam search once
    ``num_beams`` finished candidates exist; ``no_repeat_ngram_size`` forbids
    repeating any n-gram of that size (Paulus et al. 2018)."""

    num_beams: int
    min_new_tokens: int
    max_new_tokens: int
    no_repeat_ngram_size: int
    length_penalty: float
    early_stopping: bool

    def __post_init__(self) -> None:
        if self.num_beams < 1:
            raise ValueError(f"num_beams must be at least 1, got {self.num_beams}")
        if self.max_new_tokens < 1:
            raise ValueError(f"max_new_tokens must be at least 1, got {self.max_new_tokens}")
        if not 0 <= self.min_new_tokens <= self.max_new_tokens:
            raise ValueError(
                f"min_new_tokens must be in [0, max_new_tokens={self.max_new_tokens}], got {self.min_new_tokens}"
            )

    def as_dict(self) -> dict:
        return asdict(self)

    def generation_config(self, base: GenerationConfig | None) -> GenerationConfig:
        """The checkpoint's generation config with these settings in force; its own
        ``min_length``/``max_length`` are cleared so only ours apply, and the beam-only
        settings are left unset for greedy decoding."""
        config = GenerationConfig.from_dict(base.to_dict()) if base is not None else GenerationConfig()
        beams = self.num_beams > 1
        config.update(
            do_sample=False,
            num_beams=self.num_beams,
            min_new_tokens=self.min_new_tokens,
            max_new_tokens=self.max_new_tokens,
            min_length=None,
            max_length=None,
            no_repeat_ngram_size=self.no_repeat_ngram_size,
            length_penalty=self.length_penalty if beams else None,
            early_stopping=self.early_stopping if beams else None,
            num_return_sequences=1,
        )
        return config


class BeamSharedCrossAttentionCache(EncoderDecoderCache):
    """Encoder-decoder cache whose beam reordering leaves the cross-attention part in
    place (every beam of an input holds the same encoder keys and values)."""

    def reorder_cache(self, beam_idx: torch.LongTensor) -> None:
        self.self_attention_cache.reorder_cache(beam_idx)


def quantize_int8(model: torch.nn.Module) -> torch.nn.Module:
    """Dynamic int8 quantization of every ``nn.Linear``, in place.

    Weights are stored as int8 with one affine scale per tensor; activations are
    quantized per batch at run time and products accumulate in int32 (the integer
    arithmetic of Jacob et al. 2018, as PyTorch's dynamic quantization implements it
    with the fbgemm/onednn kernels). Embeddings and layer norms stay float32. PyTorch
    2.13 still ships this API but marks ``torch.ao.quantization`` deprecated in favour
    of the separate torchao package; the notice is silenced here, not the errors.
    """
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", category=DeprecationWarning)
        warnings.filterwarnings("ignore", message=r".*quantize_per_tensor.*")
        return torch.ao.quantization.quantize_dynamic(model, {torch.nn.Linear}, dtype=torch.qint8, inplace=True)


@dataclass(frozen=True)
class Generated:
    """One output: its text, the token counts in and out, and its share of the time
    of the batch it ran in."""

    text: str
    input_tokens: int
    output_tokens: int
    seconds: float


def _pad_right(encoded: list[list[int]], pad_id: int) -> tuple[torch.Tensor, torch.Tensor]:
    width = max(len(ids) for ids in encoded)
    input_ids = torch.full((len(encoded), width), pad_id, dtype=torch.long)
    attention_mask = torch.zeros((len(encoded), width), dtype=torch.long)
    for row, ids in enumerate(encoded):
        input_ids[row, : len(ids)] = torch.tensor(ids, dtype=torch.long)
        attention_mask[row, : len(ids)] = 1
    return input_ids, attention_mask


def _shared_cross_attention_cache(model, encoder_outputs, attention_mask: torch.Tensor, beams: int, pad_id: int):
    """A cache holding each input's cross-attention keys and values, computed by one
    decoder step on the unexpanded batch and repeated for its beams; the decoder's
    self-attention part starts empty. (The step's own output is discarded, so the
    token it reads does not matter: cross-attention keys and values depend on the
    encoder states alone.)"""
    text_config = model.config.get_text_config(decoder=True)
    warm = EncoderDecoderCache(DynamicCache(config=text_config), DynamicCache(config=text_config))
    start = torch.full((attention_mask.shape[0], 1), pad_id, dtype=torch.long)
    model(encoder_outputs=encoder_outputs, attention_mask=attention_mask, decoder_input_ids=start, cache=warm, use_cache=True)
    cross = warm.cross_attention_cache
    if beams > 1:
        cross.batch_repeat_interleave(beams)
    return BeamSharedCrossAttentionCache(DynamicCache(config=text_config), cross)


def _batch_generate(model, encoded: list[list[int]], config: GenerationConfig, pad_id: int) -> list[list[int]]:
    input_ids, attention_mask = _pad_right(encoded, pad_id)
    with torch.inference_mode():
        encoder_outputs = model.get_encoder()(input_ids=input_ids, attention_mask=attention_mask, return_dict=True)
        cache = _shared_cross_attention_cache(model, encoder_outputs, attention_mask, config.num_beams, pad_id)
        output = model.generate(
            encoder_outputs=encoder_outputs,
            attention_mask=attention_mask,
            generation_config=config,
            cache=cache,
        )
    return output.tolist()


def _output_tokens(ids: list[int], special: set[int]) -> int:
    return sum(1 for token in ids if token not in special)


def generate_texts(
    model,
    tokenizer,
    texts: Sequence[str],
    settings: GenerationSettings,
    batch_size: int,
) -> list[Generated | Exception]:
    """Generate one output per input text, in input order.

    A batch that fails is retried one text at a time, so a failure is charged to the
    text that causes it and the others still get their output.
    """
    if batch_size < 1:
        raise ValueError(f"batch_size must be at least 1, got {batch_size}")
    config = settings.generation_config(getattr(model, "generation_config", None))
    special = set(tokenizer.all_special_ids)
    pad_id = tokenizer.pad_token_id if tokenizer.pad_token_id is not None else model.config.pad_token_id
    if pad_id is None:
        raise ValueError("the tokenizer and the model configuration define no padding token")
    encoded = tokenizer(list(texts))["input_ids"]
    order = sorted(range(len(texts)), key=lambda i: (-len(encoded[i]), i))
    results: list[Generated | Exception | None] = [None] * len(texts)

    def run(indices: list[int]) -> None:
        started = time.perf_counter()
        outputs = _batch_generate(model, [encoded[i] for i in indices], config, pad_id)
        share = (time.perf_counter() - started) / len(indices)
        decoded = tokenizer.batch_decode(outputs, skip_special_tokens=True)
        for i, ids, text in zip(indices, outputs, decoded):
            results[i] = Generated(text.strip(), len(encoded[i]), _output_tokens(ids, special), share)

    for first in range(0, len(order), batch_size):
        batch = order[first : first + batch_size]
        try:
            run(batch)
        except Exception:  # retried one by one below, where the error is kept per text
            for i in batch:
                try:
                    run([i])
                except Exception as error:
                    results[i] = error
    return results
