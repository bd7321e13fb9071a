"""Does coverage separate a summary that carries a document's findings from one that only names
its places, people and plant? Two checks, one model pass:

- pairs: bench/data/keyword_pairs.jsonl holds pairs of abstracts written for this project on
  the demo documents (invented text): "good" gives the findings, "weak" (about the same length)
  names the organisation, places, people and works and leaves the findings out. Target: good
  minus weak >= 10 points of coverage on every pair.
- own vs other: each SQuALITY dev story's first human plot summary against a human summary of
  the next story cut to the same word count (a fluent summary of the wrong story). Target: the
  own summary out-covers the other in >= 95% of stories.

Every key word's evidence (probabilities without and with the summary, the scorer's state, and
the state the probabilities alone would give) is written to --rows, outside the project (it
holds words of the external data), for bench/keyword_states.py.

    .venv/bin/python bench/keyword_pairs.py [--stories 25] [--rows FILE]
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench import data  # noqa: E402
from bench.common import save  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
PAIRS = ROOT / "bench" / "data" / "keyword_pairs.jsonl"
DEMO = ROOT / "demo_docs"
ROWS = Path("/tmp/boildown_keyword_rows.json")
PAIR_MARGIN = 10.0  # points of coverage (the target)
OWN_SHARE = 0.95


def load_pairs(path: Path = PAIRS) -> list[dict]:
    pairs = [json.loads(line) for line in path.read_text().splitlines() if line.strip()]
    for p in pairs:
        if not {"document", "name", "good", "weak"} <= set(p):
            raise ValueError(f"{path}: a pair needs document, name, good and weak: {sorted(p)}")
    return pairs


def rows_of(kind: str, source: str, summary: str, result) -> list[dict]:
    return [{"kind": kind, "word": k.word, "p0": k.p_without, "p1": k.p_with, "in_summary": k.in_summary,
             "state": k.status, "probability_state": k.probability_status, "summary": summary,
             "is_name": k.is_name}
            for k in result.keywords]


def run_pairs(scorer, pairs: list[dict], rows: list[dict]) -> list[dict]:
    from summarize.reading import read

    out = []
    for p in pairs:
        source = read(DEMO / p["document"]).text
        good, weak = scorer.score_many([p["good"], p["weak"]], source=source)
        rows += rows_of("demo", source, p["good"], good) + rows_of("demo", source, p["weak"], weak)
        out.append({"pair": p["name"], "document": p["document"], "good": round(100 * good.share, 1),
                    "weak": round(100 * weak.share, 1), "margin": round(100 * (good.share - weak.share), 1),
                    "good_missed": list(good.missed), "weak_recovered": list(weak.recovered),
                    "good_text": p["good"], "weak_text": p["weak"]})
        print(f"  {p['name']:22s} good {out[-1]['good']:5.1f}  weak {out[-1]['weak']:5.1f}  margin {out[-1]['margin']:5.1f}",
              file=sys.stderr)
    return out


def run_squality(scorer, stories: list, rows: list[dict], which: range | None = None) -> list[dict]:
    from scoring.text import count_words

    out = []
    for n in which if which is not None else range(len(stories)):
        ex = stories[n]
        own = ex.references[0]
        other = " ".join(stories[(n + 1) % len(stories)].references[0].split()[: count_words(own)])
        mine, theirs = scorer.score_many([own, other], source=ex.source_text)
        rows += rows_of("squality", ex.source_text, own, mine) + rows_of("squality", ex.source_text, other, theirs)
        out.append({"story": n, "own": round(100 * mine.share, 1), "other": round(100 * theirs.share, 1)})
        print(f"  SQuALITY dev story {n}: own {out[-1]['own']:.1f} other {out[-1]['other']:.1f}", file=sys.stderr)
    print(file=sys.stderr)
    return out


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--stories", type=int, default=25, help="SQuALITY dev stories (25 = all)")
    parser.add_argument("--start", type=int, default=0, help="first story to score (the other story is still the next)")
    parser.add_argument("--rows", type=Path, default=ROWS)
    parser.add_argument("--skip-pairs", action="store_true", help="SQuALITY only (e.g. to run the parts in parallel)")
    parser.add_argument("--name", default="keyword_pairs", help="results file name under bench/results/")
    parser.add_argument("--merge", type=Path, nargs="+", help="merge these results files into --name, no model run")
    args = parser.parse_args(argv)
    if args.merge:
        return merge(args.merge, args.name)

    from scoring.coverage import CoverageConfig, CoverageScorer

    # read="all": the same values as the default, with every key word's probability with the
    # summary measured (the probability states compared by bench/keyword_states.py need them)
    scorer = CoverageScorer(CoverageConfig(read="all"))
    rows: list[dict] = []
    started = time.perf_counter()
    pairs = [] if args.skip_pairs else run_pairs(scorer, load_pairs(), rows)
    try:
        stories = data.squality("dev")
    except data.DataMissing as exc:
        print(f"skipped SQuALITY: {exc}")
        stories = []
    own = run_squality(scorer, stories, rows, range(args.start, min(len(stories), args.start + args.stories)))
    finish(pairs, own, str(scorer.signature()), rows, args.rows, args.name, round(time.perf_counter() - started, 1))


def variant_margins(pairs: list[dict], rows: list[dict]) -> dict[str, dict]:
    """The pairs' margins (points) under the other totals of the same evidence
    (bench/coverage_variants.py, as on REALSumm in bench/coverage_validity.py): does weighting
    names down, or capping each key word's gain, separate findings from names?"""
    from bench.coverage_variants import totals

    by_summary: dict[str, list] = {}
    for r in rows:
        if r["kind"] == "demo" and r["p1"] is not None:
            by_summary.setdefault(r["summary"], []).append((r["p0"], r["p1"], bool(r["in_summary"]), r["is_name"]))
    texts = {p["pair"]: (p["good_text"], p["weak_text"]) for p in pairs if "good_text" in p}
    out: dict[str, dict] = {}
    for pair, (good, weak) in texts.items():
        a, b = totals(by_summary.get(good, [])), totals(by_summary.get(weak, []))
        for label in a:
            out.setdefault(label, {"margins": []})["margins"].append(round(100 * (a[label] - b[label]), 1))
    for v in out.values():
        v["min"], v["mean"] = min(v["margins"]), round(sum(v["margins"]) / len(v["margins"]), 1)
        v["at_target"] = sum(m >= PAIR_MARGIN for m in v["margins"])
    return out


def finish(pairs, own, signature, rows, rows_path, name, seconds):
    margins = [p["margin"] for p in pairs]
    wins = sum(s["own"] > s["other"] for s in own)
    summary = {
        "pairs": len(pairs),
        "pairs_min_margin": min(margins) if margins else None,
        "pairs_mean_margin": round(sum(margins) / len(margins), 1) if margins else None,
        "pairs_at_target": sum(m >= PAIR_MARGIN for m in margins),
        "stories": len(own),
        "own_wins": wins,
        "own_win_share": round(wins / len(own), 3) if own else None,
        "own_mean": round(sum(s["own"] for s in own) / len(own), 1) if own else None,
        "other_mean": round(sum(s["other"] for s in own) / len(own), 1) if own else None,
    }
    summary["variants"] = variant_margins(pairs, rows)
    if rows_path is not None:
        rows_path.write_text(json.dumps({"signature": signature, "rows": rows}))
    print(json.dumps(summary, indent=1))
    save(name, {"summary": summary, "pairs": pairs, "squality": own, "signature": signature, "seconds": seconds})


def merge(paths: list[Path], name: str):
    """One results file from runs made in slices (--skip-pairs/--start in parallel processes)."""
    runs = [json.loads(p.read_text()) for p in paths]
    if len({r["signature"] for r in runs}) != 1:
        raise SystemExit("the runs were made with different coverage settings: not merged")
    pairs = [p for r in runs for p in r["pairs"]]
    own = sorted((s for r in runs for s in r["squality"]), key=lambda s: s["story"])
    finish(pairs, own, runs[0]["signature"], [], None, name, sum(r["seconds"] for r in runs))


if __name__ == "__main__":
    main()
