"""The editor's comparison against plain scoring: how much longer `compare` makes one wait.

    BOILDOWN_DTYPE=float32 .venv/bin/python bench/compare_speed.py [--repeats 3]

Source: the demo's annual water quality report (invented; 5,889 words once read, 5,941 by
`wc -w` on the file: the demo report of about 5,000 words). Candidates: its two hand-written abstracts and boildown's own 150-word summary
(made once, before any timing). In one run, alternating so that the machine's load falls on
both alike, each command runs as its own process, as a user waits for it (start-up and model
loading included):

    boildown score   REPORT good weak own -q
    boildown compare REPORT good weak own --html page.html -q

Medians of ``--repeats`` runs each (3 by default). Target (issue 22): compare at most 1.2x score.
Then one in-process run of each, models already loaded and every cache of the source emptied,
timed by stage, says where the time goes.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import ROOT, save  # noqa: E402

REPORT = ROOT / "demo_docs" / "annual_water_quality_report.txt"
ABSTRACTS = (ROOT / "demo_docs" / "annual_water_quality_report.abstract_good.txt",
             ROOT / "demo_docs" / "annual_water_quality_report.abstract_weak.txt")
TARGET = 1.2


def command(kind: str, candidates: list[Path], page: Path) -> list[str]:
    args = [sys.executable, "-m", "summarize", kind, str(REPORT), *map(str, candidates), "-q"]
    return args + (["--html", str(page)] if kind == "compare" else [])


def timed_run(args: list[str]) -> float:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    start = time.perf_counter()
    done = subprocess.run(args, cwd=ROOT, env=env, capture_output=True, text=True)
    took = time.perf_counter() - start
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(args[2:4])} failed: {done.stderr.strip()[-500:]}")
    return took


def stages(candidates: list[Path]) -> dict[str, dict[str, float]]:
    """Seconds per stage of compare and of score in this process (models loaded first; a fresh
    evaluator and emptied caches for each, so the source's work is done again)."""
    from scoring.evaluate import Evaluator
    from bench.common import forget_sources
    from scoring.lm import CausalLM
    from summarize import compare as comparing
    from summarize import report, report_html
    from summarize.reading import read_candidates, read_document

    def fresh() -> tuple[Evaluator, dict[str, float]]:
        forget_sources()  # key words and verb checks
        CausalLM.tokens.cache_clear()
        evaluator, spent = Evaluator(), {}
        for name, scorer in evaluator.scorers.items():
            def timed(*a, _name=name, _run=scorer.score_many, **k):
                start = time.perf_counter()
                try:
                    return _run(*a, **k)
                finally:
                    spent[f"scoring: {_name}"] = spent.get(f"scoring: {_name}", 0.0) + time.perf_counter() - start
            scorer.score_many = timed
        return evaluator, spent

    out = {}
    for kind in ("score", "compare"):
        evaluator, spent = fresh()
        clock = time.perf_counter()
        document = read_document(REPORT)
        pairs = read_candidates([str(c) for c in candidates])
        spent["reading"] = time.perf_counter() - clock
        clock = time.perf_counter()
        if kind == "score":
            ranked = evaluator.evaluate(pairs, source=document.text)
            report.table(ranked)
        else:
            result = comparing.compare(document, pairs, evaluator=evaluator)
        scored = sum(v for k, v in spent.items() if k.startswith("scoring: "))
        spent["the rest of scoring and comparing (key words, sentences, links)"] = (
            time.perf_counter() - clock - scored)
        if kind == "compare":
            clock = time.perf_counter()
            report_html.render_html(result)
            spent["the page (marks, drafts, separation, HTML)"] = time.perf_counter() - clock
        out[kind] = {k: round(v, 3) for k, v in spent.items()}
        print(f"  in process, {kind}: " + ", ".join(f"{k} {v:.1f} s" for k, v in out[kind].items()))
    return out


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args(argv)
    if args.repeats < 3:
        raise SystemExit("--repeats must be at least 3 (the result is a median)")

    from scoring.models import causal_in_dtype, load_causal, load_encoder, load_spacy, resolve_dtype
    from scoring.text import count_words
    from summarize.pipeline import summarize
    from summarize.reading import read_document

    with tempfile.TemporaryDirectory(prefix="boildown-compare-speed-") as tmp:
        own = Path(tmp) / "annual_water_quality_report.boildown.txt"
        own.write_text(summarize(read_document(REPORT), 150).text + "\n", encoding="utf-8")
        candidates = [*ABSTRACTS, own]
        page = Path(tmp) / "page.html"
        runs: dict[str, list[float]] = {"score": [], "compare": []}
        loads = []
        for k in range(args.repeats):
            for kind in (("score", "compare") if k % 2 == 0 else ("compare", "score")):
                loads.append(os.getloadavg()[0])
                runs[kind].append(timed_run(command(kind, candidates, page)))
                print(f"  run {k + 1}: {kind} {runs[kind][-1]:.1f} s (load {loads[-1]:.1f})")
        load_causal(), causal_in_dtype("auto"), load_encoder(), load_spacy()
        by_stage = stages(candidates)
        candidate_words = [count_words(c.read_text(encoding="utf-8")) for c in candidates]
    median = {kind: statistics.median(times) for kind, times in runs.items()}
    ratio = median["compare"] / median["score"]
    print(f"score {median['score']:.1f} s, compare {median['compare']:.1f} s (medians of {args.repeats}): "
          f"{ratio:.2f}x, target at most {TARGET}x")
    out = save("compare_speed", {
        "source": REPORT.name, "source_words": read_document(REPORT).word_count,
        "candidates": [c.name for c in candidates], "candidate_words": candidate_words,
        "dtype": resolve_dtype("auto"), "repeats": args.repeats, "runs": runs,
        "median_s": median, "ratio": ratio, "target": TARGET, "met": ratio <= TARGET,
        "load_average": {"min": min(loads), "max": max(loads)}, "stages_in_process": by_stage,
    })
    print(f"written {out}")


if __name__ == "__main__":
    main()
