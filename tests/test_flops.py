"""The bench's FLOP counter (bench/flops.py) against PyTorch's own counter
(``torch.utils.flop_counter.FlopCounterMode``, which counts matrix products from the shapes
dispatched) on small models built here: the two must agree on the linear layers exactly."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))


def torch_count(model, x) -> int:
    from torch.utils.flop_counter import FlopCounterMode

    with FlopCounterMode(display=False) as mode:
        model(x)
    return mode.get_total_flops()


@pytest.mark.parametrize("shape", [(1, 7, 16), (3, 5, 16), (4, 16)])
def test_linear_flops_equal_torchs_count(shape):
    import torch

    from bench.flops import FlopCounter

    torch.manual_seed(0)
    model = torch.nn.Sequential(torch.nn.Linear(16, 48), torch.nn.SiLU(), torch.nn.Linear(48, 16, bias=False))
    x = torch.randn(*shape)
    counter = FlopCounter(model)
    with counter:
        model(x)
    assert counter.linear == torch_count(model, x)
    assert counter.linear > 0
    # hooks are removed on leaving: a later call is not counted
    model(x)
    assert counter.linear == torch_count(model, x)


def test_causal_attention_counts_the_masked_products():
    # a toy module shaped like a decoder's attention (q_proj, layer_idx): a T-token input with no
    # cache has T(T+1)/2 query-key pairs under the causal mask; two products of head_dim each
    import torch

    from bench.flops import FlopCounter

    class Config:
        num_attention_heads = 2

    class Attention(torch.nn.Module):
        def __init__(self):
            super().__init__()
            self.q_proj = torch.nn.Identity()
            self.layer_idx = 0
            self.head_dim = 4
            self.config = Config()

        def forward(self, hidden_states, cache=None):
            return hidden_states

    model = Attention()
    counter = FlopCounter(model)
    with counter:
        model(hidden_states=torch.zeros(3, 5, 8))
    assert counter.attention == 2 * 2 * 3 * 2 * 4 * (5 * 6 // 2)


def test_the_timing_benches_forget_a_source_between_repeats():
    # bench/common.forget_sources empties the key-word and verb caches; it broke silently once
    # when the verb check moved module, and a timing run then failed only after minutes
    from bench.common import forget_sources
    from scoring.fluency_flags import has_verb

    has_verb("The plant treats water.")
    assert has_verb.cache_info().currsize >= 1
    forget_sources()
    assert has_verb.cache_info().currsize == 0
