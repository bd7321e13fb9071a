"""assess on outside data: speed (rows per minute, 1 and 2 local workers; the cost of each further
summary of one source against the first) and the system-level Kendall tau with people, taken
from assess's own per-system means and, for the same rows, through the validity benches' code
path (summarize.assess.stats, which bench/coverage_validity.py calls): the two must be equal.

    .venv/bin/python bench/assess_bench.py                       # SummEval dev, all 50 documents
    .venv/bin/python bench/assess_bench.py --docs 10 --workers 1,2 --realsumm-docs 5

SummEval dev (../shared/data/summeval/dev.jsonl): 16 systems' summaries of each article, with
11 references (so ROUGE and BERTScore run too); people's ratings: relevance (compared with
coverage and the combined score) and fluency (with fluency). REALSumm: the reference is the
source (as in bench/coverage_validity.py), LitePyramid recall is the human side.
"""

from __future__ import annotations

import argparse
import json
import re
import sys
import tempfile
import time
from collections import defaultdict
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import DATA, need, save  # noqa: E402


def summeval_rows(docs: int | None, references: int | None = None) -> tuple[list[dict], dict]:
    rows = [json.loads(line) for line in open(need(DATA / "summeval" / "dev.jsonl"), encoding="utf-8")]
    ids = sorted({r["doc_id"] for r in rows})[:docs] if docs else None
    rows = [r for r in rows if ids is None or r["doc_id"] in ids]
    out = [{"id": r["doc_id"], "system": r["system_id"], "summary": r["summary"], "source": r["source"],
            "references": r["references"][:references] if references is not None else r["references"]} for r in rows]
    human = {(r["doc_id"], r["system_id"]): {k: r[k] for k in ("relevance", "fluency", "coherence", "consistency")}
             for r in rows}
    return out, human


def realsumm_rows(docs: int | None) -> tuple[list[dict], dict]:
    sys.path.insert(0, str(Path(__file__).resolve().parent))
    from bench.coverage_validity import clean, load

    found = load(docs)
    out, human = [], {}
    for doc_id, rows in found.items():
        seen = defaultdict(int)
        for r in rows:
            # two REALSumm systems share a name: the second gets "#2" here (assess needs one row per
            # (id, system)); name_of merges them back, as the validity bench groups by name
            seen[r["system"]] += 1
            system = r["system"] + (f"#{seen[r['system']]}" if seen[r["system"]] > 1 else "")
            out.append({"id": str(doc_id), "system": system, "summary": clean(r["summary"]),
                        "source": clean(rows[0]["reference"])})
            human[(str(doc_id), system)] = {"litepyramid_recall": r["scores"]["litepyramid_recall"]}
    return out, human


def run(rows: list[dict], workers: int, folder: Path, name: str) -> tuple:
    from summarize.assess import AssessConfig, run_assess

    path = folder / f"{name}.jsonl"
    path.write_text("".join(json.dumps(r) + "\n" for r in rows), encoding="utf-8")
    started = time.perf_counter()
    result = run_assess(path, folder / f"{name}-out", AssessConfig(workers=workers), progress=lambda m: None)
    seconds = time.perf_counter() - started
    records = [json.loads(line) for line in open(folder / f"{name}-out" / "results.jsonl", encoding="utf-8")]
    return result, seconds, records


def taus(table, records: list[dict], human: dict, pairs: list[tuple[str, str]], name_of=lambda s: s) -> dict:
    """System-level tau two ways: from the table's per-system means, and through stats'
    (document, system, human, metric) path as the validity benches call it."""
    from summarize.assess import stats

    out = {}
    for metric, rating in [(m, r) for m, r in pairs if m in table.metrics]:
        by_system_h = stats.system_means((name_of(r["system"]), human[(r["id"], r["system"])][rating])
                                         for r in records if r["status"] == "scored")
        means = defaultdict(list)
        for system, mean in table.means(metric).items():
            means[name_of(system)].append(mean)
        # a merged name's mean is the mean of its parts' means (each part has every document)
        from_table = stats.tau_of_means(by_system_h, {s: sum(v) / len(v) for s, v in means.items()})
        bench_rows = [(r["id"], name_of(r["system"]), human[(r["id"], r["system"])][rating], r["values"][metric])
                      for r in records if r["status"] == "scored"]
        out[f"{metric} vs {rating}"] = {"system_level_from_table": round(from_table, 4),
                                        "system_level_bench_path": round(stats.system_level_tau(bench_rows), 4),
                                        "summary_level": round(stats.summary_level_tau(bench_rows), 4)}
    return out


def extra_summary_cost(rows: list[dict], repeats: int) -> dict:
    """In one process, models loaded: one source's first summary (source-side work included)
    against its sixteen summaries together; cost per further summary as a ratio of the first."""
    from scoring.evaluate import default_evaluator
    from summarize.assess.job import AssessJob
    from summarize.reading import parse_text

    job = AssessJob()
    job.prepare(None)
    by_doc = defaultdict(list)
    for r in rows:
        by_doc[r["id"]].append(r)
    firsts, alls = [], []
    for doc_id in list(by_doc)[:repeats]:
        group = by_doc[doc_id]
        document = parse_text(group[0]["source"], source=doc_id)
        items = [{"key": f"{doc_id}:{r['system']}", "summary": r["summary"], "references": []} for r in group]
        default_evaluator.cache_clear()  # a cold evaluator: nothing of this source cached
        start = time.perf_counter()
        job(document, {"keywords": None}, {"rows": items[:1]})
        firsts.append(time.perf_counter() - start)
        default_evaluator.cache_clear()
        start = time.perf_counter()
        job(document, {"keywords": None}, {"rows": items})
        alls.append((time.perf_counter() - start, len(items)))
    first = sorted(firsts)[len(firsts) // 2]
    further = sorted((t - f) / (n - 1) for (t, n), f in zip(alls, firsts))
    each = further[len(further) // 2]
    return {"sources": len(firsts), "first_s": round(first, 3), "further_each_s": round(each, 3),
            "ratio": round(each / first, 3), "summaries_per_source": alls[0][1]}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--docs", type=int, default=None, help="first N SummEval dev articles (default all 50)")
    parser.add_argument("--workers", default="1,2", help="local worker counts to time, e.g. 1,2")
    parser.add_argument("--realsumm-docs", type=int, default=10, help="REALSumm documents (0: skip)")
    parser.add_argument("--cost-sources", type=int, default=3, help="sources timed for the extra-summary cost")
    parser.add_argument("--references", type=int, default=None,
                        help="references per SummEval row (default all 11; 0: reference-free scores only)")
    parser.add_argument("--name", default="assess_bench")
    args = parser.parse_args(argv)

    rows, human = summeval_rows(args.docs, args.references)
    payload = {"summeval": {"documents": len({r["id"] for r in rows}), "rows": len(rows), "runs": [],
                            "references_per_row": args.references if args.references is not None else 11},
               "command": "bench/assess_bench.py " + " ".join(sys.argv[1:] if argv is None else argv)}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for workers in [int(w) for w in args.workers.split(",") if w]:
            result, seconds, records = run(rows, workers, folder, f"summeval-{workers}")
            payload["summeval"]["runs"].append({"workers": workers, "seconds": round(seconds, 1),
                                                "rows_per_minute": round(60 * result.scored / seconds, 2),
                                                "scored": result.scored, "failed": result.failed})
            save(args.name, payload)  # what is measured so far survives an interrupted run
            print(f"SummEval dev {len(rows)} rows, {workers} worker(s): {seconds:.1f} s, "
                  f"{60 * result.scored / seconds:.1f} rows per minute, failed {result.failed}", flush=True)
        payload["summeval"]["tau"] = taus(result.table, records, human,
                                          [("coverage", "relevance"), ("combined", "relevance"),
                                           ("fluency", "fluency"), ("rouge2", "relevance")])
        payload["summeval"]["systems"] = {s: round(m, 4) for s, m in result.table.means().items()}
        save(args.name, payload)
        if args.realsumm_docs:
            rrows, rhuman = realsumm_rows(args.realsumm_docs)
            result, seconds, records = run(rrows, max(int(w) for w in args.workers.split(",")), folder, "realsumm")
            payload["realsumm"] = {"documents": args.realsumm_docs, "rows": len(rrows), "seconds": round(seconds, 1),
                                   "tau": taus(result.table, records, rhuman, [("coverage", "litepyramid_recall")],
                                               name_of=lambda s: re.sub(r"#\d+$", "", s))}
    payload["extra_summary_cost"] = extra_summary_cost(rows, args.cost_sources)
    print(json.dumps({k: v for k, v in payload.items()}, indent=1))
    print(f"written {save(args.name, payload)}")


if __name__ == "__main__":
    main()
