"""Summary quality against human references, with the baselines measured in the same run.

1. SQuALITY test (52 stories, budget = the mean length of their 4 human plot summaries,
   Project Gutenberg production notes removed) and LongSciVerify (30 papers, budget = the
   abstract's length; the paper is given with its section headings): ROUGE-1/2/Lsum F1 x 100
   (rouge-score, stemming on, best of the references) of boildown against LEAD, TextRank and
   LexRank (bench/baselines.py, written from their papers) and the greedy ROUGE oracle; plus
   boildown's coverage and fluency of every system's output.
2. Ranking agreement on SQuALITY dev (25 stories): boildown's candidates plus LEAD and TextRank
   at the same budget, ranked by boildown's combined score and by ROUGE-2 F1 against the human
   summaries; the mean Kendall tau over stories.
3. Compression on vs off: the "balanced" recipe at the same budget with and without deletions
   (the first 20 documents of each set by default).

    .venv/bin/python bench/quality.py [--limit N] [--parts main,ranking,compression] [--name quality]

(``--parts ranking-context`` recomputes the figures that put the ranking agreement in context
from the candidates saved by an earlier ranking run, without re-running it.)
"""

from __future__ import annotations

import argparse
import json
import re
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench import data  # noqa: E402
from bench.baselines import lead, lexrank, oracle, textrank  # noqa: E402
from bench.common import RESULTS, kendall, save  # noqa: E402
from bench.reproduce_baselines import rouge_table  # noqa: E402


def document_of(example):
    """The text boildown reads: LongSciVerify papers with their section headings (markdown)."""
    from summarize.reading import parse_text

    sections = example.meta.get("sections")
    if sections:
        parts = []
        for name, text in sections:
            parts.append(f"## {name.strip() or 'section'}")
            parts.extend(p for p in re.split(r"(?<= [.?!]) (?=\S)", text) if p.strip())
        return parse_text("\n\n".join(parts), "md")
    return parse_text(example.source_text, "txt")


def lines(summary_sentences) -> str:
    return "\n".join(summary_sentences)


def run_main(examples, name: str, evaluator, candidates: int, on_document=None):
    """boildown and the baselines on ``examples``; ``on_document(block)`` gets the results so far
    after each document (the caller saves them, so a cut run keeps what it measured)."""
    from rouge_score.rouge_scorer import RougeScorer

    from summarize.pipeline import summarize
    from scoring.text import split_sentences

    rouge = RougeScorer(["rouge2"], use_stemmer=True)
    outputs = {k: [] for k in ("lead", "textrank", "lexrank", "oracle", "boildown")}
    coverage = {k: [] for k in outputs}
    fluency = {k: [] for k in outputs}
    timings, own = [], []  # own: per document, the ROUGE-2 of each of boildown's candidates, the chosen first
    block = None
    for n, ex in enumerate(examples, 1):
        doc = document_of(ex)
        start = time.perf_counter()
        result = summarize(doc, ex.budget_words, candidates=candidates, evaluator=evaluator)
        timings.append(time.perf_counter() - start)
        refs = ["\n".join(split_sentences(r)) for r in ex.references]
        own.append({"id": ex.id, "names": [d.recipe for d, _ in result.candidates],
                    "ordering": [c.ordering for _, c in result.candidates],
                    "combined": [c.combined for _, c in result.candidates],
                    "rouge2": [rouge.score_multi(refs, "\n".join(s.text for s in d.sentences) or d.text)["rouge2"].fmeasure
                               for d, _ in result.candidates]})
        outputs["boildown"].append(lines(s.text for s in result.sentences) or result.text)
        outputs["lead"].append(lead(ex.source_text, ex.budget_words))
        outputs["textrank"].append(textrank(ex.source_text, ex.budget_words))
        outputs["lexrank"].append(lexrank(ex.source_text, ex.budget_words))
        outputs["oracle"].append(oracle(ex.source_text, ex.budget_words, ex.references))
        names = list(outputs)
        scored = evaluator.evaluate([(k, " ".join(outputs[k][-1].split())) for k in names], source=doc.text,
                                    budget=ex.budget_words)
        by = {c.name: c for c in scored}
        for k in names:
            coverage[k].append(by[k].coverage.share)
            fluency[k].append(by[k].fluency.value)
        block = main_block(outputs, coverage, fluency, examples[:n], timings, own)
        if on_document:
            on_document(block)
        print(f"\r{name}: {n}/{len(examples)} documents, median {statistics.median(timings):.1f} s per summary",
              end="", file=sys.stderr)
    print(file=sys.stderr)
    return block


def main_block(outputs, coverage, fluency, examples, timings, own) -> dict:
    """The table of the documents done so far."""
    table = rouge_table(outputs, examples)
    for k in outputs:
        table[k]["coverage"] = 100 * statistics.mean(coverage[k])
        table[k]["fluency"] = statistics.mean(fluency[k])
        table[k]["per_example_coverage"] = coverage[k]
    best = max(("lead", "textrank", "lexrank"), key=lambda k: table[k]["rouge2"])
    gap = {t: (table["boildown"][t] - table[best][t]) / max(1e-9, table["oracle"][t] - table[best][t])
           for t in ("rouge1", "rouge2", "rougeLsum")}
    return {"table": table, "best_baseline": best, "share_of_gap_closed": gap, "own_candidates": own_summary(own),
            "documents": len(examples), "median_seconds": statistics.median(timings),
            "mean_budget": statistics.mean(e.budget_words for e in examples)}


def own_summary(own: list[dict]) -> dict:
    """The chosen candidate against the mean and the best of boildown's own candidates (ROUGE-2
    F1 x 100, by the references), and the share of the mean-to-best gap the choice closes."""
    if not own:
        return {}
    chosen = 100 * statistics.mean(o["rouge2"][0] for o in own)
    mean = 100 * statistics.mean(statistics.mean(o["rouge2"]) for o in own)
    best = 100 * statistics.mean(max(o["rouge2"]) for o in own)
    taus = [t for t in (kendall([-i for i in range(len(o["rouge2"]))], o["rouge2"]) for o in own) if t == t]
    return {"chosen": chosen, "mean": mean, "best": best, "share_of_gap_closed": (chosen - mean) / max(1e-9, best - mean),
            "mean_kendall_tau_rank_vs_rouge2": statistics.mean(taus) if taus else None, "documents": own}


def run_ranking(evaluator, candidates: int, limit: int | None, split: str = "dev"):
    from rouge_score.rouge_scorer import RougeScorer

    from summarize.pipeline import summarize
    from scoring.text import split_sentences

    rouge = RougeScorer(["rouge2"], use_stemmer=True)
    stories = data.squality(split)[:limit]
    taus = []
    evidence = []  # per story: each candidate's scores, to study the ranking without re-running it
    for n, ex in enumerate(stories, 1):
        doc = document_of(ex)
        result = summarize(doc, ex.budget_words, candidates=candidates, evaluator=evaluator)
        pool = [(f"boildown:{d.recipe}", d.text) for d, _ in result.candidates]
        pool += [("lead", " ".join(lead(ex.source_text, ex.budget_words).split())),
                 ("textrank", " ".join(textrank(ex.source_text, ex.budget_words).split()))]
        ranked = evaluator.evaluate(pool, source=doc.text, budget=ex.budget_words)
        refs = ["\n".join(split_sentences(r)) for r in ex.references]
        ours = [c.combined for c in ranked]
        theirs = [rouge.score_multi(refs, c.text)["rouge2"].fmeasure for c in ranked]
        tau = kendall(ours, theirs)
        if tau == tau:
            taus.append(tau)
        evidence.append({"story": ex.id, "tau": tau, "candidates": [
            {"name": c.name, "combined": c.combined, "coverage": c.coverage.share, "fluency": c.fluency.value,
             "agreement": c.agreement.value if c.agreement is not None else None,
             "words": c.words, "rouge2": r2, "text": c.text} for c, r2 in zip(ranked, theirs)]})
        print(f"\rranking: {n}/{len(stories)} stories, mean tau {statistics.mean(taus) if taus else float('nan'):.3f}",
              end="", file=sys.stderr)
    print(file=sys.stderr)
    out = {"split": split, "stories": len(stories), "mean_kendall_tau": statistics.mean(taus), "taus": taus,
           "evidence": evidence}
    out.update(ranking_context(out))
    return out


def ranking_context(block: dict) -> dict:
    """What the agreement figure should be read against, from the saved evidence alone:
    - coverage alone, agreement alone, the earlier combined score (0.75 coverage + 0.25 fluency,
      no agreement), and boildown's own candidates alone (without LEAD and TextRank);
    - the same agreement between people: ROUGE-2 against one human summary vs against the other
      three, over the same candidates (how far one reference's ranking is from the rest)."""
    from rouge_score.rouge_scorer import RougeScorer

    from scoring.text import split_sentences

    def mean_tau(pairs):
        taus = [t for t in (kendall(a, b) for a, b in pairs) if t == t]
        return statistics.mean(taus) if taus else None

    ev = block["evidence"]
    out = {
        "mean_kendall_tau_coverage_alone": mean_tau(
            ([c["coverage"] for c in e["candidates"]], [c["rouge2"] for c in e["candidates"]]) for e in ev),
        "mean_kendall_tau_boildown_candidates_only": mean_tau(
            ([c["combined"] for c in e["candidates"] if c["name"].startswith("boildown")],
             [c["rouge2"] for c in e["candidates"] if c["name"].startswith("boildown")]) for e in ev),
        "mean_kendall_tau_without_lead": mean_tau(
            ([c["combined"] for c in e["candidates"] if c["name"] != "lead"],
             [c["rouge2"] for c in e["candidates"] if c["name"] != "lead"]) for e in ev),
    }
    own = [[c for c in e["candidates"] if c["name"].startswith("boildown")] for e in ev]
    out["rouge2_of_top_ranked_boildown_candidate"] = 100 * statistics.mean(
        max(cs, key=lambda c: c["combined"])["rouge2"] for cs in own)
    out["rouge2_mean_of_boildown_candidates"] = 100 * statistics.mean(
        statistics.mean(c["rouge2"] for c in cs) for cs in own)
    if not all("text" in c for e in ev for c in e["candidates"]):
        return out
    from scoring.agreement import AgreementScorer
    from scoring.combine import combined_score

    agreement = AgreementScorer()
    out["mean_kendall_tau_agreement_alone"] = mean_tau(
        ([a.value for a in agreement.score_many([c["text"] for c in e["candidates"]])],
         [c["rouge2"] for c in e["candidates"]]) for e in ev)
    out["mean_kendall_tau_coverage_and_fluency"] = mean_tau(
        ([combined_score(c["coverage"], c["fluency"]) for c in e["candidates"]], [c["rouge2"] for c in e["candidates"]])
        for e in ev)
    rouge = RougeScorer(["rouge2"], use_stemmer=True)
    refs_of = {ex.id: ["\n".join(split_sentences(r)) for r in ex.references]
               for ex in data.squality(block.get("split", "dev"))}
    pairs = []
    for e in ev:
        refs = refs_of[e["story"]]
        cands = ["\n".join(split_sentences(c["text"])) for c in e["candidates"]]
        for k in range(len(refs)):
            others = [r for j, r in enumerate(refs) if j != k]
            pairs.append(([rouge.score(refs[k], c)["rouge2"].fmeasure for c in cands],
                          [rouge.score_multi(others, c)["rouge2"].fmeasure for c in cands]))
    out["mean_kendall_tau_one_reference_vs_the_others"] = mean_tau(pairs)
    return out


def run_compression(examples, evaluator):
    from summarize.recipes import RECIPES
    from summarize.search import analyse, build

    on_cov, off_cov, on_flu, off_flu = [], [], [], []
    balanced = RECIPES[0]
    from dataclasses import replace

    for ex in examples:
        doc = document_of(ex)
        analysis = analyse(doc)
        on = build(analysis, balanced, ex.budget_words)
        off = build(analysis, replace(balanced, compress=0.0), ex.budget_words)
        scored = {c.name: c for c in evaluator.evaluate([("on", on.text), ("off", off.text)], source=doc.text,
                                                         budget=ex.budget_words)}
        on_cov.append(scored["on"].coverage.share)
        off_cov.append(scored["off"].coverage.share)
        on_flu.append(scored["on"].fluency.value)
        off_flu.append(scored["off"].fluency.value)
    wins = sum(a > b for a, b in zip(on_cov, off_cov))
    ties = sum(a == b for a, b in zip(on_cov, off_cov))
    return {"documents": len(on_cov), "coverage_on": 100 * statistics.mean(on_cov), "coverage_off": 100 * statistics.mean(off_cov),
            "coverage_higher_with_compression": wins, "identical": ties,
            "fluency_on": statistics.mean(on_flu), "fluency_off": statistics.mean(off_flu),
            "fluency_lower_by_over_0_05": sum(b - a > 0.05 for a, b in zip(on_flu, off_flu)),
            "per_document": [{"coverage_on": a, "coverage_off": b, "fluency_on": c, "fluency_off": d}
                             for a, b, c, d in zip(on_cov, off_cov, on_flu, off_flu)]}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--limit", type=int, default=None, help="first N documents of each set")
    parser.add_argument("--parts", default="main,ranking,compression")
    parser.add_argument("--sets", default="squality_test,longsciverify",
                        help="data sets for the main comparison (each is saved as soon as it is done)")
    parser.add_argument("--candidates", type=int, default=8)
    parser.add_argument("--ranking-split", default="dev", choices=("train", "dev"),
                        help="SQuALITY split for the ranking agreement (train is for tuning, dev is the reported one)")
    parser.add_argument("--name", default="quality", help="results file bench/results/NAME.json")
    parser.add_argument("--compression-limit", type=int, default=20,
                        help="documents of each set for the compression on/off comparison (default 20)")
    args = parser.parse_args(argv)
    from scoring.evaluate import default_evaluator

    evaluator = default_evaluator()
    parts = set(args.parts.split(","))
    try:
        squality_test = data.squality("test")[: args.limit]
        papers = data.longsciverify()[: args.limit]
    except data.DataMissing as exc:
        print(f"skipped: {exc}")
        return
    results = {}
    previous = RESULTS / f"{args.name}.json"
    if previous.exists():
        earlier = json.loads(previous.read_text())
        results = earlier.get("results", {})
        if parts == {"ranking-context"}:  # nothing is re-run: the file keeps the run it describes
            global COMMIT, WHEN
            COMMIT, WHEN = earlier.get("commit"), earlier.get("when")
            args.limit, args.candidates = earlier.get("limit"), earlier.get("candidates", args.candidates)
            args.compression_limit = earlier.get("compression_limit", args.compression_limit)
    if "main" in parts:
        for name, examples in (("squality_test", squality_test), ("longsciverify", papers)):
            if name not in args.sets.split(","):
                continue
            def keep(block, name=name):
                results[name] = block
                checkpoint(args, results)

            results[name] = run_main(examples, name, evaluator, args.candidates, keep)
            checkpoint(args, results)
            block = results[name]
            print(f"\n{name}: {len(examples)} documents, mean budget {block['mean_budget']:.0f} words")
            print(f"{'system':10s} {'R-1':>6s} {'R-2':>6s} {'R-Lsum':>7s} {'coverage':>9s} {'fluency':>8s} {'words':>6s}")
            for k, row in block["table"].items():
                print(f"{k:10s} {row['rouge1']:6.2f} {row['rouge2']:6.2f} {row['rougeLsum']:7.2f} "
                      f"{row['coverage']:8.1f}% {row['fluency']:8.3f} {row['words']:6.0f}")
            gap = block["share_of_gap_closed"]
            print(f"share of the gap from {block['best_baseline']} to the oracle closed: "
                  + ", ".join(f"{t} {100 * v:.0f}%" for t, v in gap.items()))
    key = f"ranking_squality_{args.ranking_split}"
    if "ranking" in parts:
        results[key] = run_ranking(evaluator, args.candidates, args.limit, args.ranking_split)
        print(f"\nranking agreement (SQuALITY {args.ranking_split}): mean Kendall tau {results[key]['mean_kendall_tau']:.3f}")
        checkpoint(args, results)
    if "ranking-context" in parts and "ranking" not in parts:  # recompute the context from saved evidence
        results[key].update(ranking_context(results[key]))
        checkpoint(args, results)
    if "compression" in parts:
        results["compression"] = {
            "squality_test": run_compression(squality_test[: args.compression_limit], evaluator),
            "longsciverify": run_compression(papers[: args.compression_limit], evaluator),
        }
        for k, v in results["compression"].items():
            print(f"\ncompression on vs off, {k}: coverage {v['coverage_on']:.1f}% vs {v['coverage_off']:.1f}% "
                  f"(higher on {v['coverage_higher_with_compression']}/{v['documents']}), fluency {v['fluency_on']:.3f} vs {v['fluency_off']:.3f}")
    print(f"written {checkpoint(args, results)}")


def checkpoint(args, results: dict) -> Path:
    """Write what is done so far (parts already in the file from earlier runs are kept)."""
    return save(args.name, {"limit": args.limit, "compression_limit": args.compression_limit,
                            "candidates": args.candidates, "commit": COMMIT or None,
                            **({"when": WHEN} if WHEN else {}), "results": results})


def _commit() -> str:
    """The code being measured: the commit checked out when the run started (+ "-dirty")."""
    import subprocess

    return subprocess.run(["git", "describe", "--always", "--dirty"], capture_output=True, text=True,
                          cwd=Path(__file__).parent).stdout.strip()


COMMIT = _commit()
WHEN = None  # the time of the run measured; None = now (save() records it)


if __name__ == "__main__":
    main()
