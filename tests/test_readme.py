"""The README's Results section is generated from bench/results/*.json (bench/readme_results.py):
this fails when a benchmark's results changed and the README was not regenerated."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_readme_results_match_the_benchmark_files():
    run = subprocess.run([sys.executable, str(ROOT / "bench" / "readme_results.py"), "--check"],
                         capture_output=True, text=True)
    assert run.returncode == 0, run.stderr or run.stdout


def test_readme_quick_start_has_exactly_the_two_commands():
    text = (ROOT / "README.md").read_text()
    quick = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    blocks = quick.split("```")[1::2]
    assert [b.strip() for b in blocks] == [
        "./install.sh && .venv/bin/boildown summarize demo_docs/annual_water_quality_report.txt --words 150",
        ".venv/bin/python -m pytest",
    ]
    ci = (ROOT / ".ci" / "run").read_text()
    assert ".venv/bin/python -m pytest" in ci  # CI runs the README's test command
