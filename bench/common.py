"""Helpers shared by the benchmark scripts: data paths, Kendall tau, timing, result files."""

from __future__ import annotations

import json
import os
import platform
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DATA = ROOT.parent / "shared" / "data"
RESULTS = ROOT / "bench" / "results"


def need(path: Path) -> Path:
    """Exit cleanly (status 0, a clear reason) when the external data is absent."""
    if not path.exists():
        print(f"skipped: external data {path} is absent (expected ../shared/data beside the project)")
        sys.exit(0)
    return path


def kendall(a, b) -> float:
    """Kendall tau-b (scipy), NaN when either side is constant: ``summarize.assess.stats.kendall``,
    the one the assess command's tables use."""
    from summarize.assess.stats import kendall as shared

    return shared(a, b)


def save(name: str, payload: dict) -> Path:
    RESULTS.mkdir(parents=True, exist_ok=True)
    payload = {
        "when": time.strftime("%Y-%m-%d %H:%M:%S"),
        "machine": {"cpus": os.cpu_count(), "python": platform.python_version(), "processor": platform.processor()},
        **payload,
    }
    out = RESULTS / f"{name}.json"
    out.write_text(json.dumps(payload, indent=1))
    return out


def matmul_peak_gflops(dtype: str = "float32", size: int = 2048, repeats: int = 8) -> float:
    """Measured matmul throughput on this machine, the same run's yardstick for GFLOPS figures."""
    import torch

    a = torch.randn(size, size, dtype=getattr(torch, dtype))
    a @ a
    start = time.perf_counter()
    for _ in range(repeats):
        a @ a
    return repeats * 2 * size**3 / (time.perf_counter() - start) / 1e9
