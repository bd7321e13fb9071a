"""Fitting the ordering score on saved candidates: SQuALITY train fits, dev reports.

Reads only the candidates saved by earlier ranking runs (no model is loaded):
``bench/results/ranking_tuning_train.json`` (30 SQuALITY train stories) and
``bench/results/quality_ranking.json`` (25 SQuALITY dev stories), each with boildown's own 8
candidates, their coverage and fluency, and their ROUGE-2 F1 against the human summaries.
Among each story's own candidates only (as the summarizer chooses), every rule below orders
the candidates; the figures are the mean Kendall tau-b of that order with ROUGE-2, the ROUGE-2
of the candidate it puts first, and the share of the gap between the candidates' mean and their
best (by the references) that this first candidate closes.

Rules: z(agreement) + w z(combined) for a grid of w (the shipped ``OrderConfig`` form; w is
chosen on train, the highest mean tau), each signal alone, and agreement plus one more
pool-independent signal (ablations): a budget-fill term (words / budget), the concept weight of
Gillick & Favre (2009; ``bench.ranking_measures.concept_score``), closeness of term
distributions to the source (-Jensen-Shannon; Louis & Nenkova 2013) and words per sentence.
z is the standard score within the story's candidates (``scoring.combine.zscores``).

    .venv/bin/python bench/ranking_fit.py
"""

from __future__ import annotations

import json
import statistics
import sys
from collections import Counter
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import RESULTS, kendall, save  # noqa: E402

SOURCES = {"train": ("ranking_tuning_train", "ranking_squality_train"), "dev": ("quality_ranking", "ranking_squality_dev")}
GRID = (0.0, 0.1, 0.25, 0.5, 0.75, 1.0, 2.0)
EXTRA = ("budget fill", "concept weight", "source closeness (-JS)", "words per sentence")


def features(candidates: list[dict], source: str | None, rouge) -> dict[str, list[float]]:
    """Each signal for one story's own candidates (the source-based ones only with its text)."""
    from bench.ranking_measures import concept_score, js_divergence, words_per_sentence
    from scoring.combine import combined_score

    n = len(candidates)
    pair = {(i, j): rouge.score(candidates[j]["text"], candidates[i]["text"])["rouge2"].fmeasure
            for i in range(n) for j in range(n) if i != j}
    out = {"agreement": [statistics.mean(pair[i, j] for j in range(n) if j != i) for i in range(n)],
           "combined": [combined_score(c["coverage"], c["fluency"]) for c in candidates],
           "coverage": [c["coverage"] for c in candidates], "fluency": [c["fluency"] for c in candidates],
           "budget fill": [c["words"] for c in candidates],  # z(words / budget) = z(words): one budget per story
           "words per sentence": [words_per_sentence(c["text"]) for c in candidates]}
    if source is not None:
        from bench.baselines import terms

        bag = Counter(terms(source))
        out["concept weight"] = [concept_score(source, c["text"]) for c in candidates]
        out["source closeness (-JS)"] = [-js_divergence(bag, Counter(terms(c["text"]))) for c in candidates]
    return out


def measure(stories: list[dict], weights: dict[str, float]) -> dict[str, float] | None:
    """Mean tau, ROUGE-2 of the first candidate (x 100) and the share of the mean-to-best gap
    closed, for the rule sum(w * z(signal))."""
    from scoring.combine import zscores

    taus, first, mean, best = [], [], [], []
    for s in stories:
        if any(k not in s["features"] for k in weights):
            return None
        z = {k: zscores(s["features"][k]) for k in weights}
        score = [sum(w * z[k][i] for k, w in weights.items()) for i in range(len(s["rouge2"]))]
        t = kendall(score, s["rouge2"])
        if t == t:
            taus.append(t)
        top = max(range(len(score)), key=lambda i: (score[i], -i))
        first.append(s["rouge2"][top])
        mean.append(statistics.mean(s["rouge2"]))
        best.append(max(s["rouge2"]))
    f, m, b = (100 * statistics.mean(x) for x in (first, mean, best))
    return {"tau": round(statistics.mean(taus), 4), "chosen": round(f, 3), "mean": round(m, 3), "best": round(b, 3),
            "gap_closed": round((f - m) / max(1e-9, b - m), 3)}


def load(split: str, rouge) -> list[dict]:
    from bench import data

    name, key = SOURCES[split]
    path = RESULTS / f"{name}.json"
    if not path.exists():
        return []
    try:
        sources = {ex.id: ex.source_text for ex in data.squality(split)}
    except data.DataMissing as exc:
        print(f"source-based signals left out for {split}: {exc}")
        sources = {}
    stories = []
    for e in json.loads(path.read_text())["results"][key]["evidence"]:
        own = [c for c in e["candidates"] if c["name"].startswith("boildown")]
        stories.append({"story": e["story"], "rouge2": [c["rouge2"] for c in own],
                        "features": features(own, sources.get(e["story"]), rouge)})
    return stories


def main() -> None:
    from rouge_score.rouge_scorer import RougeScorer

    rouge = RougeScorer(["rouge2"], use_stemmer=True)
    data = {split: load(split, rouge) for split in SOURCES}
    if not all(data.values()):
        print("skipped: saved candidates absent (run bench/quality.py --parts ranking first)")
        return
    rules = {f"z(agreement) + {w} z(combined)": {"agreement": 1.0, "combined": w} for w in GRID}
    for k in ("agreement", "combined", "coverage", "fluency", *EXTRA):
        rules[f"{k} alone"] = {k: 1.0}
    for k in EXTRA:
        for w in (0.25, 0.5, 1.0):
            rules[f"z(agreement) + {w} z({k})"] = {"agreement": 1.0, k: w}
    table = {}
    for label, weights in rules.items():
        row = {split: measure(stories, weights) for split, stories in data.items()}
        if all(row.values()):
            table[label] = row
    fitted = max((f"z(agreement) + {w} z(combined)" for w in GRID), key=lambda k: table[k]["train"]["tau"])
    print(f"{'rule (own candidates)':44s} {'tau tr':>7s} {'tau dev':>7s} {'R2 tr':>6s} {'R2 dev':>6s} "
          f"{'gap tr':>6s} {'gap dev':>7s}")
    for label, row in table.items():
        tr, dv = row["train"], row["dev"]
        print(f"{label:44s} {tr['tau']:7.3f} {dv['tau']:7.3f} {tr['chosen']:6.2f} {dv['chosen']:6.2f} "
              f"{tr['gap_closed']:6.2f} {dv['gap_closed']:7.2f}{'  <- fitted' if label == fitted else ''}")
    print(f"written {save('ranking_fit', {'stories': {s: len(v) for s, v in data.items()}, 'fitted': fitted, 'table': table})}")


if __name__ == "__main__":
    main()
