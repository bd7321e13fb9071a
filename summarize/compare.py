"""Candidate summaries of one source side by side: the record behind the ``compare`` command.

A ``Comparison`` holds everything the three renderings need (the terminal text and JSON here,
the HTML page in ``report_html``): the source as a Document and as sentences, the key words
the coverage scorer blanked, the ranked candidates with all their scores, and for each
candidate sentence the source sentences it draws on: from the summarizer's provenance when
given, otherwise found by tf-idf alignment (``summarize.align``).

The key-word grid shows, for each key word (by salience) and each candidate, the status the
coverage scorer gave it: recovered with the summary, known from the source's context alone,
or missed. The key-word set is chosen by the same call with the same settings as the coverage
scorer's own (``choose_keywords`` with the evaluator's ``KeywordConfig``; cached), so the grid
and the scores describe the same blanks.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

from scoring.base import Signature
from scoring.keywords import KeywordConfig, KeywordSet, choose_keywords
from scoring.text import split_sentences
from summarize import align as aligning
from summarize.reading import Document, parse_text
from summarize.segment import Sentence, segment

STATES = ("recovered", "known", "missed")
UNSCORED = "unscored"  # a key word with no scored blank (past the blank limit, or at offset 0)
SYMBOLS = {"recovered": "+", "known": "=", "missed": "-", UNSCORED: "."}
ORIGINS = ("provenance", "aligned")
SETTINGS_ORDER = ("budget", "keywords", "keywords_chosen", "references", "source_words", "source_sentences",
                  "candidates", "combined", "alignment")


@dataclass(frozen=True)
class SentenceLinks:
    """One candidate's sentences and, for each, the indices of the source sentences it draws on."""

    name: str
    sentences: tuple[str, ...]
    sources: tuple[tuple[int, ...], ...]
    origin: str  # "provenance" (recorded by the summarizer) or "aligned" (tf-idf, align.py)

    def __post_init__(self):
        if len(self.sentences) != len(self.sources):
            raise ValueError(
                f"candidate '{self.name}': {len(self.sentences)} sentences but {len(self.sources)} source lists"
            )
        if self.origin not in ORIGINS:
            raise ValueError(f"origin must be one of {ORIGINS}, got {self.origin!r}")

    def to_dict(self) -> dict:
        return {
            "origin": self.origin,
            "sentences": [{"text": t, "sources": list(s)} for t, s in zip(self.sentences, self.sources)],
        }


@dataclass(frozen=True)
class GridRow:
    """One key word and its status in each candidate (in rank order)."""

    word: str
    salience: float
    occurrences: int
    states: tuple[str, ...]

    @property
    def missed_by_all(self) -> bool:
        return bool(self.states) and all(s == "missed" for s in self.states)


@dataclass(frozen=True)
class Comparison:
    """Ranked candidates of one source with their key-word evidence and sentence links."""

    source_name: str
    document: Document
    source_sentences: tuple[Sentence, ...]
    keyword_set: KeywordSet
    candidates: tuple  # scoring.combine.Candidate, ranked
    links: tuple[SentenceLinks, ...]  # parallel to candidates
    budget: int | None
    settings: dict = field(default_factory=dict, hash=False)
    signatures: tuple[Signature, ...] = ()

    def __post_init__(self):
        object.__setattr__(self, "candidates", tuple(self.candidates))
        object.__setattr__(self, "links", tuple(self.links))
        if [c.name for c in self.candidates] != [l.name for l in self.links]:
            raise ValueError("links must list the candidates' names in rank order")

    @property
    def source_text(self) -> str:
        """The text every score was computed on (the Document's blocks joined)."""
        return self.document.text

    @functools.cached_property
    def grid(self) -> tuple[GridRow, ...]:
        """Key words by salience (ties in the key-word set's order), each with its states."""
        evidence = [{k.word: k.status for k in c.coverage.keywords} for c in self.candidates]
        order = sorted(enumerate(self.keyword_set.keywords), key=lambda p: (-p[1].salience, p[0]))
        return tuple(
            GridRow(kw.lemma, kw.salience, kw.count, tuple(e.get(kw.lemma, UNSCORED) for e in evidence))
            for _, kw in order
        )

    @property
    def missed_by_all(self) -> tuple[str, ...]:
        """Key words that every candidate misses (by salience)."""
        return tuple(row.word for row in self.grid if row.missed_by_all)


# --------------------------------------------------------------------------- building


def compare(
    source: str | Document,
    candidates: Sequence[tuple[str, str]],
    *,
    references: Sequence[str] | None = None,
    budget: int | None = None,
    evaluator=None,
    progress: Callable[[str], None] | None = None,
    provenance: Mapping[str, Sequence[Sequence[int]]] | None = None,
    name: str | None = None,
) -> Comparison:
    """Score and rank (name, text) candidates of a source and link their sentences to it.

    ``source`` is text (parsed as plain text) or a Document (keeps its headings and lists);
    the scores are computed on ``Document.text``. ``provenance`` maps a candidate's name to,
    per sentence of that candidate (as ``split_sentences`` splits it), the indices of the source
    sentences (as ``segment`` numbers them) it came from; candidates without it are aligned by
    tf-idf. ``evaluator`` defaults to the process-wide one. Duplicate names get " #2", " #3".
    """
    from scoring.evaluate import default_evaluator

    if isinstance(source, Document):
        document = source
    elif isinstance(source, str):
        document = parse_text(source)
    else:
        raise ValueError(f"the source must be text or a Document, not {type(source).__name__}")
    pairs = distinct_names(candidates)
    sentences = tuple(segment(document))
    _check_provenance(provenance, pairs, len(sentences))
    evaluator = evaluator or default_evaluator()
    ranked = evaluator.evaluate(pairs, source=document.text, references=references, budget=budget, progress=progress)
    keyword_set = choose_keywords(document.text, KeywordConfig(count=evaluator.config.coverage.keywords))
    refs = [r for r in (references or []) if r and r.strip()]
    combine = evaluator.config.combine
    settings = {
        "budget": budget,
        "keywords": evaluator.config.coverage.keywords,
        "keywords_chosen": len(keyword_set.keywords),
        "references": len(refs),
        "combined": combine.describe(any(c.agreement is not None for c in ranked)),
    }
    extra = (combine.signature(),)
    return assemble(
        document, ranked, keyword_set, budget=budget, provenance=provenance, settings=settings,
        extra_signatures=extra, name=name, sentences=sentences,
    )


def assemble(
    document: Document,
    ranked: Sequence,
    keyword_set: KeywordSet,
    *,
    budget: int | None = None,
    provenance: Mapping[str, Sequence[Sequence[int]]] | None = None,
    settings: Mapping | None = None,
    extra_signatures: Sequence[Signature] = (),
    name: str | None = None,
    sentences: Sequence[Sentence] | None = None,
) -> Comparison:
    """Build a Comparison from candidates already scored and ranked (no model is run here)."""
    sentences = tuple(sentences) if sentences is not None else tuple(segment(document))
    source_texts = [s.text for s in sentences]
    provenance = provenance or {}
    _check_provenance(provenance, [(c.name, c.text) for c in ranked], len(sentences))
    links = []
    for c in ranked:
        own = split_sentences(c.text) if c.text.strip() else []
        if c.name in provenance:
            sources = tuple(tuple(int(i) for i in s) for s in provenance[c.name])
            origin = "provenance"
        else:
            sources = tuple(tuple(s) for s in aligning.align(own, source_texts))
            origin = "aligned"
        links.append(SentenceLinks(c.name, tuple(own), sources, origin))
    all_settings = {
        "budget": budget,
        "keywords_chosen": len(keyword_set.keywords),
        "source_words": document.word_count,
        "source_sentences": len(sentences),
        "candidates": len(ranked),
    }
    all_settings.update(settings or {})
    all_settings["alignment"] = _alignment_note(links)
    first = [k for k in SETTINGS_ORDER if k in all_settings]
    all_settings = {k: all_settings[k] for k in first + [k for k in all_settings if k not in first]}
    return Comparison(
        source_name=name or document.source or "source",
        document=document,
        source_sentences=sentences,
        keyword_set=keyword_set,
        candidates=tuple(ranked),
        links=tuple(links),
        budget=budget,
        settings=all_settings,
        signatures=_signatures(ranked) + tuple(extra_signatures) + (aligning.signature(),),
    )


def own_candidates(document: Document, n: int, words: int | None,
                   progress: Callable[[str], None] | None = None) -> tuple[list[tuple[str, str]], dict]:
    """boildown's own ``n`` candidate summaries of ``document`` (at ``words``, 150 by default)
    as (name, text) pairs named "boildown:<recipe>", with their provenance (per sentence, the
    source sentence it came from) where each summary sentence is one sentence of the split."""
    from summarize.pipeline import DEFAULT_WORDS, summarize

    own = summarize(document, words or DEFAULT_WORDS, candidates=max(n, 1), progress=progress)
    pairs, provenance = [], {}
    for draft, _ in own.candidates[:n]:
        name = f"boildown:{draft.recipe}"
        pairs.append((name, draft.text))
        if len(split_sentences(draft.text)) == len(draft.sentences):
            provenance[name] = [[s.source] for s in draft.sentences]
    return pairs, provenance


def sentence_id(index: int) -> str:
    """The HTML page's anchor for a source sentence: numbered from 1 for readers ("s-1" is index 0)."""
    return f"s-{index + 1}"


def distinct_names(candidates: Sequence[tuple[str, str]]) -> list[tuple[str, str]]:
    """The (name, text) pairs, checked, with repeated names made distinct (" #2", " #3", ...)."""
    out: list[tuple[str, str]] = []
    used: set[str] = set()
    for n, pair in enumerate(candidates):
        if not (isinstance(pair, (tuple, list)) and len(pair) == 2 and all(isinstance(x, str) for x in pair)):
            raise ValueError(f"candidate {n} is not a (name, text) pair of strings: {pair!r:.60}")
        name, text = pair
        unique, k = name, 1
        while unique in used:
            k += 1
            unique = f"{name} #{k}"
        used.add(unique)
        out.append((unique, text))
    if not out:
        raise ValueError("there are no candidate summaries to compare; give at least one")
    return out


def _check_provenance(provenance, pairs, n_source: int) -> None:
    if not provenance:
        return
    names = {name for name, _ in pairs}
    for name, per_sentence in provenance.items():
        if name not in names:
            known = ", ".join(sorted(names))
            raise ValueError(f"provenance is given for '{name}', which is not one of the candidates ({known})")
        text = dict(pairs)[name]
        n_own = len(split_sentences(text)) if text.strip() else 0
        per_sentence = list(per_sentence)
        if len(per_sentence) != n_own:
            raise ValueError(
                f"provenance for '{name}' lists {len(per_sentence)} sentence(s) but the candidate has {n_own}; "
                "give one list of source-sentence indices per sentence"
            )
        for k, indices in enumerate(per_sentence):
            for i in indices:
                if isinstance(i, bool) or not isinstance(i, int) or not 0 <= i < n_source:
                    raise ValueError(
                        f"provenance for '{name}', sentence {k}: {i!r} is not a source sentence index "
                        f"(0..{n_source - 1})"
                    )


def _signatures(ranked) -> tuple[Signature, ...]:
    return ranked[0].signatures() if ranked else ()


def _alignment_note(links) -> str:
    origins = {l.origin for l in links}
    rule = (
        f"tf-idf cosine over word 1-2 grams; a second sentence when >= {aligning.SECOND_SHARE:g} x best "
        f"and >= {aligning.SECOND_FLOOR:g}"
    )
    if origins == {"provenance"}:
        return "recorded by the summarizer"
    if "provenance" in origins:
        return f"recorded by the summarizer where known; otherwise {rule}"
    return rule


# --------------------------------------------------------------------------- rendering


def grid_text(comparison: Comparison) -> str:
    """The key-word grid for a terminal: rows key words, columns candidates by rank."""
    rows = comparison.grid
    cols = [f"#{c.rank}" for c in comparison.candidates]
    if not rows:
        return "key words: none were chosen (the source has no content words to blank)"
    width = max(len("key word"), *(len(r.word) for r in rows))
    widths = [max(3, len(h)) for h in cols]
    line = lambda first, cells: "  ".join([first.ljust(width)] + [c.center(w) for c, w in zip(cells, widths)]).rstrip()
    out = [line("key word", cols), line("-" * width, ["-" * w for w in widths])]
    for r in rows:
        out.append(line(r.word, [SYMBOLS[s] for s in r.states]))
    out.append("")
    out.append("+ recovered with the summary   = known from the source's context alone   - missed")
    if any(UNSCORED in r.states for r in rows):
        out.append(". not scored (no blank of this word was scored: the blank limit came first, or it opens the text)")
    out.append("columns are the candidates by rank, as in the table above")
    missed = comparison.missed_by_all
    out.append(f"missed by every candidate ({len(missed)}): {', '.join(missed) if missed else 'none'}")
    return "\n".join(out)


def table(comparison: Comparison) -> str:
    """The whole terminal report: ranked table, key-word grid, notes, signatures, caution."""
    from summarize import report

    ranked = list(comparison.candidates)
    parts = [
        f"source: {comparison.source_name} ({comparison.document.word_count} words)"
        + (f", budget {comparison.budget} words" if comparison.budget else ""),
        "",
        report.table(ranked),
        "",
        grid_text(comparison),
        "",
        report.explanations(ranked),
        "",
        "\n".join(str(s) for s in comparison.signatures),
        report.CAUTION,
    ]
    return "\n".join(parts)


def to_json(comparison: Comparison) -> str:
    """Everything as JSON: report.to_json's candidates plus key words, grid and sentence links."""
    from summarize import report

    names = [c.name for c in comparison.candidates]
    return report.to_json(
        list(comparison.candidates),
        source=comparison.source_name,
        source_words=comparison.document.word_count,
        budget=comparison.budget,
        settings=comparison.settings,
        signatures=[s.to_dict() for s in comparison.signatures],
        keywords=[
            {"word": r.word, "salience": r.salience, "occurrences": r.occurrences, "states": dict(zip(names, r.states))}
            for r in comparison.grid
        ],
        missed_by_every_candidate=list(comparison.missed_by_all),
        source_sentences=[
            {"index": s.index, "id": sentence_id(s.index), "text": s.text, "block": s.block, "section": s.section}
            for s in comparison.source_sentences
        ],
        links={l.name: l.to_dict() for l in comparison.links},
    )
