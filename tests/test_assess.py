"""``boildown assess``: rows in, per-row results and a per-system table out, resumable, one clear
line per bad row. The fast tier runs the model-free stand-in job (OverlapJob) through the real
batch engine; the models tier scores a few SummEval dev rows with the real evaluator and checks
the system-level tau against the validity benches' code path (summarize.assess.stats)."""

import json
import os

import pytest
from click.testing import CliRunner

from summarize.assess import AssessConfig, OverlapJob, run_assess, stats
from summarize.assess import table as assess_table
from summarize.cli import main

# invented documents of our own scenario (a regional water authority), three systems
SOURCES = {
    "d1": "The river authority opened a new pumping station near the valley town. Engineers said the station "
          "will supply clean water to four villages. The budget was approved in March after a long debate.",
    "d2": "A storm damaged the harbour wall last winter. Repairs began in spring and will finish before the "
          "festival. The council expects the harbour to reopen fully by July.",
    "d3": "Volunteers planted two thousand trees along the canal path. The project aims to cool the town in "
          "summer and shelter birds. Schools joined the planting days.",
}


def _rows(extra=()):
    rows = []
    for doc, text in SOURCES.items():
        rows.append({"id": doc, "system": "lead", "summary": " ".join(text.split()[:14]), "source": text})
        rows.append({"id": doc, "system": "short", "summary": " ".join(text.split()[:5]), "source": text})
        rows.append({"id": doc, "system": "full", "summary": text, "source": text})
    return rows + list(extra)


def _write(path, rows, tail=""):
    path.write_text("".join(json.dumps(r) + "\n" for r in rows) + tail, encoding="utf-8")
    return path


def _records(out):
    return [json.loads(line) for line in (out / "results.jsonl").read_text().splitlines()]


def test_scores_every_row_and_writes_results_table_and_chart(tmp_path):
    rows = _write(tmp_path / "rows.jsonl", _rows())
    result = run_assess(rows, tmp_path / "out", AssessConfig(workers=1), job=OverlapJob())
    assert (result.scored, result.failed, result.skipped) == (9, 0, 0)
    for name in ("results.jsonl", "results.csv", "systems.txt", "systems.csv", "systems.json", "systems.svg",
                 "systems.png"):
        assert (tmp_path / "out" / name).stat().st_size > 0, name
    table = result.table
    assert table.systems[0] == "full" and table.systems[-1] == "short"  # the full text covers every word
    assert set(table.means()) == {"lead", "short", "full"}
    assert len(table.tests) == 3  # every pair of three systems
    shown = json.loads((tmp_path / "out" / "systems.json").read_text())
    assert shown["settings"]["test_source"] == "paired bootstrap resampling (Koehn 2004)"
    assert shown["systems"][0]["combined"]["seed"] == 0
    assert (tmp_path / "out" / "systems.svg").read_text().lstrip().startswith("<?xml")


def test_a_rerun_skips_rows_already_scored_and_scores_only_a_new_system(tmp_path):
    rows = _write(tmp_path / "rows.jsonl", _rows())
    first = run_assess(rows, tmp_path / "out", AssessConfig(workers=1), job=OverlapJob())
    again = run_assess(rows, tmp_path / "out", AssessConfig(workers=1), job=OverlapJob())
    assert (again.scored, again.skipped) == (0, 9)
    assert again.table.means() == first.table.means()
    new = [{"id": d, "system": "tail", "summary": " ".join(t.split()[-6:]), "source": t} for d, t in SOURCES.items()]
    _write(rows, _rows(new))
    third = run_assess(rows, tmp_path / "out", AssessConfig(workers=1), job=OverlapJob())
    assert (third.scored, third.skipped) == (3, 9)
    assert len(_records(tmp_path / "out")) == 12  # no row recorded twice


def test_each_bad_row_gets_one_clear_line_and_nothing_else_is_lost(tmp_path):
    bad = [
        {"id": "d4", "system": "lead", "summary": "no source here"},
        {"id": "d5", "system": "lead", "summary": "a file that is not there", "source_path": "missing.txt"},
        {"id": "d1", "system": "lead", "summary": "the same pair again", "source": SOURCES["d1"]},
        {"id": "d2", "system": "empty", "summary": "   ", "source": SOURCES["d2"]},
    ]
    rows = _write(tmp_path / "rows.jsonl", _rows(bad), tail="{not json\n")
    result = run_assess(rows, tmp_path / "out", AssessConfig(workers=1), job=OverlapJob())
    assert (result.scored, result.failed) == (9, 5)
    reasons = [error for _where, error in result.failures]
    assert all("\n" not in r for r in reasons)
    for expected in ("has no source", "missing.txt' does not exist", "appears again (first at rows.jsonl:1)",
                     "is empty", "not a JSON object"):
        assert sum(expected in r for r in reasons) == 1, expected
    csv_text = (tmp_path / "out" / "results.csv").read_text()
    assert csv_text.count(",failed,") == 5 and csv_text.count(",scored,") == 9


def test_a_system_missing_documents_is_reported_and_paired_on_shared_documents(tmp_path):
    rows = [r for r in _rows() if not (r["system"] == "short" and r["id"] == "d3")]
    result = run_assess(_write(tmp_path / "rows.jsonl", rows), tmp_path / "out", AssessConfig(workers=1),
                        job=OverlapJob())
    table = result.table
    assert table.missing == {"short": ["d3"]}
    assert any("short has no scored summary of 1 of 3" in n for n in table.notes)
    pair = next(t for t in table.tests if {t.a, t.b} == {"lead", "short"})
    assert pair.documents == 2
    assert table.intervals["short"]["combined"].documents == 2


def test_the_folder_layout_gives_the_same_scores_as_json_lines(tmp_path):
    root = tmp_path / "layout"
    (root / "sources").mkdir(parents=True)
    rows = _rows()
    for doc, text in SOURCES.items():
        (root / "sources" / f"{doc}.txt").write_text(text)
    for r in rows:
        (root / "systems" / r["system"]).mkdir(parents=True, exist_ok=True)
        (root / "systems" / r["system"] / f"{r['id']}.txt").write_text(r["summary"])
    (root / "systems" / "lead" / "d9.txt").write_text("a summary of a document nobody gave")
    folder = run_assess(root, tmp_path / "out1", AssessConfig(workers=1), job=OverlapJob())
    lines = run_assess(_write(tmp_path / "rows.jsonl", rows), tmp_path / "out2", AssessConfig(workers=1),
                       job=OverlapJob())
    assert folder.table.means() == pytest.approx(lines.table.means())
    assert folder.failed == 1 and "no source named 'd9.*' in sources/" in folder.failures[0][1]


def test_the_table_means_give_the_validity_benches_system_level_tau():
    # one code path: the table's per-system means and stats.system_level_tau (what
    # bench/coverage_validity.py calls) are the same numbers
    records = [{"id": d, "system": s, "status": "scored", "values": {"combined": v, "coverage": v, "fluency": 1 - v}}
               for d, s, v in [("a", "x", 0.1), ("a", "y", 0.4), ("a", "z", 0.3), ("b", "x", 0.2), ("b", "y", 0.3),
                               ("b", "z", 0.5)]]
    human = {"x": 1.0, "y": 3.0, "z": 2.0}
    table = assess_table.build(records, AssessConfig(samples=50))
    bench = stats.system_level_tau([(r["id"], r["system"], human[r["system"]], r["values"]["coverage"])
                                    for r in records])
    assert stats.tau_of_means(human, table.means("coverage")) == bench


def test_the_command_prints_the_table_and_exits_non_zero_when_a_row_failed(tmp_path):
    rows = _write(tmp_path / "rows.jsonl", _rows([{"id": "d4", "system": "lead", "summary": "x"}]))
    result = CliRunner().invoke(main, ["assess", str(rows), "--out", str(tmp_path / "out"), "--job", "overlap",
                                       "--workers", "1", "--test", "randomisation", "-q"])
    assert result.exit_code == 1
    assert "Riezler & Maxwell 2005" in result.output
    assert "failed: rows.jsonl:10: the row (d4, lead) has no source" in result.output
    assert "boildown: error: 1 of 10 row(s) failed" in result.output


@pytest.mark.parametrize("args, message", [
    (["--samples", "0"], "Invalid value for '--samples'"),
    (["--engine", "dask"], "--engine dask needs --scheduler"),
    (["--scheduler", "tcp://x:1"], "--scheduler is only used with --engine dask"),
])
def test_bad_options_get_one_line(tmp_path, args, message):
    rows = _write(tmp_path / "rows.jsonl", _rows())
    result = CliRunner().invoke(main, ["assess", str(rows), "--out", str(tmp_path / "out"), "--job", "overlap", *args])
    assert result.exit_code != 0
    assert message in result.output


def test_an_input_that_is_not_rows_is_refused_in_one_line(tmp_path):
    empty = tmp_path / "empty.jsonl"
    empty.write_text("")
    result = CliRunner().invoke(main, ["assess", str(empty), "--out", str(tmp_path / "out"), "--job", "overlap"])
    assert result.exit_code == 1
    assert result.output.strip() == f"boildown: error: '{empty}' holds no rows to score"
    folder = tmp_path / "plain"
    folder.mkdir()
    result = CliRunner().invoke(main, ["assess", str(folder), "--out", str(tmp_path / "out"), "--job", "overlap"])
    assert "is not an assess folder: it needs sources/" in result.output


SUMMEVAL = os.path.join(os.path.dirname(__file__), "..", "..", "shared", "data", "summeval", "dev.jsonl")


@pytest.mark.models
def test_summeval_rows_scored_by_the_real_evaluator_with_source_work_once_per_source(tmp_path):
    # Outside data: SummEval dev (Fabbri et al. 2021), two articles x three systems, with references
    if not os.path.exists(SUMMEVAL):
        pytest.skip(f"external data {SUMMEVAL} is absent (expected ../shared/data beside the project)")
    found = [json.loads(line) for line in open(SUMMEVAL, encoding="utf-8")]
    docs = sorted({r["doc_id"] for r in found})[:2]
    chosen = [r for r in found if r["doc_id"] in docs and r["system_id"] in ("M11", "M17", "M23")]
    rows = [{"id": r["doc_id"], "system": r["system_id"], "summary": r["summary"], "source": r["source"],
             "references": r["references"][:2]} for r in chosen]
    result = run_assess(_write(tmp_path / "rows.jsonl", rows), tmp_path / "out", AssessConfig(workers=1, samples=200))
    assert (result.scored, result.failed) == (6, 0)
    records = _records(tmp_path / "out")
    for r in records:
        assert 0 <= r["values"]["coverage"] <= 1 and 0 <= r["values"]["fluency"] <= 1
        assert "rouge2" in r["values"] and "bertscore" in r["values"]
        assert r["signatures"]["coverage"].startswith("coverage(")
        assert "agreement" not in r["values"]
    # one task per source: the rows of one article came back from the same worker call
    for doc in docs:
        assert len({r["timings"]["worker_s"] for r in records if r["id"] == doc}) == 1
    human = {(r["doc_id"], r["system_id"]): r["relevance"] for r in chosen}
    bench = stats.system_level_tau([(r["id"], r["system"], human[(r["id"], r["system"])], r["values"]["coverage"])
                                    for r in records])
    people = stats.system_means((r["system_id"], r["relevance"]) for r in chosen)
    assert stats.tau_of_means(people, result.table.means("coverage")) == bench
