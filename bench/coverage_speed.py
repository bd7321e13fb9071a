"""Coverage speed: one 150-word summary against 5,000 and 20,000-word sources, and ten
candidates against one source; medians on this machine with the models already loaded.

    .venv/bin/python bench/coverage_speed.py [--repeats 3]

Targets (the scoring issue): 5,000 words in at most 3 s; 20,000 words at most 4.5x that;
ten candidates at most 10x one (the no-summary baseline is reused). A cold call includes
everything a first score of a new source needs: tagging, key words, the plan, the filler
baseline pass and the summary pass. Effective GFLOPS count 2 x parameters per token the
model reads (the vocabulary projection only where a blank is scored), against the matmul
peak measured in the same run.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import ROOT, matmul_peak_gflops, save  # noqa: E402


def words(text: str, n: int) -> str:
    return " ".join(text.split()[:n])


def corpus(n: int) -> str:
    """Demo documents (invented), concatenated in a fixed order until n words."""
    from summarize.reading import read_document

    parts = []
    for name in ("annual_water_quality_report.txt", "catchment_strategy_2030.md", "asset_renewal_plan.md",
                 "customer_complaints_review.html", "board_minutes_march.txt", "incident_report_pumping_station.txt"):
        parts.append(read_document(ROOT / "demo_docs" / name).text)
    text = "\n\n".join(parts)
    if len(text.split()) < n:
        raise SystemExit(f"demo documents hold only {len(text.split())} words; need {n}")
    # keep paragraph breaks: cut at the paragraph where the count passes n
    out, count = [], 0
    for para in text.split("\n\n"):
        k = len(para.split())
        if count + k > n:
            out.append(words(para, n - count))
            break
        out.append(para)
        count += k
    return "\n\n".join(out)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args(argv)

    import torch

    from scoring.coverage import CoverageScorer
    from scoring.models import causal_in_dtype, load_causal, resolve_dtype, set_threads

    threads = set_threads()
    summary = words((ROOT / "demo_docs" / "annual_water_quality_report.abstract_good.txt").read_text(), 150)
    others = [words(corpus(6000).split("\n\n", 3 + k)[-1], 150) for k in range(9)]
    load_causal()
    causal_in_dtype(CoverageScorer().config.dtype)
    results = {}
    sources = {5000: corpus(5000), 20000: corpus(20000)}
    for n, source in sources.items():
        cold, warm, tokens = [], [], []
        for _ in range(args.repeats):
            scorer = CoverageScorer()  # fresh: nothing cached for this source
            from scoring.keywords import _choose_cached

            _choose_cached.cache_clear()
            start = time.perf_counter()
            res = scorer.score(summary, source=source)
            cold.append(time.perf_counter() - start)
            start = time.perf_counter()
            scorer.score(summary, source=source)  # baseline and plan cached
            warm.append(time.perf_counter() - start)
            plan = scorer._plan(source)
            prefix, _ = scorer._prefix_ids(summary)
            read = len(prefix) + sum(b - a for a, b in plan.ranges)
            tokens.append((read, len(plan.positions)))
        results[n] = {"cold_s": statistics.median(cold), "warm_s": statistics.median(warm),
                      "tokens_read_per_pass": tokens[0][0], "scored_tokens": tokens[0][1],
                      "blanks": res.n_blanks, "coverage": res.share}
        print(f"{n:>6} words: first score {results[n]['cold_s']:.2f} s (median of {args.repeats}), "
              f"another candidate {results[n]['warm_s']:.2f} s; {tokens[0][0]} tokens per pass, {res.n_blanks} blanks")
    ten = []
    for _ in range(args.repeats):
        scorer = CoverageScorer()
        from scoring.keywords import _choose_cached

        _choose_cached.cache_clear()
        start = time.perf_counter()
        scorer.score_many([summary] + others, source=sources[5000])
        ten.append(time.perf_counter() - start)
    ratio_len = results[20000]["cold_s"] / results[5000]["cold_s"]
    ratio_ten = statistics.median(ten) / results[5000]["cold_s"]
    print(f"ten candidates against 5,000 words: {statistics.median(ten):.2f} s = {ratio_ten:.1f}x one candidate")
    print(f"20,000 words / 5,000 words: {ratio_len:.2f}x")

    model = causal_in_dtype(CoverageScorer().config.dtype)
    params = sum(p.numel() for name, p in model.named_parameters() if "embed_tokens" not in name)
    per_token = 2 * (params - model.lm_head.weight.numel() if model.lm_head.weight is not model.model.embed_tokens.weight else params)
    head = 2 * model.lm_head.weight.numel()
    r = results[5000]
    flops = 2 * r["tokens_read_per_pass"] * per_token + 2 * r["scored_tokens"] * head  # baseline + summary pass
    dtype = resolve_dtype(CoverageScorer().config.dtype)  # "auto" -> what this CPU runs fast
    achieved = flops / r["cold_s"] / 1e9
    peak = matmul_peak_gflops(dtype)
    peak32 = matmul_peak_gflops("float32") if dtype != "float32" else peak
    print(f"effective {achieved:.1f} GFLOPS in {dtype} (model matmuls only, first score of 5,000 words) "
          f"against a measured {dtype} matmul peak of {peak:.0f} GFLOPS ({100 * achieved / peak:.0f}%); fp32 peak {peak32:.0f}")
    out = save("coverage_speed", {"threads": threads, "torch_threads": torch.get_num_threads(), "by_length": results,
                                  "ten_candidates_s": statistics.median(ten), "ratio_20k_to_5k": ratio_len,
                                  "ratio_ten_to_one": ratio_ten, "effective_gflops": achieved, "dtype": dtype,
                                  "matmul_peak_gflops": peak, "matmul_peak_fp32_gflops": peak32,
                                  "signature": str(CoverageScorer().signature())})
    print(f"written {out}")


if __name__ == "__main__":
    main()
