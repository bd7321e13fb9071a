"""Which agreement measure, and how much coverage beside it, orders candidates most like ROUGE-2.

Reads only the candidates saved by earlier ranking runs (no model is loaded):
``bench/results/ranking_tuning_train.json`` (30 SQuALITY train stories, the tuning set) and
``bench/results/quality_ranking.json`` (25 SQuALITY dev stories, the reported set). For each
story, each candidate's agreement is its mean ROUGE-N score against the other candidates
(rouge-score, stemming on) taken as F1, recall or precision; the candidates are ordered by it,
alone or as a z-score within the story plus w times coverage's z-score, and the order is set
against the order by ROUGE-2 F1 against the human summaries (Kendall tau-b, mean over stories).
A measure is worth adopting only if it is ahead on train; dev is shown to see whether that holds.
Also the ROUGE-2 of the one candidate each rule would return (what a user gets).

Two other reference-free signals are set beside agreement:
- *source divergence*: the Jensen-Shannon divergence between the source's and the candidate's
  distributions of index terms (``bench.baselines.terms``: stop words dropped, Porter-stemmed;
  no smoothing), lower = closer to the source, the measure Louis & Nenkova (2013, "Automatically
  assessing machine summary content without a gold standard") found to track content scores
  best among their input-summary comparisons; it needs the stories' text (../shared/data);
- *concept score*: the weight of the source's concepts (``summarize.extract.concepts``: word
  bigrams in two or more of its sentences, weighted by how many) that the candidate contains,
  the objective of Gillick & Favre (2009) read as a reference-free content score; it needs the
  stories' text too;
- *words per sentence*: the candidate's words over its sentences (``summarize.segment``). Fiction
  summaries built of long sentences carry fewer dialogue lines and short fragments; this is a
  style signal, not a content one.

    .venv/bin/python bench/ranking_measures.py
"""

from __future__ import annotations

import json
import math
import statistics
import sys
from collections import Counter
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import RESULTS, kendall, save  # noqa: E402

SOURCES = {"train": ("ranking_tuning_train", "ranking_squality_train"), "dev": ("quality_ranking", "ranking_squality_dev")}
MEASURES = ("rouge1", "rouge2", "rougeL")
SIDES = ("fmeasure", "recall", "precision")


def _z(xs: list[float]) -> list[float]:
    mu, sd = statistics.mean(xs), statistics.pstdev(xs) or 1.0
    return [(x - mu) / sd for x in xs]


_PAIRS: dict[tuple, dict] = {}


def js_divergence(p: Counter, q: Counter) -> float:
    """Jensen-Shannon divergence (natural log) between two bags of terms, taken as frequency
    distributions; 0 for equal distributions, ln 2 for disjoint ones (Lin, 1991)."""
    sp, sq = sum(p.values()), sum(q.values())
    if not sp or not sq:
        return math.log(2)
    total = 0.0
    for term in set(p) | set(q):
        a, b = p.get(term, 0) / sp, q.get(term, 0) / sq
        m = (a + b) / 2
        if a:
            total += 0.5 * a * math.log(a / m)
        if b:
            total += 0.5 * b * math.log(b / m)
    return total


_CONCEPTS: dict[int, dict] = {}


def concept_score(source: str, text: str) -> float:
    """Weight of the source's concepts (bigrams in 2+ of its sentences, weighted by how many;
    Gillick & Favre 2009) that ``text`` contains."""
    from summarize.extract import bigrams
    from scoring.text import split_sentences

    key = hash(source)
    if key not in _CONCEPTS:
        counts = Counter(b for s in split_sentences(source) for b in bigrams(s))
        _CONCEPTS[key] = {b: n for b, n in counts.items() if n >= 2}
    weights = _CONCEPTS[key]
    return float(sum(weights.get(b, 0) for b in bigrams(text)))


def words_per_sentence(text: str) -> float:
    from scoring.text import count_words, split_sentences

    return count_words(text) / max(1, len(split_sentences(text)))


def _pairs(candidates: list[dict], rouge) -> dict[tuple[int, int], dict]:
    """ROUGE of candidate i (prediction) against candidate j (target), for every i != j; computed
    once per story and shared by the orderings and the picks."""
    texts = tuple(c["text"] for c in candidates)
    key = (id(rouge), texts)
    if key not in _PAIRS:
        _PAIRS.clear()  # one story at a time
        n = len(texts)
        _PAIRS[key] = {(i, j): rouge.score(texts[j], texts[i]) for i in range(n) for j in range(n) if i != j}
    return _PAIRS[key]


def story_scores(candidates: list[dict], rouge, source: str | None = None) -> dict[str, list[float]]:
    """Every ordering this script compares, for one story's candidates (the source-divergence
    ones only when the story's ``source`` text is given)."""
    n = len(candidates)
    pair = _pairs(candidates, rouge)
    out = {}
    for m in MEASURES:
        for side in SIDES:
            out[f"agreement {m} {side}"] = [statistics.mean(getattr(pair[i, j][m], side) for j in range(n) if j != i)
                                            for i in range(n)]
    coverage = _z([c["coverage"] for c in candidates])
    agreement = _z(out["agreement rouge2 fmeasure"])
    for w in (0.25, 0.5, 0.75):
        out[f"z agreement rouge2 F1 + {w} z coverage"] = [a + w * c for a, c in zip(agreement, coverage)]
    density = [words_per_sentence(c["text"]) for c in candidates]
    out["words per sentence alone"] = density
    for w in (0.25, 0.5):
        out[f"z agreement rouge2 F1 + {w} z words per sentence"] = [a + w * d for a, d in zip(agreement, _z(density))]
    if source is not None:
        from bench.baselines import terms

        bag = Counter(terms(source))
        closeness = [-js_divergence(bag, Counter(terms(c["text"]))) for c in candidates]
        out["source divergence alone (-JS)"] = closeness
        for w in (0.25, 0.5):
            out[f"z agreement rouge2 F1 + {w} z(-JS)"] = [a + w * d for a, d in zip(agreement, _z(closeness))]
        held = [concept_score(source, c["text"]) for c in candidates]
        out["concept score alone"] = held
        for w in (0.5, 1.0):
            out[f"z agreement rouge2 F1 + {w} z concept score"] = [a + w * d for a, d in zip(agreement, _z(held))]
    out["coverage alone"] = [c["coverage"] for c in candidates]
    out["combined score saved by the run"] = [c["combined"] for c in candidates]
    return out


def picks(candidates: list[dict], rouge) -> dict[str, float]:
    """ROUGE-2 (x 100, against the humans) of the boildown candidate each rule would return.
    As in the pipeline, agreement is taken among boildown's own candidates only."""
    from scoring.combine import OrderConfig, combined_score

    pair = _pairs(candidates, rouge)
    own_at = [i for i, c in enumerate(candidates) if c["name"].startswith("boildown")]
    own = [candidates[i] for i in own_at]
    agreement = [statistics.mean(pair[i, j]["rouge2"].fmeasure for j in own_at if j != i) for i in own_at]

    def top(key):
        return 100 * max(zip(own, agreement), key=lambda ca: key(*ca))[0]["rouge2"]

    by_name = {c["name"]: c for c in candidates}
    density = dict(zip(map(id, own), _z([words_per_sentence(c["text"]) for c in own])))
    z_agreement = dict(zip(map(id, own), _z(agreement)))
    ordering = dict(zip(map(id, own), OrderConfig().values(
        {"agreement": agreement}, [combined_score(c["coverage"], c["fluency"]) for c in own])))
    return {
        "ordering score (agreement, then the combined score)": top(lambda c, a: ordering[id(c)]),
        "agreement alone": top(lambda c, a: a),
        "z agreement + 0.5 z words per sentence": top(lambda c, a: z_agreement[id(c)] + 0.5 * density[id(c)]),
        "combined score (coverage and fluency)": top(lambda c, a: combined_score(c["coverage"], c["fluency"])),
        "the balanced candidate": 100 * by_name["boildown:balanced"]["rouge2"],
        "mean of boildown's candidates": 100 * statistics.mean(c["rouge2"] for c in own),
        "best boildown candidate (by the references)": 100 * max(c["rouge2"] for c in own),
        "TextRank": 100 * by_name["textrank"]["rouge2"],
    }


def _sources(split: str) -> dict[str, str]:
    """Story id -> text for the source-divergence orderings; empty (those rows left out) when the
    external data is absent."""
    from bench import data

    try:
        return {ex.id: ex.source_text for ex in data.squality(split)}
    except data.DataMissing as exc:
        print(f"source divergence left out for {split}: {exc}")
        return {}


def main() -> None:
    from rouge_score.rouge_scorer import RougeScorer

    rouge = RougeScorer(list(MEASURES), use_stemmer=True)
    table, pick_table, runs = {}, {}, {}
    for split, (name, key) in SOURCES.items():
        path = RESULTS / f"{name}.json"
        if not path.exists():
            print(f"skipped {split}: {path} is absent (run bench/quality.py --parts ranking first)")
            continue
        run = json.loads(path.read_text())
        runs[split] = {"file": path.name, "commit": run.get("commit"), "when": run.get("when")}
        taus: dict[str, list[float]] = {}
        chosen: dict[str, list[float]] = {}
        sources = _sources(split)
        for story in run["results"][key]["evidence"]:
            for label, r2 in picks(story["candidates"], rouge).items():
                chosen.setdefault(label, []).append(r2)
            truth = [c["rouge2"] for c in story["candidates"]]
            for label, scores in story_scores(story["candidates"], rouge, sources.get(story["story"])).items():
                t = kendall(scores, truth)
                if t == t:
                    taus.setdefault(label, []).append(t)
        for label, ts in taus.items():
            table.setdefault(label, {})[split] = round(statistics.mean(ts), 4)
        for label, r2 in chosen.items():
            pick_table.setdefault(label, {})[split] = round(statistics.mean(r2), 3)
    if not table:
        return
    print(f"{'ordering':42s} " + " ".join(f"{s:>6s}" for s in runs))
    for label, row in table.items():
        print(f"{label:42s} " + " ".join(f"{row.get(s, float('nan')):6.3f}" for s in runs))
    print(f"\n{'ROUGE-2 of the candidate returned by':46s} " + " ".join(f"{s:>6s}" for s in runs))
    for label, row in pick_table.items():
        print(f"{label:46s} " + " ".join(f"{row.get(s, float('nan')):6.2f}" for s in runs))
    print(f"written {save('ranking_measures', {'runs': runs, 'mean_kendall_tau': table, 'rouge2_of_pick': pick_table})}")


if __name__ == "__main__":
    main()
