"""Fluency against people, every candidate side by side from one read of the model.

Data: the SummEval dev half (50 CNN/DailyMail articles x 16 systems, mean expert fluency 1-5;
Fabbri et al. 2021) and the LongSciVerify reviewers' fluency ratings (1-3; 30 papers x 3
systems). Correlations as SummEval reports them: Kendall tau at summary level (per article
across its summaries, then averaged; an article where a score is constant counts 0) and at
system level (across the systems' means); on LongSciVerify over all 90 summaries (the issue's
figure) and within papers. Choices are fitted on SummEval dev only; LongSciVerify is reported.

Candidates: today's value (as written, flags "reads poorly", "no verb", "repeats",
"unfinished" penalised); -log perplexity; length; SLOR (wordfreq word unigrams) and WPSLOR
(unigrams of the model's tokens counted from the data set's sources, add-one; Kann, Rothe &
Filippova 2018), each as the token-weighted mean over sentences and as the minimum; the relative
perplexity base with mean and min aggregation; the current default; and ablations of each flag.

LongSciVerify column mapping (from the files' column order): model_1 = gencomparesumabs,
model_2 = dancersum, model_3 = section_conditional.

    BOILDOWN_DTYPE=float32 nice -n 10 .venv/bin/python bench/fluency_validity.py
"""

from __future__ import annotations

import csv
import dataclasses
import json
import math
import sys
from collections import defaultdict
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import DATA, kendall, need, save  # noqa: E402

SYSTEMS = ("gencomparesumabs", "dancersum", "section_conditional")
TODAY = ("reads poorly", "no verb", "repeats", "unfinished")


def load_summeval() -> list[dict]:
    path = need(DATA / "summeval" / "dev.jsonl")
    rows = []
    for line in path.read_text().splitlines():
        r = json.loads(line)
        rows.append({"set": "summeval", "doc": r["doc_id"], "system": r["system_id"], "text": r["summary"],
                     "source": r["source"], "human": r["fluency"]})
    return rows


def load_longsciverify() -> list[dict]:
    folder = need(DATA / "longdoc" / "human_eval_results" / "LongSciVerify")
    sources = {}
    for name in ("arxiv_test.json", "pubmed_test.json"):
        path = DATA / "longdoc" / "raw_data" / "LongSciVerify" / name
        if path.exists():
            for record in json.loads(path.read_text()):
                sources[record["article_id"]] = " ".join(record["article_text"])
    ratings, texts = defaultdict(list), {}
    for path in sorted(folder.glob("*_reviewer_*.csv")):
        domain = path.name.split("_")[0]
        with open(path, encoding="utf-8-sig") as handle:
            for row in csv.DictReader(handle):
                for k, system in enumerate(SYSTEMS, 1):
                    key = (domain, row["id"], system)
                    texts[key] = row[system]
                    value = row.get(f"model_{k}_fluency", "").strip()
                    if value:
                        ratings[key].append(float(value))
    return [{"set": "lsv", "doc": f"{k[0]}/{k[1]}", "system": k[2], "text": texts[k], "source": sources.get(k[1]),
             "human": sum(v) / len(v)} for k, v in sorted(ratings.items())]


def correlations(rows: list[dict], values: list[float]) -> dict:
    by_doc, by_system = defaultdict(list), defaultdict(list)
    for r, v in zip(rows, values):
        by_doc[(r["set"], r["doc"])].append((r["human"], v))
        if r["set"] == "summeval":
            by_system[r["system"]].append((r["human"], v))
    per_article = []
    for (kind, _), pairs in by_doc.items():
        if kind == "summeval":
            t = kendall([h for h, _ in pairs], [v for _, v in pairs])
            per_article.append(0.0 if math.isnan(t) else t)
    means = [(sum(h for h, _ in p) / len(p), sum(v for _, v in p) / len(p)) for p in by_system.values()]
    lsv = [(r["human"], v) for r, v in zip(rows, values) if r["set"] == "lsv"]
    within = [kendall([h for h, _ in p], [v for _, v in p]) for (kind, _), p in by_doc.items() if kind == "lsv"]
    within = [t for t in within if not math.isnan(t)]

    def r4(x):
        return None if x is None or math.isnan(x) else round(x, 4)

    return {
        "summeval_summary": r4(sum(per_article) / len(per_article)) if per_article else None,
        "summeval_system": r4(kendall([h for h, _ in means], [v for _, v in means])) if means else None,
        "lsv_all": r4(kendall([h for h, _ in lsv], [v for _, v in lsv])) if lsv else None,
        "lsv_within_paper": r4(sum(within) / len(within)) if within else None,
    }


def main():
    from scoring.fluency import FluencyConfig, FluencyScorer, fluency_value
    from scoring.slor import TokenUnigrams, slor, word_unigram_logprob
    from scoring.text import split_sentences

    rows = load_summeval() + load_longsciverify()
    if "--docs" in sys.argv:  # a smoke run on the first N documents of each set
        n = int(sys.argv[sys.argv.index("--docs") + 1])
        keep = {kind: sorted({r["doc"] for r in rows if r["set"] == kind})[:n] for kind in ("summeval", "lsv")}
        rows = [r for r in rows if r["doc"] in keep[r["set"]]]
    print(f"{sum(r['set'] == 'summeval' for r in rows)} SummEval dev and {sum(r['set'] == 'lsv' for r in rows)} "
          "LongSciVerify summaries", flush=True)
    default = FluencyConfig(dtype="float32")
    candidates: dict[str, list[float]] = {"length (words)": [len(r["text"].split()) for r in rows]}
    settings: dict[str, str] = {}
    for reading in ("tidy", "as-written"):
        base_config = dataclasses.replace(default, reading=reading)
        scorer = FluencyScorer(base_config)
        results, refs = [], []
        for (kind, doc), members in _groups(rows).items():
            source = members[0]["source"]
            scored = scorer.score_many([r["text"] for r in members], source=source)
            ref = scorer.reference_log_pp(source)
            for r, s in zip(members, scored):
                results.append((r["_i"], s))
                refs.append((r["_i"], ref))
            print(f"  {reading}: {kind} {doc[:40]} done", flush=True)
        by_i = dict(results)
        ref_i = dict(refs)
        res = [by_i[i] for i in range(len(rows))]
        ref = [ref_i[i] for i in range(len(rows))]
        lm = scorer.model
        # WPSLOR's unigram table: the model's tokens in each data set's sources (read as scored)
        tables = {}
        for kind in ("summeval", "lsv"):
            seen = {r["doc"]: r["source"] for r in rows if r["set"] == kind and r["source"]}
            tables[kind] = TokenUnigrams((lm.tokens(scorer.read(s)) for src in seen.values()
                                          for s in split_sentences(src)), len(lm.tokenizer))
        tag = f" ({reading})"

        def each(fn):
            return [fn(rows[i], res[i], ref[i]) for i in range(len(rows))]

        candidates["-log perplexity" + tag] = each(lambda r, s, f: -math.log(s.perplexity) if s.sentences else -99)
        slors, wpslors = [], []
        for r, s in zip(rows, res):
            one, two, weights = [], [], []
            for n, sent in enumerate(s.sentences):
                if not sent.tokens:
                    continue
                uni, count = word_unigram_logprob(scorer.read(sent.text))
                one.append(slor(sent.logprob, uni, max(1, count)))
                ids = lm.tokens((" " if n else "") + scorer.read(sent.text))
                two.append(slor(sent.logprob, tables[r["set"]].logprob(ids), len(ids)))
                weights.append(sent.tokens)
            total = sum(weights) or 1
            slors.append((sum(a * w for a, w in zip(one, weights)) / total, min(one, default=-99)))
            wpslors.append((sum(a * w for a, w in zip(two, weights)) / total, min(two, default=-99)))
        candidates["SLOR mean" + tag] = [a for a, _ in slors]
        candidates["SLOR min" + tag] = [b for _, b in slors]
        candidates["WPSLOR mean" + tag] = [a for a, _ in wpslors]
        candidates["WPSLOR min" + tag] = [b for _, b in wpslors]
        variants = {
            "relative perplexity, mean, no flags": dataclasses.replace(base_config, penalised=()),
            "relative perplexity, min, no flags": dataclasses.replace(base_config, penalised=(), aggregate="min"),
            "default": base_config,
            "default, min": dataclasses.replace(base_config, aggregate="min"),
            "flags only": dataclasses.replace(base_config, scale=1e9),
            "today's flags": dataclasses.replace(base_config, penalised=TODAY),
            "default, penalty 1": dataclasses.replace(base_config, flag_penalty=1.0),
        }
        for flag in default.penalised:
            variants[f"default without {flag}"] = dataclasses.replace(
                base_config, penalised=tuple(f for f in default.penalised if f != flag))
        for flag in ("no verb", "reads poorly"):
            variants[f"default with {flag}"] = dataclasses.replace(base_config, penalised=default.penalised + (flag,))
        for name, config in variants.items():
            candidates[name + tag] = [fluency_value(s.sentences, f, config) for s, f in zip(res, ref)]
            settings[name + tag] = str(FluencyScorer(config, model=lm).signature())
        _report(rows, candidates, settings, default, done=reading)


def _report(rows, candidates, settings, default, done):
    """Print the table and write the results file (after each reading, so a cut run keeps the first)."""
    from scoring.fluency import FluencyScorer

    out = {name: correlations(rows, values) for name, values in candidates.items()}
    print(f"{'candidate':48s} {'SE summ':>8s} {'SE sys':>8s} {'LSV all':>8s} {'LSV paper':>9s}")
    for name, c in out.items():
        print(f"{name:48s} " + " ".join(f"{'-' if v is None else f'{v:+.3f}':>8s}" for v in c.values()))
    path = save("fluency_validity", {
        "summeval_summaries": sum(r["set"] == "summeval" for r in rows),
        "lsv_summaries": sum(r["set"] == "lsv" for r in rows),
        "lsv_without_source": sum(r["set"] == "lsv" and not r["source"] for r in rows),
        "chosen": "default (tidy)", "today": "today's flags (as-written)", "readings_done": done,
        "correlations": out, "settings": settings, "signature": str(FluencyScorer(default).signature()),
    })
    print(f"written {path}")


def _groups(rows):
    groups = defaultdict(list)
    for i, r in enumerate(rows):
        r["_i"] = i
        groups[(r["set"], r["doc"])].append(r)
    return groups


if __name__ == "__main__":
    main()
