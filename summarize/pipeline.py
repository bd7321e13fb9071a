"""The main job end to end: document -> sentences -> candidates -> scores -> the best summary.

``summarize(source, words=150)`` takes text (``str``) or a path (``pathlib.Path``), builds the
candidates of ``summarize.search``, scores them with ``scoring.evaluate`` and returns a
``Summary``: the best candidate's text, its scores and provenance, and the ranked alternatives.
"""

from __future__ import annotations

import itertools
import math
import os
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Callable

from summarize.recipes import RECIPES, variants

DEFAULT_WORDS = 150
from summarize.search import SummarySentence


@dataclass(frozen=True)
class Summary:
    """The result of summarizing one document."""

    text: str
    words: int
    budget: int | None
    source_words: int
    sentences: tuple[SummarySentence, ...]
    scores: object | None  # scoring.combine.Candidate of the chosen summary
    candidates: tuple = ()  # ranked (Draft, Candidate) pairs, the chosen one first
    notice: str | None = None
    settings: dict = field(default_factory=dict)

    def to_dict(self, with_candidates: bool = True) -> dict:
        out = {
            "summary": self.text,
            "words": self.words,
            "budget": self.budget,
            "source_words": self.source_words,
            "notice": self.notice,
            "settings": self.settings,
            "sentences": [
                {"text": s.text, "source_number": s.source + 1, "deleted": list(s.deleted), "cut": s.cut}
                for s in self.sentences
            ],
            "scores": _scores(self.scores),
        }
        if with_candidates:
            out["candidates"] = [
                {"recipe": d.recipe, "rank": c.rank, "words": c.words, "text": d.text, "scores": _scores(c),
                 "sentences": [{"text": s.text, "source_number": s.source + 1, "deleted": list(s.deleted)} for s in d.sentences]}
                for d, c in self.candidates
            ]
        return out


def _scores(candidate) -> dict | None:
    if candidate is None:
        return None
    combine, order = candidate.combine, candidate.order
    return {
        "combined": candidate.combined,
        "ordering": candidate.ordering,
        "coverage": candidate.coverage.share,
        "fluency": candidate.fluency.value,
        "agreement": candidate.agreement.value if candidate.agreement is not None else None,
        "over_budget": candidate.over_budget,
        "recovered": list(candidate.coverage.recovered),
        "missed": list(candidate.coverage.missed),
        "signatures": {
            "coverage": candidate.coverage.signature.to_dict(),
            "fluency": candidate.fluency.signature.to_dict(),
            "agreement": candidate.agreement.signature.to_dict() if candidate.agreement is not None else None,
            "combined": combine.signature().to_dict() | {"formula": combine.describe()},
            "ordering": (order.signature().to_dict() | {"formula": order.describe()}
                         if candidate.ordering is not None else None),
        },
    }


def load(source) -> object:
    """A reading.Document from text or a path."""
    from summarize.reading import parse_text, read_document

    if hasattr(source, "blocks") and hasattr(source, "word_count"):
        return source  # already a reading.Document
    if isinstance(source, os.PathLike):
        return read_document(Path(source))
    if not isinstance(source, str):
        raise TypeError(f"source must be text (str) or a path (pathlib.Path), not {type(source).__name__}")
    return parse_text(source, "md" if source.lstrip().startswith("#") else "txt")


def budget_for(source_words: int, words: int | None, ratio: float | None) -> int:
    if words is not None and ratio is not None:
        raise ValueError("give a word budget or a ratio, not both")
    if ratio is not None:
        if not 0 < ratio < 1:
            raise ValueError(f"ratio must lie between 0 and 1 (a fraction of the source), got {ratio}")
        return max(1, math.floor(ratio * source_words))
    if words is None:
        raise ValueError("give a word budget (words=...), a ratio, or a number of sentences")
    if words < 1:
        raise ValueError(f"the word budget must be at least 1, got {words}")
    return words


def summarize(
    source,
    words: int | None = None,
    *,
    ratio: float | None = None,
    sentences: int | None = None,
    candidates: int = 8,
    compress: bool = True,
    references: list[str] | None = None,
    progress: Callable[[str], None] | None = None,
    evaluator=None,
) -> Summary:
    """Summarize text (str), a file (pathlib.Path) or a reading.Document to a word budget (a
    hard maximum; 150 words when no budget, ratio or sentence count is given), build up to
    ``candidates`` candidates, score them and return the best with the ranked alternatives."""
    from scoring.evaluate import default_evaluator
    from summarize.search import analyse, build, by_sentences, distinct

    say = progress or (lambda _m: None)
    document = load(source)
    total = document.word_count
    if words is None and ratio is None and sentences is None:
        words = DEFAULT_WORDS
    settings = {"words": words, "ratio": ratio, "sentences": sentences, "candidates": candidates, "compress": compress}
    evaluator = evaluator or default_evaluator()
    if sentences is not None:
        if sentences < 1:
            raise ValueError(f"the number of sentences must be at least 1, got {sentences}")
        if words is not None or ratio is not None:
            raise ValueError("give a number of sentences or a word budget, not both")
        analysis = analyse(document, evaluator.coverage.config.keywords, say)
        draft = by_sentences(analysis, sentences)
        drafts = [draft]
        budget = None
    else:
        budget = budget_for(total, words, ratio)
        settings["budget"] = budget
        if total <= budget:
            text = document.text
            return Summary(text, total, budget, total, (), None, (), f"the source has {total} words, within the "
                           f"budget of {budget}: it is returned whole", settings)
        say(f"reading {total} words into sentences")
        analysis = analyse(document, evaluator.coverage.config.keywords, say)
        wanted = max(1, candidates)
        recipes = list(RECIPES[:wanted])
        if not compress:
            recipes = [replace(r, compress=0.0) for r in recipes]
        drafts = []
        for n, recipe in enumerate(recipes, 1):
            say(f"building candidate {n}/{len(recipes)} ({recipe.name})")
            drafts.append(build(analysis, recipe, budget))
        drafts = distinct(drafts)
        # duplicates: the named recipes not yet tried, then the variants
        extra = itertools.chain(RECIPES[wanted:], variants())  # variants() never ends: never make it a list
        for _ in range(3 * wanted):
            if len(drafts) >= wanted:
                break
            recipe = next(extra, None)
            if recipe is None:
                break
            if not compress:
                recipe = replace(recipe, compress=0.0)
            drafts = distinct(drafts + [build(analysis, recipe, budget)])
    say(f"scoring {len(drafts)} candidate(s)")
    ranked = evaluator.evaluate([(d.recipe, d.text) for d in drafts], source=document.text,
                                references=references, budget=budget, progress=say)
    by_name = {d.recipe: d for d in drafts}
    pairs = tuple((by_name[c.name], c) for c in ranked)
    best_draft, best = pairs[0]
    return Summary(best_draft.text, best_draft.words, budget, total, best_draft.sentences, best, pairs, None, settings)
