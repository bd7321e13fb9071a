"""Candidates that are drafts of one another, and the words in which two drafts differ.

Two candidates count as drafts of one another when most of their words line up: the ratio of
Python's ``difflib.SequenceMatcher`` over their word sequences (2 x matched words / all words;
Ratcliff & Obershelp's "gestalt pattern matching", as the standard library documents it) is at
least ``DRAFT_RATIO``. Their difference is the same matcher's opcodes, word by word: the words
both share, the words only the first has, the words only the second has.

Candidates written apart (two people's abstracts of one report) share far fewer words in order
than two builds of the same summary that differ by a sentence or a deleted phrase, so a page
shows the word-level view only where it helps.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from difflib import SequenceMatcher

# A rule of thumb, not tuned on data: half the words in common, in order. Measured once: the demo
# report's two hand-written abstracts give 0.11; boildown's two best 60-word builds of the test
# fixture tests/data/compare/source.md gave 0.66.
DRAFT_RATIO = 0.5
MAX_PAIRS = 3  # word-level views on one page (the closest pairs)
OPS = ("same", "only_first", "only_second")


@dataclass(frozen=True)
class DraftPair:
    """Two candidates (positions in rank order, the better ranked first) and their difference:
    runs of words, each ``(op, text)`` with ``op`` one of ``OPS``."""

    first: int
    second: int
    ratio: float
    runs: tuple[tuple[str, str], ...]

    @property
    def changed_words(self) -> tuple[int, int]:
        """Words only in the first, words only in the second."""
        count = lambda op: sum(len(t.split()) for o, t in self.runs if o == op)
        return count("only_first"), count("only_second")

    def to_dict(self, names: Sequence[str]) -> dict:
        return {"first": names[self.first], "second": names[self.second], "ratio": round(self.ratio, 4),
                "runs": [{"op": op, "text": text} for op, text in self.runs]}


def _matcher(a: str, b: str) -> SequenceMatcher:
    # autojunk off: on long texts it would treat common words as junk and miss matches
    return SequenceMatcher(None, a.split(), b.split(), autojunk=False)


def word_runs(first: str, second: str) -> tuple[tuple[str, str], ...]:
    """The word-level difference of two texts as runs of ``(op, text)`` (spacing normalised)."""
    a, b = first.split(), second.split()
    runs: list[tuple[str, str]] = []
    for tag, i1, i2, j1, j2 in _matcher(first, second).get_opcodes():
        if tag == "equal":
            runs.append(("same", " ".join(a[i1:i2])))
            continue
        if i2 > i1:
            runs.append(("only_first", " ".join(a[i1:i2])))
        if j2 > j1:
            runs.append(("only_second", " ".join(b[j1:j2])))
    return tuple(runs)


def draft_pairs(texts: Sequence[str], ratio: float = DRAFT_RATIO, limit: int = MAX_PAIRS) -> tuple[DraftPair, ...]:
    """The pairs of texts (in the given order, the earlier first) that are drafts of one another,
    closest first, at most ``limit``; an empty text is nobody's draft."""
    found = []
    for i in range(len(texts)):
        for j in range(i + 1, len(texts)):
            if not texts[i].strip() or not texts[j].strip():
                continue
            r = _matcher(texts[i], texts[j]).ratio()
            if r >= ratio:
                found.append((r, i, j))
    found.sort(key=lambda f: (-f[0], f[1], f[2]))
    return tuple(DraftPair(i, j, r, word_runs(texts[i], texts[j])) for r, i, j in found[:limit])
