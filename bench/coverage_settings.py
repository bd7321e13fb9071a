"""Coverage settings on long sources: does a setting change how coverage orders candidates?

Re-scores the candidates saved by the last ranking run on SQuALITY dev
(``bench/results/quality_ranking.json``: 25 stories, boildown's candidates plus LEAD and
TextRank at the same budget, each with its ROUGE-2 F1 against the human summaries) with the
coverage scorer under the settings given, and reports, per setting, the mean over stories of
the Kendall tau-b between coverage (share) and ROUGE-2, and the seconds spent. REALSumm
(``bench/coverage_validity.py``) checks coverage against people but its sources are short, so
settings that only matter on long sources (the window of left context, the number of key
words) are checked here, on the sources the speed target is about.

    .venv/bin/python bench/coverage_settings.py --set window=32 --set window=24 [--stories 25]

Each ``--set`` is one setting to try (``key=value[,key=value]``, or ``defaults``); without any,
the defaults alone. Writes ``bench/results/coverage_settings.json`` (or ``--name``).
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import RESULTS, kendall, need, save  # noqa: E402


def parse_setting(text: str) -> dict:
    """``"window=24,keywords=32"`` -> ``{"window": 24, "keywords": 32}`` (typed as the config field)."""
    from scoring.coverage import CoverageConfig

    types = {f.name: f.type for f in dataclasses.fields(CoverageConfig)}
    out = {}
    for part in filter(None, text.split(",")):
        key, _, value = part.partition("=")
        key = key.strip()
        if key not in types:
            raise SystemExit(f"unknown coverage setting {key!r}; known: {', '.join(sorted(types))}")
        kind = types[key] if isinstance(types[key], str) else types[key].__name__
        out[key] = {"int": int, "float": float, "bool": lambda v: v.lower() in ("1", "true", "yes")}.get(kind, str)(value.strip())
    return out


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--set", action="append", default=[], help="a coverage setting to try, key=value[,key=value]")
    parser.add_argument("--stories", type=int, default=None, help="first N stories only (default: all saved)")
    parser.add_argument("--name", default="coverage_settings")
    args = parser.parse_args(argv)

    from bench import data
    from scoring.coverage import CoverageConfig, CoverageScorer
    from scoring.models import resolve_dtype, set_threads

    set_threads()
    saved = json.loads(need(RESULTS / "quality_ranking.json").read_text())
    stories = saved["results"]["ranking_squality_dev"]["evidence"][: args.stories]
    sources = {ex.id: ex.source_text for ex in data.squality("dev")}
    settings = [{} if s == "defaults" else parse_setting(s) for s in args.set] or [{}]
    rows = []
    for setting in settings:
        scorer = CoverageScorer(CoverageConfig(**setting))
        taus, start = [], time.perf_counter()
        for story in stories:
            texts = [c["text"] for c in story["candidates"]]
            shares = [r.share for r in scorer.score_many(texts, source=sources[story["story"]])]
            taus.append(kendall([c["rouge2"] for c in story["candidates"]], shares))
        seconds = time.perf_counter() - start
        label = ",".join(f"{k}={v}" for k, v in setting.items()) or "defaults"
        rows.append({"setting": label, "config": dataclasses.asdict(scorer.config), "mean_tau": statistics.mean(taus),
                     "taus": taus, "seconds": seconds, "candidates": sum(len(s["candidates"]) for s in stories)})
        print(f"{label:<28} mean tau {rows[-1]['mean_tau']:.3f}  {seconds:.0f} s", flush=True)
    save(args.name, {"stories": len(stories), "dtype": resolve_dtype("auto"), "ranking_run": saved.get("when"),
                     "results": rows})


if __name__ == "__main__":
    main()
