"""The score command: a ranked table, JSON and CSV, explanations, and bad input."""

from __future__ import annotations

import csv
import io
import json

import pytest
from click.testing import CliRunner

from conftest import MEETING
from summarize.cli import main

SOURCE = MEETING
GOOD = "The board approved a hosepipe ban for Wenlow Cross and Ashpool as Thornmoor reservoir fell to 48 percent."
WEAK = "A meeting took place and several matters were discussed by those present."


@pytest.fixture()
def files(tmp_path):
    paths = {}
    for name, text in {"source.txt": SOURCE, "good.txt": GOOD, "weak.txt": WEAK, "empty.txt": ""}.items():
        paths[name] = tmp_path / name
        paths[name].write_text(text)
    return paths


@pytest.mark.models
def test_table_json_and_csv(files):
    runner = CliRunner()
    args = ["score", str(files["source.txt"]), str(files["weak.txt"]), str(files["good.txt"]), "--words", "17", "-q"]
    result = runner.invoke(main, args)
    assert result.exit_code == 0, result.output
    assert "still missed" in result.stdout and "coverage(model=" in result.stdout and "estimates" in result.stdout
    data = json.loads(runner.invoke(main, args + ["--json"]).stdout)
    ranked = [c["name"] for c in data["candidates"]]
    assert ranked[0] == "weak.txt"  # good.txt is 18 words for a budget of 17: over budget ranks last
    assert data["candidates"][1]["over_budget"] is True
    rows = list(csv.DictReader(io.StringIO(runner.invoke(main, args + ["--csv"]).stdout)))
    assert [r["name"] for r in rows] == ranked


@pytest.mark.models
def test_empty_summary_scores_zero_with_a_warning(files):
    result = CliRunner().invoke(main, ["score", str(files["source.txt"]), str(files["empty.txt"]), "--json"])
    assert result.exit_code == 0, result.output
    assert "is empty; it scores 0" in result.stderr
    cand = json.loads(result.stdout)["candidates"][0]
    assert cand["coverage"]["share"] == 0.0 and cand["fluency"]["value"] == 0.0


@pytest.mark.models
def test_summary_longer_than_source_is_warned(files, tmp_path):
    long = tmp_path / "long.txt"
    long.write_text(SOURCE + " " + SOURCE)
    result = CliRunner().invoke(main, ["score", str(files["source.txt"]), str(long), "--no-explain"])
    assert result.exit_code == 0 and "longer than its source" in result.stderr


@pytest.mark.parametrize("content, message", [
    (b"", "is empty"),
    (b"\x00\xff\x10" * 200, "binary"),
    ("Der Vorstand hat den Plan genehmigt und die Leitungen werden im Herbst erneuert. " * 6, "does not look like English"),
])
def test_bad_source_is_one_clear_line(files, tmp_path, content, message):
    bad = tmp_path / "bad.txt"
    bad.write_bytes(content if isinstance(content, bytes) else content.encode())
    result = CliRunner().invoke(main, ["score", str(bad), str(files["good.txt"])])
    assert result.exit_code == 1
    assert message in result.stderr and "Traceback" not in result.output
    assert len(result.stderr.strip().splitlines()) == 1


def test_bad_jsonl_candidates(files, tmp_path):
    bad = tmp_path / "c.jsonl"
    bad.write_text('{"name": "a", "text": "fine"}\nnot json\n')
    result = CliRunner().invoke(main, ["score", str(files["source.txt"]), str(bad)])
    assert result.exit_code == 1 and "line 2" in result.stderr
