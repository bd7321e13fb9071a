"""The frame of docs/RESULTS.md's sections: a section (title, results file, command, body), the
loader of bench/results/*.json and the small formatting helpers every section module shares.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import dataclass

from bench.common import RESULTS

PYTHON = ".venv/bin/python"


def load(name: str) -> dict | None:
    path = RESULTS / f"{name}.json"
    return json.loads(path.read_text()) if path.exists() else None


@dataclass(frozen=True)
class Section:
    title: str
    results: str  # bench/results/<results>.json
    command: str  # what writes it (the script and its arguments)
    body: Callable[[dict], list[str]]

    def lines(self) -> list[str]:
        d = load(self.results)
        out = [f"## {self.title}", ""]
        return out + (self.body(d) if d else [f"Not yet run: `{PYTHON} {self.command}`.", ""])


def when(d: dict) -> str:
    return f"measured {d['when'][:16]}"


def short(dtype: str) -> str:
    return {"bfloat16": "bf16", "float32": "fp32"}.get(dtype, dtype)


def _gflops(x: float) -> str:
    return f"{x:.0f}" if x >= 10 else f"{x:.1f}"


def _versus(a: float, b: float) -> str:
    """How a tau compares with another, to the three decimals the table shows."""
    return "ties" if round(a, 3) == round(b, 3) else ("is above" if a > b else "stays below")


def _settings_runs(d: dict) -> tuple[list, list[dict]]:
    """The later settings files over the same saved candidates (``--name coverage_settings_<what>``)
    and every row to list: the main file's, then the others' (a later file may repeat the defaults
    to time a run against them: that row is not listed again)."""
    extra = [(path.stem, load(path.stem)) for path in sorted(RESULTS.glob("coverage_settings_*.json"))]
    extra = [(stem, x) for stem, x in extra if x and x.get("ranking_run") == d.get("ranking_run")]
    return extra, d["results"] + [r for _, x in extra for r in x["results"] if r["setting"] != "defaults"]


def _all_cheaper_worse(rows: list[dict]) -> bool:
    """Every setting tried after the defaults (the first row) has a lower mean tau."""
    return len(rows) > 1 and all(r["mean_tau"] < rows[0]["mean_tau"] for r in rows[1:])
