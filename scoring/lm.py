"""The one wrapper around the packaged causal language model that coverage and fluency share.

``CausalLM`` loads the model lazily (``scoring.models``, once per process and dtype), tokenises
(cached per text), and reads texts in batches:

* ``logprobs(pieces)``: the log-probability of every token of texts given as pieces
  (sentences), each text read in one pass after a beginning-of-text token (fluency's read);
* ``prefix_states(prefixes)``: the key/value cache of each token prefix (prefixes of one
  length run as one batch);
* ``read_after(head, start, rows)``: rows of tokens read after one prefix's cache; for each
  (column, target) asked, the target's log-probability there and whether it is the model's
  top choice (coverage's read of the blanked source after a summary).

Batches are formed by ``scoring.batching.length_batches`` (shortest first, little padding);
the vocabulary layer runs only at the positions whose prediction is read. ``causal_lm(dtype)``
is the shared instance, so both scorers use one tokeniser cache and one model copy.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence

from dataclasses import dataclass

from scoring.base import check_choice, check_positive
from scoring.batching import length_batches
from scoring.models.dtype import DTYPES

@dataclass(frozen=True)
class ModelSettings:
    """How a scorer runs the causal model: its dtype ("auto": bfloat16 where the CPU runs it
    natively, else float32; ``scoring.models.dtype``) and the tokens one batch may hold. The
    configs of the scorers that read the model extend it."""

    dtype: str = "auto"
    batch_tokens: int = 4096

    def __post_init__(self):
        check_choice("dtype", self.dtype, DTYPES)
        check_positive(self, "batch_tokens")


# rows of the vocabulary layer computed at once (49,152 log-probabilities each)
VOCAB_SLICE = 512
BOS = "<|endoftext|>"


class CausalLM:
    """The packaged causal model (SmolLM2-135M) in one dtype, behind batched reads."""

    def __init__(self, dtype: str = "auto", batch_tokens: int = 4096):
        self.dtype = dtype
        self.batch_tokens = batch_tokens

    @functools.cached_property
    def model(self):
        from scoring.models import causal_in_dtype

        return causal_in_dtype(self.dtype)

    @functools.cached_property
    def tokenizer(self):
        from scoring.models import load_causal

        return load_causal().tokenizer

    def describe(self) -> dict[str, str]:
        """The model and dtype a signature records ("auto" resolved to the dtype really used)."""
        from scoring.models import resolve_dtype, short_checksum

        return {"model": f"smollm2-135m@{short_checksum('causal')}", "dtype": resolve_dtype(self.dtype)}

    @functools.lru_cache(maxsize=65536)
    def tokens(self, text: str) -> tuple[int, ...]:
        """Token ids of ``text`` without special tokens (cached: candidates share sentences)."""
        return tuple(self.tokenizer(text, add_special_tokens=False).input_ids)

    def is_space(self, token: int) -> bool:
        """Whether a token decodes to whitespace only."""
        return not self.tokenizer.decode([token]).strip()

    # ------------------------------------------------------------------ whole texts

    def logprobs(self, pieces: list[list[str]]) -> list[list[list[float]]]:
        """For each text given as pieces, the log-probability of every token of every piece,
        read in order after a beginning-of-text token (pieces joined by a space)."""
        import torch

        bos = self.tokenizer.convert_tokens_to_ids(BOS)
        encoded = []
        for text in pieces:
            ids, bounds = [bos], []
            for n, piece in enumerate(text):
                part = self.tokens((" " if n else "") + piece)
                bounds.append((len(ids), len(ids) + len(part)))
                ids.extend(part)
            encoded.append((ids, bounds))
        out: list[list[list[float]] | None] = [None] * len(encoded)
        lengths = [len(ids) for ids, _ in encoded]
        for batch in length_batches(lengths, self.batch_tokens):
            width = max(lengths[i] for i in batch)
            ids = torch.zeros((len(batch), width), dtype=torch.long)
            for row, i in enumerate(batch):
                ids[row, : lengths[i]] = torch.tensor(encoded[i][0])
            # the positions that predict a real token (the padding on the right is never read:
            # the model is causal)
            rows = torch.cat([torch.full((lengths[i] - 1,), row) for row, i in enumerate(batch)])
            cols = torch.cat([torch.arange(lengths[i] - 1) for i in batch])
            with torch.inference_mode():
                hidden = self.model.model(input_ids=ids).last_hidden_state[rows, cols]
            values = self._target_logprobs(hidden, ids[rows, cols + 1]).tolist()
            at = 0
            for i in batch:
                mine = values[at : at + lengths[i] - 1]
                at += lengths[i] - 1
                out[i] = [mine[a - 1 : b - 1] for a, b in encoded[i][1]]
        return out  # type: ignore[return-value]

    # ------------------------------------------------------------------ prefix, then rows

    def prefix_states(self, prefixes: Sequence[Sequence[int]]) -> list[list]:
        """The key/value cache of each prefix, as one (keys, values) pair per layer (batch of 1)."""
        import torch

        out: list[list | None] = [None] * len(prefixes)
        by_length: dict[int, list[int]] = {}
        for i, ids in enumerate(prefixes):
            by_length.setdefault(len(ids), []).append(i)
        for length, members in by_length.items():
            step = max(1, self.batch_tokens // max(1, length))
            for k in range(0, len(members), step):
                chunk = members[k : k + step]
                with torch.inference_mode():
                    head = self.model.model(input_ids=torch.tensor([list(prefixes[i]) for i in chunk]),
                                            use_cache=True).past_key_values
                layers = [(layer.keys, layer.values) for layer in head.layers]
                for row, i in enumerate(chunk):
                    out[i] = [(key[row : row + 1], value[row : row + 1]) for key, value in layers]
        return out  # type: ignore[return-value]

    def read_after(self, head: list, start: int, rows: Sequence[tuple[Sequence[int], Sequence[tuple[int, int]]]]
                   ) -> list[list[tuple[float, bool]]]:
        """Each row of token ids read after the cache ``head`` of a ``start``-token prefix. A row
        is (ids, asks), an ask being (column, target): the answer is the target's log-probability
        predicted at that column and whether it is the model's top choice, per row and ask."""
        import torch
        from transformers import DynamicCache

        answers: list[list[tuple[float, bool]]] = [[] for _ in rows]
        lengths = [len(ids) for ids, _ in rows]
        with torch.inference_mode():
            for batch in length_batches(lengths, self.batch_tokens):
                asked = [(row, col, target, j) for row, j in enumerate(batch) for col, target in rows[j][1]]
                if not asked:
                    continue
                width = max(lengths[j] for j in batch)
                ids = torch.zeros((len(batch), width), dtype=torch.long)
                for row, j in enumerate(batch):
                    ids[row, : lengths[j]] = torch.tensor(list(rows[j][0]))
                # a fresh cache object per batch (the model appends to the one it is given)
                cache = DynamicCache(ddp_cache_data=[
                    (key.expand(len(batch), -1, -1, -1), value.expand(len(batch), -1, -1, -1)) for key, value in head
                ])
                positions = (start + torch.arange(width)).unsqueeze(0).expand(len(batch), -1)
                hidden = self.model.model(input_ids=ids, cache=cache, position_ids=positions).last_hidden_state
                # the asked positions are few (one per key-word piece): one vocabulary product
                logp = torch.log_softmax(self.model.lm_head(hidden[[a[0] for a in asked], [a[1] for a in asked]]).float(),
                                         dim=-1)
                logprob = logp.gather(1, torch.tensor([a[2] for a in asked])[:, None])[:, 0]
                best = logp.argmax(dim=-1)
                for n, (_, _, target, j) in enumerate(asked):
                    answers[j].append((float(logprob[n]), bool(best[n] == target)))
        return answers

    def _target_logprobs(self, hidden, targets):
        """log p(target) at each hidden state, as logit - logsumexp, the vocabulary layer run in
        slices (a text's every position is read)."""
        import torch

        logprob = torch.empty(len(targets))
        with torch.inference_mode():
            for k in range(0, len(targets), VOCAB_SLICE):
                logits = self.model.lm_head(hidden[k : k + VOCAB_SLICE]).float()
                picked = logits.gather(1, targets[k : k + VOCAB_SLICE, None])[:, 0]
                logprob[k : k + VOCAB_SLICE] = picked - torch.logsumexp(logits, dim=-1)
        return logprob


@functools.cache
def causal_lm(dtype: str = "auto", batch_tokens: int = 4096) -> CausalLM:
    """The shared wrapper for a dtype (coverage and fluency use the same one)."""
    return CausalLM(dtype, batch_tokens)
