"""How close each model stage runs to this machine's matmul peak, and what a further candidate
costs against the first (issue 21, items 1 and 2), all in one run.

    BOILDOWN_DTYPE=float32 .venv/bin/python bench/model_rates.py [--repeats 3]

The fp32 matmul peak (2048 x 2048, the same threads) is measured at the start and at the end
of the run; the stages are timed between. A stage's FLOPs are counted from the shapes actually
run (forward hooks, ``bench/flops.py``): every linear layer, and attention's two products
under the causal mask; effective rate = FLOPs / wall time. Stages, on a 5,000-word demo source
and a 150-word summary: coverage's pass for a further candidate (its prefix, then the window
rows of the key words it carries, read after it), fluency's read of the summary, fluency's reference read of the source
sentences, and the MiniLM encoder over the source's sentences.

Item 1: with a fresh evaluator (coverage and fluency; nothing of the source cached), the first
candidate's full scoring cost, then two further candidates' (different ones each repeat): one whose
prefix falls in the first's 32-token length bucket (its filler baseline is cached: the usual case
for candidates cut to one budget), then one in a bucket not seen yet (it pays a fresh baseline
pass over every window); medians of ``--repeats``.
One torch profile of a coverage pass says where the time goes (by operator).
The load average at the start and end is recorded: the machine is shared.
"""

from __future__ import annotations

import os
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import ROOT, forget_sources, median_peak, save, timing_args  # noqa: E402
from bench.coverage_speed import corpus, words  # noqa: E402
from bench.flops import FlopCounter  # noqa: E402


def timed(fn, repeats: int):
    """Median wall time of ``fn()`` over ``repeats`` calls, and the last call's value."""
    times, value = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        value = fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times), times, value


def profile_shares(fn, top: int = 8) -> list[tuple[str, float]]:
    """Share of the CPU time of one call of ``fn`` by operator (self time), largest first."""
    from torch.profiler import ProfilerActivity, profile

    with profile(activities=[ProfilerActivity.CPU]) as prof:
        fn()
    rows = [(e.key, e.self_cpu_time_total) for e in prof.key_averages()]
    total = sum(t for _, t in rows) or 1
    rows.sort(key=lambda r: -r[1])
    return [(name, round(t / total, 4)) for name, t in rows[:top]]


def main(argv=None):
    args = timing_args(__doc__, argv, words=5000)

    import torch

    from scoring.coverage import CoverageScorer, _carried
    from scoring.evaluate import EvalConfig, Evaluator
    from scoring.fluency import FluencyScorer
    from scoring.models import causal_in_dtype, load_causal, resolve_dtype, set_threads
    from scoring.text import split_sentences
    from summarize.embed import _encoder, embed

    threads = set_threads()
    load_start = os.getloadavg()
    dtype = resolve_dtype("auto")
    load_causal()
    causal = causal_in_dtype("auto")
    encoder = _encoder()[0]
    source = corpus(args.words)
    summary = words((ROOT / "demo_docs" / "annual_water_quality_report.abstract_good.txt").read_text(), 150)
    others = [words(corpus(6000).split("\n\n", 3 + k)[-1], 150) for k in range(args.repeats + 1)]
    same, fresh = _by_bucket(CoverageScorer(), summary, args.repeats)
    peak_start = median_peak()

    # ---- item 1: a fresh evaluator, the first candidate, then further ones (same bucket, new bucket)
    first, further, further_new = [], [], []
    for r in range(args.repeats):
        forget_sources()
        ev = Evaluator(EvalConfig())
        for text, times in ((summary, first), (same[r], further), (fresh[r], further_new)):
            start = time.perf_counter()
            ev.evaluate([("candidate", text)], source=source)
            times.append(time.perf_counter() - start)
    ratio = statistics.median(further) / statistics.median(first)
    ratio_new = statistics.median(further_new) / statistics.median(first)
    print(f"first candidate {statistics.median(first):.2f} s; a further one in its length bucket "
          f"{statistics.median(further):.2f} s: {ratio:.2f}x (target <= 0.25x); in a new bucket "
          f"{statistics.median(further_new):.2f} s: {ratio_new:.2f}x")

    # ---- item 2: each stage's effective rate
    stages = {}
    cov = CoverageScorer()
    cov.score(summary, source=source)  # plan and baseline cached: what is left is a candidate's pass
    plan = cov._plan(source)
    prefix, _ = cov._prefix_ids(others[-1])
    reads = [cov._rows_to_read(plan, _carried(plan, others[-1]))]  # the ranges of the key words it carries
    flu = FluencyScorer()
    flu.reference_log_pp(source)
    sentences = [s for s in split_sentences(source) if s.strip()]

    def stage(name, fn, counter_model):
        # the counted call is timed too (the hooks' own cost is a few microseconds per layer call)
        counter = FlopCounter(counter_model)
        with counter:
            start = time.perf_counter()
            fn()
            counted = time.perf_counter() - start
        _, runs, _ = timed(fn, args.repeats - 1)
        runs = [counted] + runs
        seconds = statistics.median(runs)
        stages[name] = {"seconds": seconds, "runs": runs, "gflop": counter.flops / 1e9,
                        "linear_gflop": counter.linear / 1e9, "attention_gflop": counter.attention / 1e9,
                        "tokens": counter.tokens, "gflops": counter.flops / seconds / 1e9}
        print(f"{name}: {seconds:.2f} s, {counter.flops / 1e9:.1f} GFLOP ({counter.tokens} tokens) "
              f"-> {stages[name]['gflops']:.1f} GFLOPS")

    stage("coverage pass (a further candidate)", lambda: cov._runs([prefix], plan, reads), causal)
    stage("fluency (a summary)", lambda: flu.model.logprobs([split_sentences(others[-1])]), causal)
    stage("fluency reference (source sentences)", lambda: flu.model.logprobs([[s] for s in _sample(sentences, 24)]), causal)
    stage("encoder (source sentences)", lambda: embed(sentences), encoder)
    shares = profile_shares(lambda: cov._runs([prefix], plan, reads))
    peak_end = median_peak()
    load_end = os.getloadavg()
    yardstick = statistics.median([peak_start, peak_end])
    for name, s in stages.items():
        s["share_of_peak"] = s["gflops"] / yardstick
        print(f"  {name}: {100 * s['share_of_peak']:.0f}% of the {yardstick:.0f} GFLOPS fp32 peak")
    print("coverage pass by operator:", ", ".join(f"{n} {100 * t:.0f}%" for n, t in shares))
    out = save("model_rates", {
        "threads": threads, "torch_threads": torch.get_num_threads(), "dtype": dtype, "source_words": args.words,
        "repeats": args.repeats, "first_s": statistics.median(first), "further_s": statistics.median(further),
        "first_runs": first, "further_runs": further, "further_to_first": ratio,
        "further_new_bucket_s": statistics.median(further_new), "further_new_bucket_runs": further_new,
        "further_new_bucket_to_first": ratio_new,
        "peak_fp32_gflops": {"start": peak_start, "end": peak_end, "used": yardstick},
        "stages": stages, "coverage_pass_profile": shares,
        "load_average": {"start": list(load_start), "end": list(load_end)},
        "window_tokens": sum(b - a for a, b in plan.ranges), "prefix_tokens": len(prefix),
    })
    print(f"written {out}")


def _by_bucket(cov, summary: str, n: int) -> tuple[list[str], list[str]]:
    """``n`` 150-word passages whose coverage prefix falls in ``summary``'s length bucket, and
    ``n`` whose bucket differs from it (and from each other's: each pays its own baseline)."""
    bucket = cov._prefix_ids(summary)[1]
    same, fresh, seen = [], [], {bucket}
    for size in (6000, 9000, 12000, 20000):
        for k in range(40):
            text = words(corpus(size).split("\n\n", 3 + k)[-1], 150 if k % 2 else 125)
            b = cov._prefix_ids(text)[1]
            if b == bucket and len(same) < n and text not in same:
                same.append(text)
            elif b not in seen and len(fresh) < n:
                fresh.append(text)
                seen.add(b)
            if len(same) == n and len(fresh) == n:
                return same, fresh
    raise SystemExit(f"found {len(same)} passages in the summary's bucket and {len(fresh)} in new ones, of {n}")


def _sample(items: list, n: int) -> list:
    """An even sample of ``n`` items (fluency's reference takes one like it)."""
    if len(items) <= n:
        return items
    return [items[round(i * (len(items) - 1) / (n - 1))] for i in range(n)]


if __name__ == "__main__":
    main()
