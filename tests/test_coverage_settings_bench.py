"""bench/coverage_settings.py: settings parse to typed config values, and the int8 experiment
quantises exactly the layers it says it does.

Sources: the quantised layer type and its closeness to the float32 product come from PyTorch's
own dynamic quantisation (torch.ao.quantization.quantize_dynamic, per-channel int8 weights); the
tolerance (a few hundredths of the output's scale for an 8-bit weight and activation) is common
practice, not a published figure. The toy model is built in the test, no weights are loaded.
"""

import pytest

torch = pytest.importorskip("torch")

from bench.coverage_settings import INT8_KEEP, int8_copy, parse_setting  # noqa: E402


def test_settings_parse_to_the_configs_types():
    assert parse_setting("window=24,keywords=32") == {"window": 24, "keywords": 32}
    assert parse_setting("mode=dense") == {"mode": "dense"}
    assert parse_setting("lowercase=no") == {"lowercase": False}
    with pytest.raises(SystemExit, match="unknown coverage setting 'windows'"):
        parse_setting("windows=24")


class _Block(torch.nn.Module):
    def __init__(self):
        super().__init__()
        self.q_proj = torch.nn.Linear(16, 16)
        self.down_proj = torch.nn.Linear(16, 16)

    def forward(self, x):
        return self.down_proj(torch.relu(self.q_proj(x)))


class _Toy(torch.nn.Module):
    """The shape of a transformers causal model: ``.model.layers`` and a float vocabulary layer."""

    def __init__(self, n_layers: int = 30):
        super().__init__()
        self.model = torch.nn.Module()
        self.model.layers = torch.nn.ModuleList(_Block() for _ in range(n_layers))
        self.lm_head = torch.nn.Linear(16, 8)

    def forward(self, x):
        for layer in self.model.layers[:3]:
            x = x + layer(x)
        return self.lm_head(x)


def _kinds(model) -> dict[str, str]:
    # the layers themselves (a quantised layer also holds a "_packed_params" child)
    return {name: type(mod).__module__ for name, mod in model.named_modules()
            if name.split(".")[-1] in ("q_proj", "down_proj", "lm_head")}


def test_int8_copy_quantises_all_but_the_kept_layers_and_leaves_the_original_alone():
    torch.manual_seed(0)
    toy = _Toy()
    quantised = int8_copy(toy)
    kinds = _kinds(quantised)
    dynamic = {name for name, module in kinds.items() if "quantized" in module}
    assert "model.layers.0.q_proj" in dynamic and "model.layers.27.q_proj" in dynamic
    assert not any(name.endswith("down_proj") for name in dynamic)  # kept: "down_proj"
    assert "model.layers.28.q_proj" not in dynamic and "model.layers.29.q_proj" not in dynamic  # kept whole
    assert "lm_head" not in dynamic  # the vocabulary layer is outside .model
    assert len(dynamic) == 28
    assert all("quantized" not in module for module in _kinds(toy).values())  # a copy was changed
    assert INT8_KEEP == ("down_proj", "layers.28.", "layers.29.")
    x = torch.randn(4, 16)
    with torch.inference_mode():
        exact, approx = toy(x), quantised(x)
    assert not torch.equal(exact, approx)  # it did change the arithmetic
    assert torch.allclose(exact, approx, atol=0.05 * float(exact.abs().max()))
