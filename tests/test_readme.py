"""The README and docs/RESULTS.md against the benchmark files, and the README's promises.

docs/RESULTS.md and the README's headline table are generated from bench/results/*.json by
bench/results_page.py: the first test fails when a benchmark's results changed and the pages
were not regenerated.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
README_LIMIT = 10_000  # bytes: the README is the user's page; details live in docs/


def test_results_page_and_headline_match_the_benchmark_files():
    run = subprocess.run([sys.executable, str(ROOT / "bench" / "results_page.py"), "--check"],
                         capture_output=True, text=True)
    assert run.returncode == 0, run.stderr or run.stdout


def test_readme_stays_short():
    size = len((ROOT / "README.md").read_bytes())
    assert size < README_LIMIT, f"README.md is {size} bytes; move details to docs/"


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


PAGES = [ROOT / "README.md", ROOT / "DEVELOPERS.md", *sorted((ROOT / "docs").glob("*.md"))]


def _heading_anchors(text: str) -> set[str]:
    """The anchors a Markdown renderer gives the headings (lowercase, punctuation dropped, spaces
    to hyphens: GitHub's rule, from memory)."""
    return {re.sub(r"[^\w\- ]", "", h.strip().lower()).replace(" ", "-")
            for h in re.findall(r"^#+ (.+)$", text, flags=re.MULTILINE)}


@pytest.mark.parametrize("page", PAGES, ids=lambda p: str(p.relative_to(ROOT)))
def test_relative_links_point_to_files_and_headings_that_exist(page):
    text = page.read_text()
    for target in re.findall(r"\]\(([^)\s]+)\)", text):
        if re.match(r"[a-z]+:", target):
            continue
        path, _, anchor = target.partition("#")
        linked = (page.parent / path).resolve() if path else page
        assert linked.exists(), f"{page.name} links to {target}, which does not exist"
        if anchor:
            assert anchor in _heading_anchors(linked.read_text()), f"{page.name} links to {target}: no such heading"
