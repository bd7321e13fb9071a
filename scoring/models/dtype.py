"""The dtype the models run in: float32, or bfloat16 where this CPU runs it fast."""

from __future__ import annotations

import functools
import os
import time

from scoring.models.specs import ModelError

DTYPES = ("auto", "float32", "bfloat16")
# bfloat16 is kept when a bfloat16 matrix product takes at most this multiple of the float32 one
BF16_TOLERANCE = 1.5


def pick_dtype(seconds_bf16: float, seconds_fp32: float) -> str:
    """The faster dtype from two measured times (bfloat16 wins ties up to ``BF16_TOLERANCE``)."""
    return "bfloat16" if seconds_bf16 <= BF16_TOLERANCE * seconds_fp32 else "float32"


@functools.cache
def fast_dtype() -> str:
    """The dtype the models run in when set to "auto": $BOILDOWN_DTYPE if set, else bfloat16 where
    this CPU multiplies in it about as fast as in float32 or faster (AVX-512 BF16, AMX, Arm
    BF16), else float32. Measured once per process on a 128 x 128 product (a few ms): CPUs
    without native bfloat16 emulate it, and one seen here ran it at 0.3 GFLOPS against 176 in
    float32, which made scoring a summary take minutes."""
    forced = os.environ.get("BOILDOWN_DTYPE", "").strip()
    if forced:
        if forced not in DTYPES[1:]:
            raise ModelError(f"BOILDOWN_DTYPE must be float32 or bfloat16, got {forced!r}")
        return forced
    import torch

    from scoring.models.loading import set_threads

    set_threads()

    def best_of(x) -> float:
        x @ x
        times = []
        for _ in range(3):
            start = time.perf_counter()
            x @ x
            times.append(time.perf_counter() - start)
        return min(times)

    a = torch.randn(128, 128)
    return pick_dtype(best_of(a.to(torch.bfloat16)), best_of(a))


def resolve_dtype(dtype: str) -> str:
    """"auto" -> ``fast_dtype()``; float32 and bfloat16 stay as they are."""
    if dtype not in DTYPES:
        raise ValueError(f"dtype must be one of {', '.join(DTYPES)}, got {dtype!r}")
    return fast_dtype() if dtype == "auto" else dtype

