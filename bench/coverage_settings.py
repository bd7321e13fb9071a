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
the defaults alone. ``--int8`` adds a speed experiment that is not a boildown setting: the
defaults with the causal model's linear layers quantised to int8 on the fly
(``torch.ao.quantization.quantize_dynamic``, per-channel weights; the MLP down projections and
the last two layers stay float32, the layers most hurt by it in a quick look at per-token
log-probabilities). Writes ``bench/results/coverage_settings.json`` (or ``--name``).
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


# the layers --int8 leaves in float32 (name suffixes, or prefixes for whole layers)
INT8_KEEP = ("down_proj", "layers.28.", "layers.29.")


def int8_copy(model, keep: tuple[str, ...] = INT8_KEEP):
    """A copy of a causal model whose decoder's linear layers are dynamically quantised to int8,
    except those named in ``keep``; the vocabulary layer stays float32."""
    import copy
    import warnings

    import torch
    from torch.ao.quantization import per_channel_dynamic_qconfig, quantize_dynamic

    def kept(name: str) -> bool:
        return any(name.endswith(k) or (k.startswith("layers.") and name.startswith(k)) for k in keep)

    if "onednn" in torch.backends.quantized.supported_engines:
        torch.backends.quantized.engine = "onednn"  # the faster engine here (one 1,480-token pass: 1.43x fp32 against 1.32x with fbgemm)
    out = copy.deepcopy(model)
    spec = {name: per_channel_dynamic_qconfig for name, mod in out.model.named_modules()
            if isinstance(mod, torch.nn.Linear) and not kept(name)}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # torch.ao's deprecation notice
        out.model = quantize_dynamic(out.model, spec)
    return out


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--set", action="append", default=[], help="a coverage setting to try, key=value[,key=value]")
    parser.add_argument("--int8", action="store_true", help="also run the defaults on an int8 copy of the causal model")
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
    settings = [{} if s == "defaults" else parse_setting(s) for s in args.set] or ([] if args.int8 else [{}])
    runs = [(setting, False) for setting in settings] + ([({}, True)] if args.int8 else [])
    rows = []
    for setting, int8 in runs:
        scorer = CoverageScorer(CoverageConfig(**setting))
        if int8:
            from scoring.lm import CausalLM
            from scoring.models import causal_in_dtype

            # the scorer's model wrapper, replaced before its first use (cached properties)
            lm = CausalLM("float32", scorer.config.batch_tokens)
            lm.__dict__["model"] = int8_copy(causal_in_dtype("float32"))
            scorer.__dict__["lm"] = lm
        taus, start = [], time.perf_counter()
        for story in stories:
            texts = [c["text"] for c in story["candidates"]]
            shares = [r.share for r in scorer.score_many(texts, source=sources[story["story"]])]
            taus.append(kendall([c["rouge2"] for c in story["candidates"]], shares))
        seconds = time.perf_counter() - start
        label = "int8" if int8 else ",".join(f"{k}={v}" for k, v in setting.items()) or "defaults"
        rows.append({"setting": label, "config": dataclasses.asdict(scorer.config), "mean_tau": statistics.mean(taus),
                     "taus": taus, "seconds": seconds, "candidates": sum(len(s["candidates"]) for s in stories)})
        print(f"{label:<28} mean tau {rows[-1]['mean_tau']:.3f}  {seconds:.0f} s", flush=True)
    save(args.name, {"stories": len(stories), "dtype": resolve_dtype("auto"), "ranking_run": saved.get("when"),
                     "results": rows})


if __name__ == "__main__":
    main()
