"""The dtype the models run in: float32, or bfloat16 where this CPU computes in it natively.

The choice is read from what the CPU is, never from a timing: a timing taken on a busy machine
can make an emulated bfloat16 look fast enough, and then every model pass runs emulated (one
editor's comparison took 23 minutes in one run and 7 in the next, same load), and a score must
not change with the machine's load (bfloat16 shifts perplexities). bfloat16 is native on x86
CPUs with AVX-512 BF16 or AMX (cpuinfo flags ``avx512_bf16``, ``amx_bf16``) and on Arm CPUs with
the BF16 extension (feature ``bf16``); everywhere else the models run in float32.
``BOILDOWN_DTYPE=float32|bfloat16`` forces one. Every signature of a model-based score records
the dtype used.
"""

from __future__ import annotations

import functools
import os
from pathlib import Path

from scoring.models.specs import ModelError

DTYPES = ("auto", "float32", "bfloat16")
# CPU flags (x86 /proc/cpuinfo "flags", Arm "Features") that mean bfloat16 matrix products run in hardware
NATIVE_BF16_FLAGS = frozenset({"avx512_bf16", "amx_bf16", "bf16"})


def cpu_flags(cpuinfo: str | None = None) -> frozenset[str]:
    """The CPU's feature flags from /proc/cpuinfo (empty where it cannot be read: not Linux)."""
    if cpuinfo is None:
        try:
            cpuinfo = Path("/proc/cpuinfo").read_text(errors="replace")
        except OSError:
            return frozenset()
    flags: set[str] = set()
    for line in cpuinfo.splitlines():
        key, _, value = line.partition(":")
        if key.strip().lower() in ("flags", "features"):
            flags.update(value.split())
    return frozenset(flags)


def dtype_for(flags: frozenset[str]) -> str:
    """bfloat16 when the flags say the CPU computes in it natively, else float32."""
    return "bfloat16" if flags & NATIVE_BF16_FLAGS else "float32"


@functools.cache
def fast_dtype() -> str:
    """The dtype the models run in when set to "auto": $BOILDOWN_DTYPE if set, else what this
    CPU computes in natively (``dtype_for(cpu_flags())``). Decided once per process, from the
    CPU's flags alone, so it does not depend on the machine's load."""
    forced = os.environ.get("BOILDOWN_DTYPE", "").strip()
    if forced:
        if forced not in DTYPES[1:]:
            raise ModelError(f"BOILDOWN_DTYPE must be float32 or bfloat16, got {forced!r}")
        return forced
    return dtype_for(cpu_flags())


def resolve_dtype(dtype: str) -> str:
    """"auto" -> ``fast_dtype()``; float32 and bfloat16 stay as they are."""
    if dtype not in DTYPES:
        raise ValueError(f"dtype must be one of {', '.join(DTYPES)}, got {dtype!r}")
    return fast_dtype() if dtype == "auto" else dtype
