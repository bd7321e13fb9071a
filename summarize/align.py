"""Which source sentences a summary sentence draws on, when nobody recorded it.

A summary made by boildown knows where each of its sentences came from (its provenance); a
summary written elsewhere does not. For those, each summary sentence is matched to the source
sentences most like it by tf-idf cosine similarity (Salton & Buckley, 1988, "Term-weighting
approaches in automatic text retrieval") over lowercased word unigrams and bigrams:

* terms: runs of letters and digits (inner apostrophes, points and commas kept, so "99.94",
  "410,000" and "board's" stay whole), lowercased, and every pair of neighbouring words;
* weights: term count times smoothed idf, ``idf = ln((1 + N) / (1 + df)) + 1`` with N source
  sentences and df the number of them containing the term; vectors are L2-normalised;
* choice: the best-scoring source sentence, plus the runner-up when its score is at least
  ``SECOND_SHARE`` of the best and at least ``SECOND_FLOOR``; a sentence sharing no term with
  the source draws on nothing (an empty list). Ties go to the earlier source sentence.

Pure Python and numpy: fast enough for a 10,000-word source, no model needed.
"""

from __future__ import annotations

import math
import re
from collections import Counter
from collections.abc import Sequence

import numpy as np

from scoring.base import Signature

# Both constants are rules of thumb set by the issue that asked for this module (a second
# source sentence only when it is nearly as close as the best, and close in absolute terms);
# not tuned on data.
SECOND_SHARE = 0.6
SECOND_FLOOR = 0.2

_WORD = re.compile(r"[^\W_]+(?:['’.,][^\W_]+)*")


def terms(sentence: str) -> list[str]:
    """Lowercased word unigrams, then bigrams (joined by a space), in order."""
    words = _WORD.findall(sentence.lower())
    return words + [f"{a} {b}" for a, b in zip(words, words[1:])]


def _matrix(bags: list[Counter], vocab: dict[str, int], idf: np.ndarray) -> np.ndarray:
    out = np.zeros((len(bags), len(vocab)))
    for row, bag in enumerate(bags):
        for term, count in bag.items():
            col = vocab.get(term)
            if col is not None:
                out[row, col] = count * idf[col]
    norms = np.linalg.norm(out, axis=1, keepdims=True)
    return np.divide(out, norms, out=np.zeros_like(out), where=norms > 0)


def similarities(summary_sentences: Sequence[str], source_sentences: Sequence[str]) -> np.ndarray:
    """Cosine similarity of every summary sentence (rows) to every source sentence (columns)."""
    source_bags = [Counter(terms(s)) for s in source_sentences]
    df: Counter = Counter()
    for bag in source_bags:
        df.update(bag.keys())
    vocab = {term: i for i, term in enumerate(sorted(df))}
    n = len(source_bags)
    idf = np.array([math.log((1 + n) / (1 + df[t])) + 1 for t in sorted(df)])
    src = _matrix(source_bags, vocab, idf)
    summ = _matrix([Counter(terms(s)) for s in summary_sentences], vocab, idf)
    return summ @ src.T


def align(summary_sentences: Sequence[str], source_sentences: Sequence[str]) -> list[list[int]]:
    """For each summary sentence, the indices of the one or two source sentences it draws on
    (best first); an empty list when it shares no term with any source sentence."""
    if not summary_sentences:
        return []
    if not source_sentences:
        return [[] for _ in summary_sentences]
    sims = similarities(summary_sentences, source_sentences)
    out = []
    for row in sims:
        order = np.argsort(-row, kind="stable")
        best = float(row[order[0]])
        if best <= 0:
            out.append([])
            continue
        chosen = [int(order[0])]
        if len(order) > 1:
            second = float(row[order[1]])
            if second >= SECOND_SHARE * best and second >= SECOND_FLOOR:
                chosen.append(int(order[1]))
        out.append(chosen)
    return out


def signature() -> Signature:
    """The alignment rule, for the comparison report's settings."""
    settings = {"similarity": "tfidf-cosine", "ngrams": "1-2", "second": SECOND_SHARE, "floor": SECOND_FLOOR}
    return Signature.build("align", settings)
