"""The key-word states (recovered / known / missed) measured against containment.

A key word's state is the explanation an editor reads, so "missed" should mean the summary
does not carry the word and "recovered" that it does. This script reads the per-key-word
evidence that bench/keyword_pairs.py writes (demo documents: the written good/weak abstract
pairs; SQuALITY dev: each story's human summary and a same-length summary of another story)
and prints, per kind of source, the precision of "missed" and of "recovered" against
containment, side by side for:

- the states in use (scoring/coverage.py: containment decides, see STATE_MEANINGS);
- the states the probabilities alone gave before (``KeywordEvidence.probability_status``:
  the summary removes >= 40% of the surprisal and >= 2 nats).

Containment here is the bench's own test, independent of the scorer's: the key word's Porter
stem (NLTK) among the stems of the summary's lower-cased words, or for a word with digits the
word as a substring. Targets (issue 25): precision of "missed" >= 0.9, of "recovered" >= 0.8.

    .venv/bin/python bench/keyword_pairs.py          # the model pass; writes the rows
    .venv/bin/python bench/keyword_states.py [--rows FILE]
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import save  # noqa: E402
from bench.keyword_pairs import ROWS  # noqa: E402

TARGETS = {"missed": 0.9, "recovered": 0.8}
RULES = {"in use (containment)": "state", "before (probabilities alone)": "probability_state"}


def contains(word: str, summary: str) -> bool:
    from summarize.embed import stem, words

    word = word.lower()
    if any(ch.isdigit() for ch in word):
        return word in summary.lower()
    return stem(word) in {stem(w) for w in words(summary)}


def table(rows: list[dict]) -> dict:
    out = {}
    for kind in sorted({r["kind"] for r in rows}):
        sub = [r for r in rows if r["kind"] == kind]
        truth = [contains(r["word"], r["summary"]) for r in sub]
        block = {"judgements": len(sub), "contained_share": round(sum(truth) / len(sub), 3)}
        for name, field in RULES.items():
            entry = {}
            for state, want in (("missed", False), ("recovered", True)):
                flagged = [t for r, t in zip(sub, truth) if r[field] == state]
                right = sum(t == want for t in flagged)
                should = sum(t == want for t in truth)
                entry[state] = {"precision": round(right / len(flagged), 3) if flagged else None,
                                "recall": round(right / should, 3) if should else None, "count": len(flagged)}
            entry["known"] = {"count": sum(r[field] == "known" for r in sub)}
            block[name] = entry
        out[kind] = block
    return out


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--rows", type=Path, nargs="+", default=[ROWS], help="evidence written by bench/keyword_pairs.py")
    args = parser.parse_args(argv)
    missing = [str(p) for p in args.rows if not p.exists()]
    if missing:
        print(f"skipped: no evidence at {', '.join(missing)}; run bench/keyword_pairs.py first")
        return
    parts = [json.loads(p.read_text()) for p in args.rows]
    saved = {"signature": parts[0]["signature"], "rows": [r for part in parts for r in part["rows"]]}
    result = table(saved["rows"])
    for kind, block in result.items():
        print(f"\n{kind}: {block['judgements']} key-word judgements, {block['contained_share']:.0%} contained")
        for name in RULES:
            r = block[name]
            print(f"  {name:30s} missed: precision {r['missed']['precision']} (n={r['missed']['count']})   "
                  f"recovered: precision {r['recovered']['precision']} (n={r['recovered']['count']})   "
                  f"known: {r['known']['count']}")
    save("keyword_states", {"results": result, "targets": TARGETS, "signature": saved["signature"]})


if __name__ == "__main__":
    main()
