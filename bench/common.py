"""Helpers shared by the benchmark scripts: data paths, Kendall tau, timing, result files, the
timing benches' command line and their emptying of per-source caches."""

from __future__ import annotations

import argparse
import json
import os
import platform
import statistics
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


def median_peak(dtype: str = "float32", times: int = 3, **options) -> float:
    """The median of ``times`` measurements of ``matmul_peak_gflops(dtype, **options)``."""
    return statistics.median(matmul_peak_gflops(dtype, **options) for _ in range(times))


def timing_args(doc: str, argv=None, **options: int) -> argparse.Namespace:
    """A timing bench's command line: ``--repeats`` (default 3), then an integer option per
    entry of ``options`` (``words=5000`` gives ``--words``, default 5000); ``doc`` is its help."""
    parser = argparse.ArgumentParser(description=doc, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--repeats", type=int, default=3)
    for name, default in options.items():
        parser.add_argument(f"--{name}", type=int, default=default)
    return parser.parse_args(argv)


def forget_sources() -> None:
    """Empty the per-process caches of key words and verb checks, so nothing of a source is
    carried from one repeat to the next (the models stay loaded)."""
    from scoring.fluency_flags import has_verb
    from scoring.keywords import _choose_cached

    _choose_cached.cache_clear()
    has_verb.cache_clear()
