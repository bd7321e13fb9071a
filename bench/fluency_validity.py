"""Fluency against people: LongSciVerify reviewers' fluency ratings (1-3).

Three reviewers per domain (arXiv, PubMed) rated the fluency of three systems' summaries of
15 papers each. We score each summary's fluency (on its own: the reference perplexity is the
fixed REFERENCE_LOG_PP, since not every rated paper's text is in the release) and report the
Kendall tau and Spearman rho with the reviewers' mean rating, over all summaries and within
papers (mean over papers of the tau across the three systems), whatever they are.

Column mapping (an assumption from the files' column order): model_1 = gencomparesumabs,
model_2 = dancersum, model_3 = section_conditional.

    .venv/bin/python bench/fluency_validity.py
"""

from __future__ import annotations

import csv
import math
import sys
from collections import defaultdict
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import DATA, kendall, need, save  # noqa: E402

SYSTEMS = ("gencomparesumabs", "dancersum", "section_conditional")


def load():
    folder = need(DATA / "longdoc" / "human_eval_results" / "LongSciVerify")
    ratings = defaultdict(list)
    texts = {}
    for path in sorted(folder.glob("*_reviewer_*.csv")):
        domain = path.name.split("_")[0]
        with open(path, encoding="utf-8-sig") as handle:
            for row in csv.DictReader(handle):
                for k, system in enumerate(SYSTEMS, 1):
                    key = (domain, row["id"], system)
                    texts[key] = row[system]
                    value = row.get(f"model_{k}_fluency", "").strip()
                    if value:
                        ratings[key].append(float(value))
    return texts, {k: sum(v) / len(v) for k, v in ratings.items() if v}


def main():
    from scipy.stats import spearmanr

    from scoring.fluency import FluencyScorer

    texts, human = load()
    keys = sorted(human)
    scorer = FluencyScorer()
    scores = scorer.score_many([texts[k] for k in keys])
    ours = {k: s.value for k, s in zip(keys, scores)}
    neg_pp = {k: -math.log(s.perplexity) for k, s in zip(keys, scores)}
    out = {}
    for name, values in (("fluency value", ours), ("-log perplexity", neg_pp)):
        a = [human[k] for k in keys]
        b = [values[k] for k in keys]
        per_paper = defaultdict(list)
        for k in keys:
            per_paper[k[:2]].append((human[k], values[k]))
        taus = [kendall([x for x, _ in v], [y for _, y in v]) for v in per_paper.values() if len(v) == 3]
        taus = [t for t in taus if not math.isnan(t)]
        out[name] = {
            "kendall_all": round(kendall(a, b), 4),
            "spearman_all": round(float(spearmanr(a, b).statistic), 4),
            "kendall_within_paper_mean": round(sum(taus) / len(taus), 4) if taus else None,
            "papers_with_ties_skipped": len(per_paper) - len(taus),
        }
    print(f"LongSciVerify fluency ratings: {len(keys)} summaries ({len({k[:2] for k in keys})} papers x 3 systems)")
    print(f"{'ours':18s} {'tau (all)':>10s} {'rho (all)':>10s} {'tau within paper':>17s}")
    for name, r in out.items():
        print(f"{name:18s} {r['kendall_all']:10.3f} {r['spearman_all']:10.3f} {r['kendall_within_paper_mean'] or float('nan'):17.3f}")
    mean_by_system = {s: round(sum(human[k] for k in keys if k[2] == s) / sum(1 for k in keys if k[2] == s), 3) for s in SYSTEMS}
    ours_by_system = {s: round(sum(ours[k] for k in keys if k[2] == s) / sum(1 for k in keys if k[2] == s), 3) for s in SYSTEMS}
    print("mean human rating by system:", mean_by_system)
    print("mean boildown fluency by system:", ours_by_system)
    path = save("fluency_validity", {"summaries": len(keys), "correlations": out, "human_by_system": mean_by_system,
                                     "ours_by_system": ours_by_system, "signature": str(scorer.signature())})
    print(f"written {path}")


if __name__ == "__main__":
    main()
