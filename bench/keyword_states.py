"""Calibrate the key-word states (recovered / known / missed) against containment.

A key word's state is the explanation an editor reads, so "recovered" should mostly mean
"the summary carries this word" and "missed" should mostly mean it does not. This script
collects each key word's log-probability without (l0) and with (l1) the summary, and whether
the summary contains the word (Porter-stemmed, or as a substring for numbers), on two kinds of
source:

- long: SQuALITY dev stories (about 5,000 words) with their four human plot summaries, plus a
  summary of a different story as a negative;
- short: the first REALSumm documents (each reference treated as the source) with their
  system summaries.

It then prints precision and recall of the state rule in scoring/coverage.py (and of the
variants listed in RULES) for "recovered" against containment, per kind of source.

    .venv/bin/python bench/keyword_states.py [--stories 8] [--realsumm 10] [--rows FILE]

The per-key-word evidence is written to --rows (default /tmp/boildown_keyword_states.json,
outside the project: it holds words of the external data); --retable re-reads it and
recomputes the table without running the model, after a change to the rule.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench import data  # noqa: E402
from bench.common import save  # noqa: E402
from bench.coverage_validity import clean, load  # noqa: E402


def contains(word: str, summary_stems: set[str], summary_lower: str) -> bool:
    from summarize.embed import _stemmer

    if any(ch.isdigit() for ch in word):
        return word in summary_lower
    return _stemmer().stem(word) in summary_stems


def evidence(scorer, source: str, summaries: list[str], kind: str) -> list[dict]:
    from summarize.embed import _stemmer, words

    rows = []
    for summary, res in zip(summaries, scorer.score_many(summaries, source=source)):
        stems = {_stemmer().stem(w) for w in words(summary)}
        lower = summary.lower()
        for k in res.keywords:
            rows.append({
                "kind": kind,
                "word": k.word,
                "l0": math.log(max(k.p_without, 1e-12)),
                "l1": math.log(max(k.p_with, 1e-12)),
                "contained": contains(k.word, stems, lower),
            })
    return rows


# Candidate rules: (name, function of l0 and l1 -> recovered?)
def current(l0, l1):
    from scoring.coverage import KeywordEvidence

    return KeywordEvidence("w", 1, math.exp(l0), math.exp(l1), 0, 0).status == "recovered"


RULES = {
    "in use (scoring/coverage.py)": current,
    "p1>=0.05 & gain>=1.5 (short-source rule alone)": lambda l0, l1: l1 >= math.log(0.05) and l1 - l0 >= 1.5,
    "gain>=40% of surprisal & gain>=2": lambda l0, l1: l1 - l0 >= 2 and l1 - l0 >= 0.4 * -l0,
    "gain>=6 & l1>=-10": lambda l0, l1: l1 - l0 >= 6 and l1 >= -10,
    "gain>=5 & l1>=-10": lambda l0, l1: l1 - l0 >= 5 and l1 >= -10,
    "gain>=7 & l1>=-12": lambda l0, l1: l1 - l0 >= 7 and l1 >= -12,
    "gain>=8": lambda l0, l1: l1 - l0 >= 8,
    "short rule or (gain>=6 & l1>=-10)": lambda l0, l1: (l1 >= math.log(0.05) and l1 - l0 >= 1.5)
    or (l1 - l0 >= 6 and l1 >= -10),
}


def table(rows: list[dict]) -> dict:
    out = {}
    for kind in sorted({r["kind"] for r in rows}):
        sub = [r for r in rows if r["kind"] == kind and r["l0"] < math.log(0.25)]  # "known" words aside
        out[kind] = {}
        for name, rule in RULES.items():
            flagged = [r for r in sub if rule(r["l0"], r["l1"])]
            tp = sum(r["contained"] for r in flagged)
            pos = sum(r["contained"] for r in sub)
            out[kind][name] = {
                "precision": round(tp / len(flagged), 3) if flagged else None,
                "recall": round(tp / pos, 3) if pos else None,
                "recovered_share": round(len(flagged) / len(sub), 3) if sub else None,
            }
        out[kind]["key_words"] = len(sub)
        out[kind]["contained_share"] = round(sum(r["contained"] for r in sub) / len(sub), 3) if sub else None
    return out


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--stories", type=int, default=8, help="SQuALITY dev stories (long sources)")
    parser.add_argument("--realsumm", type=int, default=10, help="REALSumm documents (short sources)")
    parser.add_argument("--rows", type=Path, default=Path("/tmp/boildown_keyword_states.json"))
    parser.add_argument("--retable", action="store_true", help="recompute the table from --rows only")
    args = parser.parse_args(argv)
    if args.retable:
        saved = json.loads(args.rows.read_text())
        return report(saved["rows"], saved["stories"], saved["realsumm_documents"], saved["signature"])

    from scoring.coverage import CoverageScorer

    scorer = CoverageScorer()
    rows: list[dict] = []
    try:
        stories = data.squality("dev")[: args.stories]
    except data.DataMissing as exc:
        print(f"skipped SQuALITY: {exc}")
        stories = []
    for n, ex in enumerate(stories):
        other = stories[(n + 1) % len(stories)].references[0]
        rows += evidence(scorer, ex.source_text, ex.references + [other], "long (SQuALITY dev)")
        print(f"\rlong: {n + 1}/{len(stories)}", end="", file=sys.stderr)
    print(file=sys.stderr)
    docs = load(args.realsumm) if args.realsumm else {}  # exits with a reason if REALSumm is absent
    for n, (_doc, items) in enumerate(docs.items()):
        rows += evidence(scorer, clean(items[0]["reference"]), [clean(r["summary"]) for r in items], "short (REALSumm)")
        print(f"\rshort: {n + 1}/{len(docs)}", end="", file=sys.stderr)
    print(file=sys.stderr)

    signature = str(scorer.signature())
    args.rows.write_text(json.dumps({"stories": len(stories), "realsumm_documents": len(docs), "signature": signature,
                                     "rows": rows}))
    report(rows, len(stories), len(docs), signature)


def report(rows, stories: int, documents: int, signature: str):
    result = table(rows)
    for kind, block in result.items():
        print(f"\n{kind}: {block['key_words']} key-word judgements, {block['contained_share']:.0%} contained")
        for name, r in block.items():
            if isinstance(r, dict):
                print(f"  {name:48s} precision {r['precision']}  recall {r['recall']}  recovered {r['recovered_share']}")
    save("keyword_states", {"stories": stories, "realsumm_documents": documents, "results": result,
                            "signature": signature})


if __name__ == "__main__":
    main()
