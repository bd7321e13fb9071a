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

Only source sentences a reader would call sentences are link targets (``linkable``): not the
lines of a table of contents (items under a heading named "Contents", or lines repeating one of
the document's headings), and not short fragments without closing punctuation (a signature
"Chief Executive", a label "Published: April 2025") or lines in capitals. Headings are never
sentences (``summarize.segment``). Every sentence still counts towards the idf.

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

# A line shorter than this that does not end a sentence is a fragment, not a sentence: a rule of
# thumb (names, job titles, labels and dates run to 2-5 words), not tuned on data.
FRAGMENT_WORDS = 6
CONTENTS_TITLES = ("contents", "table of contents", "list of contents", "in this report", "in this document")

WORD = re.compile(r"[^\W_]+(?:['’.,][^\W_]+)*")
_CLOSES = re.compile(r"[.!?…:;][\"'”’)\]]*$")
# a section number in front ("6.", "2.3", "iv)") or a page number or dot leader behind
_NUMBERING = re.compile(r"^\s*(?:[0-9]+(?:\.[0-9]+)*[.)]?|[ivxlc]+[.)])\s+|(?:\s*\.{2,}|\s)\s*[0-9]+\s*$", re.I)


def terms(sentence: str) -> list[str]:
    """Lowercased word unigrams, then bigrams (joined by a space), in order."""
    words = WORD.findall(sentence.lower())
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


def _bare(text: str) -> str:
    """A heading or contents line without its numbering, page number, case and spacing."""
    return " ".join(_NUMBERING.sub(" ", text).lower().split()).strip(" .:")


def is_fragment(text: str) -> bool:
    """A short line that does not end a sentence, or a line written in capitals."""
    words = text.split()
    if any(ch.isalpha() for ch in text) and not any(ch.islower() for ch in text) and len(words) > 1:
        return True
    return len(words) < FRAGMENT_WORDS and not _CLOSES.search(text.strip())


def linkable(document, sentences) -> list[bool]:
    """For each source sentence (``summarize.segment``'s, of ``document``), whether a link may
    point at it: not a contents line and not a fragment (see the module docstring). When no
    sentence qualifies (a document of short list items), every one does."""
    headings = {_bare(b.text) for b in document.blocks if b.kind == "heading"} - {""}
    under_contents, title = set(), None
    for b, block in enumerate(document.blocks):
        if block.kind == "heading":
            title = _bare(block.text)
        elif title in CONTENTS_TITLES:
            under_contents.add(b)
    out = []
    for s in sentences:
        contents = s.block in under_contents or _bare(s.text) in headings
        out.append(not contents and not is_fragment(s.text))
    return out if any(out) else [True] * len(out)


def align(summary_sentences: Sequence[str], source_sentences: Sequence[str],
          allowed: Sequence[bool] | None = None) -> list[list[int]]:
    """For each summary sentence, the indices of the one or two source sentences it draws on
    (best first); an empty list when it shares no term with any source sentence. ``allowed``
    (parallel to the source sentences, e.g. ``linkable``'s answer) keeps the others out of the
    answer; they still count towards the idf."""
    if not summary_sentences:
        return []
    if not source_sentences:
        return [[] for _ in summary_sentences]
    sims = similarities(summary_sentences, source_sentences)
    if allowed is not None:
        if len(allowed) != len(source_sentences):
            raise ValueError(f"allowed lists {len(allowed)} source sentences, not {len(source_sentences)}")
        sims[:, ~np.asarray(allowed, dtype=bool)] = 0.0
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
    settings = {"similarity": "tfidf-cosine", "ngrams": "1-2", "second": SECOND_SHARE, "floor": SECOND_FLOOR,
                "skip": f"contents,fragments<{FRAGMENT_WORDS}"}
    return Signature.build("align", settings)
