"""Counting a model's floating-point operations from the shapes it actually runs.

``FlopCounter(model)`` is a context manager: while it is open, forward hooks count every
linear layer (2 x rows x inputs x outputs, padding rows included: they are computed) and every
attention layer's two products (scores and weighted values) under the causal mask, a query at
position t of a T-token input after a P-token cache attending to P + t + 1 keys. Element-wise
work (norms, activations, softmax, rotary) is not counted: it is small beside the products and
is where a rate below the matmul peak partly goes.
"""

from __future__ import annotations


class FlopCounter:
    def __init__(self, model):
        self.model = model
        self.linear = 0
        self.attention = 0
        self.tokens = 0
        self._handles = []

    @property
    def flops(self) -> int:
        return self.linear + self.attention

    def __enter__(self):
        import torch

        for module in self.model.modules():
            if isinstance(module, torch.nn.Linear):
                self._handles.append(module.register_forward_hook(self._on_linear))
            elif hasattr(module, "q_proj") and hasattr(module, "layer_idx"):
                self._handles.append(module.register_forward_hook(self._on_causal_attention, with_kwargs=True))
            elif type(module).__name__ == "BertSelfAttention":
                self._handles.append(module.register_forward_hook(self._on_encoder_attention, with_kwargs=True))
            elif type(module).__name__ == "BertEmbeddings":
                self._handles.append(module.register_forward_hook(self._on_embeddings, with_kwargs=True))
            elif type(module).__name__ == "Embedding" and getattr(module, "num_embeddings", 0) > 40000:
                self._handles.append(module.register_forward_hook(self._on_token_embeddings))
        return self

    def __exit__(self, *exc):
        for handle in self._handles:
            handle.remove()
        self._handles.clear()

    def _on_linear(self, module, inputs, output):
        x = inputs[0]
        rows = x.numel() // x.shape[-1]
        self.linear += 2 * rows * module.in_features * module.out_features

    def _on_token_embeddings(self, module, inputs, output):
        self.tokens += inputs[0].numel()

    def _on_embeddings(self, module, args, kwargs, output):
        ids = kwargs.get("input_ids", args[0] if args else None)
        if ids is not None:
            self.tokens += ids.numel()

    def _on_causal_attention(self, module, args, kwargs, output):
        hidden = kwargs.get("hidden_states", args[0] if args else None)
        batch, length = hidden.shape[0], hidden.shape[1]
        cache = kwargs.get("cache", kwargs.get("past_key_values"))
        total = length
        if cache is not None:
            total = cache.layers[module.layer_idx].keys.shape[-2]
        before = total - length
        heads = module.config.num_attention_heads
        keys = length * before + length * (length + 1) // 2
        self.attention += 2 * 2 * batch * heads * module.head_dim * keys

    def _on_encoder_attention(self, module, args, kwargs, output):
        hidden = kwargs.get("hidden_states", args[0] if args else None)
        batch, length, width = hidden.shape
        self.attention += 2 * 2 * batch * length * length * width
