"""Coverage validity on REALSumm: Kendall tau between coverage and human LitePyramid recall.

Each REALSumm reference is treated as the source document: how much does each system summary
help the causal model recover the reference's key words? Printed beside ROUGE-1 recall
(rouge-score, stemming on) computed in the same run. Summary level: mean over documents of
the tau across that document's summaries; system level: tau of per-system means over the 24
distinct system names (the convention of ../shared/data/README.md).

    .venv/bin/python bench/coverage_validity.py            # all 100 documents
    .venv/bin/python bench/coverage_validity.py --docs 20 --set keywords=15
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import re
import sys
import time
from collections import defaultdict
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import DATA, need, save  # noqa: E402


def clean(text: str) -> str:
    return re.sub(r"\s+", " ", re.sub(r"</?t>", " ", text)).strip()


def load(limit: int | None):
    rows = [json.loads(line) for line in open(need(DATA / "realsumm" / "realsumm_scores.jsonl"))]
    docs = defaultdict(list)
    for row in rows:
        docs[row["doc_id"]].append(row)
    ids = sorted(docs)[:limit] if limit else sorted(docs)
    return {i: docs[i] for i in ids}


def correlations(docs, values: dict[tuple, float]) -> tuple[float, float]:
    """(summary-level, system-level) tau through summarize.assess.stats, the code path the assess
    command's per-system means go through (systems grouped by name: 24 names for 25 systems)."""
    from summarize.assess import stats

    rows = [(doc_id, r["system"], r["scores"]["litepyramid_recall"], values[(doc_id, k)])
            for doc_id, found in docs.items() for k, r in enumerate(found)]
    return stats.summary_level_tau(rows), stats.system_level_tau(rows)


def evidence_variants(res) -> dict[str, float]:
    """Other ways to total the same key-word evidence (bench/coverage_variants.py): every key
    word's gain (the earlier credit), each contained key word's share of its own surprisal
    removed, the share of key words contained (lexical), and names weighted down or each gain
    capped."""
    from bench.coverage_variants import totals

    return totals([(k.p_without, k.p_with, bool(k.in_summary), k.is_name) for k in res.keywords])


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--docs", type=int, default=None, help="first N documents only (default: all 100)")
    parser.add_argument("--set", action="append", default=[], help="coverage config override, key=value")
    parser.add_argument("--name", default="coverage_validity", help="results file name under bench/results/")
    args = parser.parse_args(argv)

    from rouge_score import rouge_scorer

    from scoring.coverage import CoverageConfig, CoverageScorer

    # every key word's probability with the summary is read (read="all": the same values as the
    # default "carried", and the "credit all" variant below needs the left-out words too)
    overrides = {"read": "all"}
    for item in args.set:
        key, _, value = item.partition("=")
        default = getattr(CoverageConfig(), key)
        overrides[key] = type(default)(value) if not isinstance(default, bool) else value in ("1", "true", "yes")
    config = CoverageConfig(**overrides)
    scorer = CoverageScorer(config)
    docs = load(args.docs)
    rouge = rouge_scorer.RougeScorer(["rouge1"], use_stemmer=True)

    metrics = defaultdict(dict)
    timings = []
    for n, (doc_id, rows) in enumerate(docs.items()):
        source = clean(rows[0]["reference"])
        summaries = [clean(r["summary"]) for r in rows]
        start = time.perf_counter()
        results = scorer.score_many(summaries, source=source)
        timings.append((time.perf_counter() - start) / len(rows))
        for k, (row, res) in enumerate(zip(rows, results)):
            metrics["coverage (headline: %s)" % config.headline][(doc_id, k)] = res.value
            metrics["coverage logprob gain"][(doc_id, k)] = res.logprob_gain
            metrics["coverage accuracy gain"][(doc_id, k)] = res.accuracy_gain
            metrics["coverage prob gain"][(doc_id, k)] = res.prob_gain
            for name, value in evidence_variants(res).items():
                metrics[name][(doc_id, k)] = value
            metrics["ROUGE-1 recall (rouge-score, same run)"][(doc_id, k)] = rouge.score(source, summaries[k])["rouge1"].recall
            metrics["ROUGE-1 recall (REALSumm release)"][(doc_id, k)] = row["scores"]["rouge_1_recall"]
        print(f"\r{n + 1}/{len(docs)} documents, {sorted(timings)[len(timings) // 2]:.3f} s per summary (median)", end="", file=sys.stderr)
    print(file=sys.stderr)

    table = {}
    print(f"\nREALSumm, {len(docs)} documents x {len(next(iter(docs.values())))} summaries; config: {config}")
    print(f"{'metric':44s} {'summary-level tau':>18s} {'system-level tau':>17s}")
    for name, values in metrics.items():
        summary_tau, system_tau = correlations(docs, values)
        table[name] = {"summary_level": round(summary_tau, 4), "system_level": round(system_tau, 4)}
        print(f"{name:44s} {summary_tau:18.3f} {system_tau:17.3f}")
    out = save(args.name, {"documents": len(docs), "config": dataclasses.asdict(config), "tau": table,
                           "median_seconds_per_summary": sorted(timings)[len(timings) // 2],
                           "signature": str(scorer.signature())})
    print(f"written {out}")


if __name__ == "__main__":
    main()
