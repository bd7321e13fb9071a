"""Does a bigger pool of drafts make the agreement pick better? (SQuALITY train and dev)

Agreement (each candidate's mean ROUGE-2 F1 against the other candidates, ``scoring.agreement``)
is a minimum-Bayes-risk choice (Kumar & Byrne, 2004): the candidate most like the rest. MBR is
usually said to improve as the pool grows (common practice in MBR decoding; not checked here
beyond this script). Here the pool is boildown's drafts only (no model scoring: the drafts are
built, compression included, and compared by ROUGE): the eight named recipes first, then the
other named recipes and the variants (``summarize.recipes.variants``) in the order the
summarizer tries them, up to ``--pool`` distinct drafts. For pool sizes N it reports, as ROUGE-2
F1 x 100 against the human summaries (rouge-score, stemming on, best of the references):

- the draft agreement picks among the first N;
- the draft it picks among the first 8 when agreement is measured over the first N;
- the mean and the best (by the references: a ceiling no reference-free rule reaches) of the N;
- the "balanced" draft and TextRank (``bench/baselines.py``) at the same budget.

    .venv/bin/python bench/candidate_pool.py [--pool 32] [--limit 30]

Writes ``bench/results/candidate_pool.json`` with each story's drafts' scores, so the table can
be recomputed without building them again.
"""

from __future__ import annotations

import argparse
import itertools
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench import data  # noqa: E402
from bench.baselines import textrank  # noqa: E402
from bench.common import save  # noqa: E402
from bench.quality import _commit  # noqa: E402

SIZES = (8, 12, 16, 24, 32)
NAMED = 8  # the summarizer's default number of candidates


def drafts_for(example, pool: int) -> list:
    """The summarizer's drafts for one story, in the order it tries recipes, ``pool`` distinct."""
    from bench.quality import document_of
    from summarize.recipes import RECIPES, variants
    from summarize.search import analyse, build, distinct

    analysis = analyse(document_of(example), 40)
    drafts = distinct([build(analysis, r, example.budget_words) for r in RECIPES[:NAMED]])
    extra = itertools.chain(RECIPES[NAMED:], variants())
    while len(drafts) < pool:
        drafts = distinct(drafts + [build(analysis, next(extra), example.budget_words)])
    return drafts[:pool]


def agreement_pick(among: list[int], measured_over: list[int], pair: list[list[float]]) -> int:
    """Index of the candidate in ``among`` with the highest mean F1 against the others of
    ``measured_over`` (the first on ties, as ``scoring.agreement`` does)."""
    mean = {i: statistics.mean(pair[i][j] for j in measured_over if j != i) for i in among}
    return max(among, key=lambda i: (mean[i], -i))


def table(stories: list[dict], sizes=SIZES) -> dict[str, float]:
    """The summary rows (ROUGE-2 F1 x 100, mean over stories) from the saved per-story scores."""
    rows: dict[str, list[float]] = {}
    for story in stories:
        r2, pair = story["rouge2"], story["pair_f1"]
        for n in sizes:
            if n > len(r2):
                continue
            first = list(range(n))
            rows.setdefault(f"agreement pick among {n}", []).append(r2[agreement_pick(first, first, pair)])
            rows.setdefault(f"pick among the first {NAMED}, agreement over {n}", []).append(
                r2[agreement_pick(list(range(min(NAMED, n))), first, pair)])
            rows.setdefault(f"mean of {n}", []).append(statistics.mean(r2[:n]))
            rows.setdefault(f"best of {n} (by the references)", []).append(max(r2[:n]))
        rows.setdefault("balanced draft", []).append(r2[0])
        rows.setdefault("TextRank", []).append(story["textrank_rouge2"])
    return {k: round(100 * statistics.mean(v), 3) for k, v in rows.items()}


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--pool", type=int, default=max(SIZES))
    parser.add_argument("--limit", type=int, default=30, help="stories per split (dev has 25)")
    parser.add_argument("--splits", default="train,dev")
    args = parser.parse_args(argv)
    from rouge_score.rouge_scorer import RougeScorer

    from scoring.models import set_threads
    from scoring.text import split_sentences

    set_threads()
    commit = _commit()  # the code measured: the checkout when the run starts
    rouge = RougeScorer(["rouge2"], use_stemmer=True)
    results = {}
    try:
        for split in args.splits.split(","):
            stories, start = [], time.perf_counter()
            examples = data.squality(split)[: args.limit]
            for n, ex in enumerate(examples, 1):
                drafts = drafts_for(ex, args.pool)
                texts = [d.text for d in drafts]
                refs = ["\n".join(split_sentences(r)) for r in ex.references]
                m = len(texts)
                pair = [[0.0] * m for _ in range(m)]
                for i in range(m):
                    for j in range(i + 1, m):  # F1 is symmetric
                        pair[i][j] = pair[j][i] = rouge.score(texts[j], texts[i])["rouge2"].fmeasure
                tr = " ".join(textrank(ex.source_text, ex.budget_words).split())
                stories.append({"story": ex.id, "names": [d.recipe for d in drafts],
                                "rouge2": [rouge.score_multi(refs, t)["rouge2"].fmeasure for t in texts],
                                "pair_f1": pair, "textrank_rouge2": rouge.score_multi(refs, tr)["rouge2"].fmeasure})
                print(f"\r{split}: {n}/{len(examples)} stories, {time.perf_counter() - start:.0f} s", end="",
                      file=sys.stderr)
            print(file=sys.stderr)
            results[split] = {"stories": len(stories), "table": table(stories), "evidence": stories}
    except data.DataMissing as exc:
        print(f"skipped: {exc}")
        return
    labels = list(next(iter(results.values()))["table"])
    print(f"{'ROUGE-2 F1 x 100':48s} " + " ".join(f"{s:>6s}" for s in results))
    for label in labels:
        print(f"{label:48s} " + " ".join(f"{results[s]['table'].get(label, float('nan')):6.2f}" for s in results))
    print(f"written {save('candidate_pool', {'pool': args.pool, 'commit': commit, 'results': results})}")


if __name__ == "__main__":
    main()
