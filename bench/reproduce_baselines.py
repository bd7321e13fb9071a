"""Reproduce the extractive baselines' ROUGE figures of ../shared/data/README.md.

Runs LEAD, TextRank, LexRank and the greedy ROUGE oracle (bench/baselines.py) on SQuALITY test
(52 stories) and LongSciVerify (30 papers) at the references' length in words, scores them with
rouge-score 0.1.2 (ROUGE-1/2/Lsum F1 x 100, stemming on, best of the references per type, as
``score_multi`` does; sentences one per line for Lsum), prints them beside the README's
figures, and saves bench/results/baselines.json (a partial run: baselines_partial.json).

    OMP_NUM_THREADS=1 .venv/bin/python -m bench.reproduce_baselines [--limit N] [--systems lead,oracle]

``rouge_table`` is the scoring step, reused by the quality benchmark.
"""

from __future__ import annotations

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")  # before numpy: one thread, benchmarks share the machine
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import argparse  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from importlib.metadata import PackageNotFoundError, version  # noqa: E402

from bench import data  # noqa: E402
from bench.baselines import BASELINES, oracle  # noqa: E402
from bench.common import save  # noqa: E402
from scoring.text import count_words, split_sentences  # noqa: E402

ROUGE_TYPES = ("rouge1", "rouge2", "rougeLsum")
SYSTEMS = ("lead", "textrank", "lexrank", "oracle")
DATASETS = ("squality", "longsciverify")

# ../shared/data/README.md, "Reference figures measured on this data": R1 / R2 / RLsum F1 x 100.
README_FIGURES = {
    "squality": {
        "lead": (40.10, 7.54, 38.41),
        "textrank": (43.16, 9.03, 40.98),
        "lexrank": (42.98, 8.94, 41.22),
        "oracle": (55.52, 16.68, 51.99),
    },
    "longsciverify": {
        "lead": (37.54, 9.89, 32.89),
        "textrank": (41.98, 14.18, 36.43),
        "lexrank": (43.80, 15.40, 38.30),
        "oracle": (60.17, 32.26, 52.87),
    },
}


def rouge_table(system_outputs: dict[str, list[str]], examples: list[data.Example]) -> dict[str, dict]:
    """Mean ROUGE-1/2/Lsum F1 x 100 of each system against the examples' references.

    ``system_outputs[name][i]`` is the summary of ``examples[i]``, sentences one per line.
    References are split into sentences (``split_sentences``) and put one per line for
    ROUGE-Lsum. For each ROUGE type the best-scoring reference counts (rouge-score's
    ``score_multi``). Returns ``{name: {"rouge1", "rouge2", "rougeLsum": mean, "n": count,
    "words": mean summary words, "per_example": [[r1, r2, rLsum], ...]}}``.
    """
    from rouge_score.rouge_scorer import RougeScorer

    scorer = RougeScorer(list(ROUGE_TYPES), use_stemmer=True)
    references = [["\n".join(split_sentences(r)) for r in ex.references] for ex in examples]
    table = {}
    for name, outputs in system_outputs.items():
        if len(outputs) != len(examples):
            raise ValueError(f"system {name!r} has {len(outputs)} summaries for {len(examples)} examples")
        rows = []
        for refs, summary in zip(references, outputs):
            scores = scorer.score_multi(refs, summary)
            rows.append([100 * scores[t].fmeasure for t in ROUGE_TYPES])
        n = len(rows)
        means = {t: (sum(r[k] for r in rows) / n if n else float("nan")) for k, t in enumerate(ROUGE_TYPES)}
        table[name] = {
            **means,
            "n": n,
            "words": sum(count_words(s) for s in outputs) / n if n else float("nan"),
            "per_example": rows,
        }
    return table


def summarize_all(system: str, examples: list[data.Example]) -> list[str]:
    if system == "oracle":
        return [oracle(ex.source_text, ex.budget_words, ex.references) for ex in examples]
    f = BASELINES[system]
    return [f(ex.source_text, ex.budget_words) for ex in examples]


def load(dataset: str) -> list[data.Example]:
    return data.squality("test") if dataset == "squality" else data.longsciverify()


def _versions() -> dict[str, str]:
    out = {}
    for package in ("boildown", "rouge-score", "numpy", "nltk", "syntok"):
        try:
            out[package] = version(package)
        except PackageNotFoundError:
            out[package] = "not installed"
    return out


def render(results: dict[str, dict]) -> str:
    """The comparison table: ours vs README, per dataset."""
    lines = []
    for dataset, block in results.items():
        budget = block["mean_budget"]
        lines.append(f"\n{dataset} ({block['n']} documents, mean budget {budget:.0f} words)")
        lines.append(f"{'system':<10} {'ours R1/R2/RLsum':>22}   {'README':>22}   {'diff':>22}   words")
        for system, row in block["systems"].items():
            ours = tuple(row[t] for t in ROUGE_TYPES)
            ref = README_FIGURES[dataset].get(system)
            fmt = "{:6.2f} /{:6.2f} /{:6.2f}"
            ref_s = fmt.format(*ref) if ref else ""
            diff_s = "{:+6.2f} /{:+6.2f} /{:+6.2f}".format(*(a - b for a, b in zip(ours, ref))) if ref else ""
            lines.append(f"{system:<10} {fmt.format(*ours):>22}   {ref_s:>22}   {diff_s:>22}   {row['words']:.0f}")
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--limit", type=int, default=None, help="only the first N documents of each set")
    parser.add_argument("--systems", default=",".join(SYSTEMS), help=f"comma-separated, from {','.join(SYSTEMS)}")
    parser.add_argument("--datasets", default=",".join(DATASETS), help=f"comma-separated, from {','.join(DATASETS)}")
    args = parser.parse_args(argv)
    systems = [s for s in args.systems.split(",") if s]
    datasets = [d for d in args.datasets.split(",") if d]
    for name, chosen, allowed in (("system", systems, SYSTEMS), ("dataset", datasets, DATASETS)):
        unknown = [c for c in chosen if c not in allowed]
        if unknown:
            parser.error(f"unknown {name} {unknown[0]!r}; choose from {', '.join(allowed)}")

    results = {}
    try:
        for dataset in datasets:
            examples = load(dataset)[: args.limit]
            outputs, seconds = {}, {}
            for system in systems:
                start = time.perf_counter()
                outputs[system] = summarize_all(system, examples)
                seconds[system] = round(time.perf_counter() - start, 2)
            table = rouge_table(outputs, examples)
            for system in systems:
                table[system]["seconds"] = seconds[system]
                over = [ex.id for ex, s in zip(examples, outputs[system]) if count_words(s) > ex.budget_words]
                if over:
                    raise RuntimeError(f"{system} exceeded the budget on {over[:3]}")
            results[dataset] = {
                "n": len(examples),
                "mean_budget": sum(ex.budget_words for ex in examples) / len(examples),
                "systems": table,
                "readme": README_FIGURES[dataset],
            }
    except data.DataMissing as exc:
        print(f"skipped: {exc}")
        return 0

    print(render(results))
    settings = {
        "rouge": "rouge-score F1 x100, use_stemmer=True, best reference per type (score_multi), "
        "Lsum sentences one per line (split_sentences)",
        "budget": "SQuALITY: round(mean words of the 4 references); LongSciVerify: abstract words",
        "limit": args.limit,
    }
    # A partial run (--limit, fewer systems or datasets) never overwrites the full result file.
    full = args.limit is None and set(systems) == set(SYSTEMS) and set(datasets) == set(DATASETS)
    name = "baselines" if full else "baselines_partial"
    path = save(name, {"settings": settings, "versions": _versions(), "results": results})
    print(f"\nsaved {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
