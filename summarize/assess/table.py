"""The per-system table of an assess run: each system's mean of each score over its documents
with a bootstrap interval, the systems that lack documents, and paired tests between every two
systems over the documents both have; as text, CSV and JSON.

The per-system means come from ``stats.system_means`` (the function the validity benches'
system-level Kendall tau reads), so a tau taken from this table is the benches' tau.
"""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass, field
from itertools import combinations
from pathlib import Path

from summarize.assess import stats
from summarize.files import write_atomic

METRICS = ("combined", "coverage", "fluency", "rouge1", "rouge2", "rougeLsum", "bertscore")
LABELS = {"combined": "Combined", "coverage": "Coverage", "fluency": "Fluency", "rouge1": "ROUGE-1 F1",
          "rouge2": "ROUGE-2 F1", "rougeLsum": "ROUGE-Lsum F1", "bertscore": "BERTScore F1"}
TABLE_NAMES = {"table": "systems.txt", "table CSV": "systems.csv", "table JSON": "systems.json"}


@dataclass
class Table:
    """Systems in order of their mean ``metric`` (best first), their intervals by metric, the
    paired tests on ``metric``, and what is missing."""

    metric: str
    metrics: list[str]
    systems: list[str]
    intervals: dict[str, dict[str, stats.Interval]]  # system -> metric -> interval
    values: dict[str, dict[str, dict[str, float]]]  # metric -> system -> document -> value
    tests: list[stats.PairedTest]
    missing: dict[str, list[str]]  # system -> documents it lacks (that some other system has)
    settings: dict
    failed: int = 0
    documents: int = 0
    notes: list[str] = field(default_factory=list)

    def means(self, metric: str | None = None) -> dict[str, float]:
        """Per-system means of one metric (``stats.system_means`` over the scored rows)."""
        metric = metric or self.metric
        return stats.system_means((s, v) for s, docs in self.values[metric].items() for v in docs.values())

    def to_dict(self) -> dict:
        return {"metric": self.metric, "settings": self.settings, "documents": self.documents, "failed_rows": self.failed,
                "systems": [{"system": s, **{m: self.intervals[s][m].to_dict() for m in self.intervals[s]},
                             "missing_documents": self.missing.get(s, [])} for s in self.systems],
                "comparisons": [t.to_dict() | {"p_holm": p} for t, p in zip(self.tests, holm(self.tests))],
                "notes": self.notes}


def holm(tests: list[stats.PairedTest]) -> list[float]:
    """Holm (1979) step-down adjusted p-values for the family of tests, in the tests' order."""
    order = sorted(range(len(tests)), key=lambda i: tests[i].p_value)
    adjusted = [0.0] * len(tests)
    running = 0.0
    for rank, i in enumerate(order):
        running = max(running, min(1.0, (len(tests) - rank) * tests[i].p_value))
        adjusted[i] = running
    return adjusted


def build(records: list[dict], config) -> Table:
    """The table from the rows' latest records (scored ones are used; failed ones are counted)."""
    scored = [r for r in records if r["status"] == "scored"]
    values: dict[str, dict[str, dict[str, float]]] = {}
    for r in scored:
        for metric in METRICS:
            value = (r.get("values") or {}).get(metric)
            if isinstance(value, (int, float)) and not isinstance(value, bool):
                values.setdefault(metric, {}).setdefault(r["system"], {})[r["id"]] = float(value)
    metrics = [m for m in METRICS if m in values]
    lead = config.metric if config.metric in values else metrics[0]
    documents = sorted({r["id"] for r in scored})
    intervals: dict[str, dict[str, stats.Interval]] = {}
    for metric in metrics:
        for system, by_doc in values[metric].items():
            intervals.setdefault(system, {})[metric] = stats.bootstrap_interval(
                [by_doc[d] for d in sorted(by_doc)], samples=config.samples, confidence=config.confidence,
                seed=config.seed)
    means = stats.system_means((s, v) for s, docs in values[lead].items() for v in docs.values())
    systems = sorted(intervals, key=lambda s: (-means.get(s, float("-inf")), s))
    systems_all = sorted({r["system"] for r in records if r["system"]})
    missing = {s: [d for d in documents if d not in values[lead].get(s, {})] for s in systems_all}
    missing = {s: d for s, d in missing.items() if d}
    tests = [t for a, b in combinations(systems, 2)
             if (t := stats.paired_test(a, values[lead].get(a, {}), b, values[lead].get(b, {}), method=config.test,
                                        samples=config.samples, seed=config.seed)) is not None]
    notes = []
    for system, lacking in missing.items():
        shown = ", ".join(lacking[:5]) + (f", ... (+{len(lacking) - 5})" if len(lacking) > 5 else "")
        notes.append(f"{system} has no scored summary of {len(lacking)} of {len(documents)} document(s) ({shown}); "
                     "its mean is over the others, and its paired tests use the documents both systems have")
    failed = sum(r["status"] == "failed" for r in records)
    return Table(lead, metrics, systems, intervals, values, tests, missing, config.statistics(), failed,
                 len(documents), notes)


def text(table: Table, *, all_pairs: bool = False) -> str:
    """The table for a terminal: one line per system (mean [interval] per metric), then the
    paired tests (each system against the next below it, or every pair)."""
    s = table.settings
    head = ["system", "docs"] + [LABELS[m] for m in table.metrics]
    body = []
    for system in table.systems:
        cells = [system, str(table.intervals[system][table.metric].documents)]
        for m in table.metrics:
            iv = table.intervals[system].get(m)
            cells.append("-" if iv is None else f"{iv.mean:.3f} [{iv.low:.3f}, {iv.high:.3f}]")
        body.append(cells)
    widths = [max(len(r[i]) for r in [head] + body) for i in range(len(head))]
    lines = [f"Systems by mean {LABELS[table.metric].lower()} over {table.documents} document(s); "
             f"{int(round(100 * s['confidence']))}% percentile bootstrap intervals over documents "
             f"({s['samples']} resamples, seed {s['seed']})", ""]
    lines += ["  ".join(c.ljust(w) if i == 0 else c.rjust(w) for i, (c, w) in enumerate(zip(row, widths)))
              for row in [head] + body]
    adjusted = dict(zip((id(t) for t in table.tests), holm(table.tests)))
    shown = table.tests if all_pairs else [t for t in table.tests
                                            if table.systems.index(t.b) == table.systems.index(t.a) + 1]
    if shown:
        which = "every pair" if all_pairs else "each system against the next below it; every pair in systems.csv"
        lines += ["", f"Paired tests on {LABELS[table.metric].lower()} ({s['test_source']}, {s['samples']} "
                      f"samples, seed {s['seed']}; {which}; Holm-adjusted over all {len(table.tests)} pairs):"]
        for t in shown:
            lines.append(f"  {t.a} vs {t.b}: difference {t.difference:+.4f} over {t.documents} document(s), "
                         f"p = {t.p_value:.4f} (Holm {adjusted[id(t)]:.4f})")
    if table.failed:
        lines += ["", f"{table.failed} row(s) failed and are left out (reasons in results.csv)"]
    lines += [f"note: {n}" for n in table.notes]
    return "\n".join(lines)


def to_csv(table: Table) -> str:
    """Two blocks: one line per (system, metric) interval, then one line per paired test."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["system", "metric", "mean", "low", "high", "documents", "confidence", "samples", "seed"])
    for system in table.systems:
        for m, iv in table.intervals[system].items():
            writer.writerow([system, m, round(iv.mean, 6), round(iv.low, 6), round(iv.high, 6), iv.documents,
                             iv.confidence, iv.samples, iv.seed])
    writer.writerow([])
    writer.writerow(["system_a", "system_b", "metric", "difference", "p_value", "p_holm", "documents", "method",
                     "source", "samples", "seed"])
    for t, p in zip(table.tests, holm(table.tests)):
        writer.writerow([t.a, t.b, table.metric, round(t.difference, 6), round(t.p_value, 6), round(p, 6),
                         t.documents, t.method, t.source, t.samples, t.seed])
    return buffer.getvalue()


def write(table: Table, out_dir: Path) -> dict:
    """systems.txt, systems.csv and systems.json in ``out_dir``; their paths by what they are."""
    out_dir = Path(out_dir)
    return {
        "table": write_atomic(out_dir / TABLE_NAMES["table"], text(table, all_pairs=True) + "\n", what="the table"),
        "table CSV": write_atomic(out_dir / TABLE_NAMES["table CSV"], to_csv(table), what="the table CSV"),
        "table JSON": write_atomic(out_dir / TABLE_NAMES["table JSON"],
                                   json.dumps(table.to_dict(), indent=1) + "\n", what="the table JSON"),
    }
