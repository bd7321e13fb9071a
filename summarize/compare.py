"""Candidate summaries of one source side by side: the record behind the ``compare`` command.

A ``Comparison`` holds everything the renderings need (terminal text, JSON and CSV in
``compare_text``, the HTML page in ``report_html``): the source as a Document and as sentences,
the key words the coverage scorer blanked, the ranked candidates with all their scores, and for
each candidate sentence the source sentences it draws on: from the summarizer's provenance when
given, otherwise found by tf-idf alignment (``summarize.align``, which points only at real
sentences: no contents lines or fragments).

The key-word grid shows, for each key word (by salience) and each candidate, the state the
coverage scorer gave it (``KeywordEvidence.status``). The key-word set is chosen by the same
call with the same settings as the coverage scorer's own (``choose_keywords`` with the
evaluator's ``KeywordConfig``; cached), so the grid and the scores describe the same blanks.
The same states mark the key words in each candidate's sentences (``Comparison.marks``: a
key word is found in a candidate by the forms it takes in the source, or by its Porter stem).
``Comparison.separation`` says which component of the ranking put the first candidate above the
second (``summarize.separation``);
``Comparison.drafts`` holds the word-level differences of candidates that are drafts of one
another (``summarize.drafts``).
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace

from scoring.base import Signature
from scoring.keywords import KeywordConfig, KeywordSet, choose_keywords
from scoring.text import split_sentences
from summarize import align as aligning
from summarize import drafts as drafting
from summarize.reading import Document, parse_text
from summarize.segment import Sentence, segment

UNSCORED = "unscored"  # a key word with no scored blank (past the blank limit, or at offset 0)
ORIGINS = ("provenance", "aligned")
SETTINGS_ORDER = ("budget", "keywords", "keywords_chosen", "references", "source_words", "source_sentences",
                  "candidates", "combined", "ordering", "alignment")


@dataclass(frozen=True)
class StateText:
    """How the reports name a key-word state: a symbol for the terminal and CSV, one for the
    page, a label and its meaning in plain words."""

    symbol: str
    mark: str
    label: str
    meaning: str


# The one place the reports' legend words live (the terminal grid, the page's legend, the marks
# in the candidates' sentences). The states themselves are the coverage scorer's; a meaning it
# publishes in ``scoring.coverage.STATE_MEANINGS`` replaces the one written here (``state_text``).
STATE_TEXT = {  # the meanings are fallbacks: scoring.coverage.STATE_MEANINGS is what the legends show
    "recovered": StateText("+", "+", "recovered", "The summary contains this word or a form of it."),
    "known": StateText("=", "=", "known from context",
                       "The model expects this word from the source alone, without the summary."),
    "missed": StateText("-", "\u2212", "missed", "The summary does not contain this word or a form of it."),
    UNSCORED: StateText(".", "\u00b7", "not scored",
                        "The coverage check scored no blank of this word (its limit on blanks was reached first, "
                        "or the word only opens the text); no evidence either way."),
}
STATE_ORDER = ("recovered", "known", "missed", UNSCORED)  # legend order; states not listed follow


def state_text(state: str) -> StateText:
    """The legend entry of a state (a state this module does not know gets its own name)."""
    from scoring import coverage

    ours = STATE_TEXT.get(state) or StateText("?", "?", state.replace("_", " "), "")
    published = getattr(coverage, "STATE_MEANINGS", None) or {}
    meaning = published.get(state) if isinstance(published, Mapping) else None
    return replace(ours, meaning=meaning) if isinstance(meaning, str) and meaning else ours


def present_states(states) -> list[str]:
    """The states that occur, in legend order (only those: a legend lists nothing absent)."""
    seen = set(states)
    return [s for s in STATE_ORDER if s in seen] + sorted(seen - set(STATE_ORDER))


@dataclass(frozen=True)
class SentenceLinks:
    """One candidate's sentences and, for each, the indices (from 0) of the source sentences it
    draws on."""

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
class Mark:
    """A key word found in a candidate's sentence: character span in the sentence, the key word
    (lemma) and the state the coverage scorer gave it for that candidate."""

    start: int
    end: int
    word: str
    state: str


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
    linkable: tuple[bool, ...] = ()  # per source sentence: may an aligned link point at it

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

    @functools.cached_property
    def marks(self) -> tuple[tuple[tuple[Mark, ...], ...], ...]:
        """Per candidate (rank order), per sentence, the key words it names, each with the state
        the grid gives it for that candidate."""
        finder = KeywordFinder(self.keyword_set, self.source_text)
        states = [{row.word: row.states[i] for row in self.grid} for i in range(len(self.candidates))]
        return tuple(
            tuple(tuple(Mark(s, e, w, states[i].get(w, UNSCORED)) for s, e, w in finder.find(text))
                  for text in links.sentences)
            for i, links in enumerate(self.links)
        )

    @functools.cached_property
    def named(self) -> tuple[frozenset[str], ...]:
        """Per candidate, the key words its text names."""
        return tuple(frozenset(m.word for sentence in per for m in sentence) for per in self.marks)

    def named_only_by(self, i: int) -> tuple[str, ...]:
        """Key words candidate ``i`` names and no other candidate does (by salience)."""
        others = set().union(*(n for j, n in enumerate(self.named) if j != i))
        return tuple(row.word for row in self.grid if row.word in self.named[i] and row.word not in others)

    @functools.cached_property
    def drafts(self) -> tuple[drafting.DraftPair, ...]:
        """Candidates that are drafts of one another, with their word-level differences."""
        return drafting.draft_pairs([c.text for c in self.candidates])

    @functools.cached_property
    def separation(self):
        """What put the first candidate above the second (``summarize.separation``), or None."""
        from summarize.separation import separation

        return separation(self.candidates)


# --------------------------------------------------------------------------- key words in text


class KeywordFinder:
    """Finds the key words in any text: by the forms each takes in the source (its spans), by its
    lemma, or by the Porter stem of a word of letters (summarize.embed.stem), so "cracked" in a
    summary finds the key word "crack" even when the source only says "cracks"."""

    def __init__(self, keyword_set: KeywordSet, source_text: str):
        from summarize.embed import stem

        self._stem = stem
        self.forms: dict[str, str] = {}
        for kw in keyword_set.keywords:
            self.forms.setdefault(kw.lemma.lower(), kw.lemma)
            for s, e in kw.spans:
                self.forms.setdefault(source_text[s:e].lower(), kw.lemma)
        self.stems = {stem(w): lemma for w, lemma in self.forms.items() if w.isalpha()}

    def find(self, text: str) -> list[tuple[int, int, str]]:
        """(start, end, key word) for every key word in ``text``, in order."""
        out = []
        for m in aligning.WORD.finditer(text):
            word = m.group(0).lower()
            end = m.end()
            for tail in ("'s", "\u2019s"):
                if word.endswith(tail) and len(word) > len(tail):
                    word, end = word[: -len(tail)], end - len(tail)
            lemma = self.forms.get(word) or (self.stems.get(self._stem(word)) if word.isalpha() else None)
            if lemma is not None:
                out.append((m.start(), end, lemma))
        return out


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
    scored: Mapping[str, Mapping[str, object]] | None = None,
) -> Comparison:
    """Score and rank (name, text) candidates of a source and link their sentences to it.

    ``source`` is text (parsed as plain text) or a Document (keeps its headings and lists);
    the scores are computed on ``Document.text``. ``provenance`` maps a candidate's name to,
    per sentence of that candidate (as ``split_sentences`` splits it), the indices (from 0) of
    the source sentences (as ``segment`` numbers them) it came from; candidates without it are
    aligned by tf-idf. ``scored`` maps a candidate's text to results this evaluator already
    computed for it on this source (by scorer name; ``own_candidates`` gives them): they are
    reused, not computed again. ``evaluator`` defaults to the process-wide one. Duplicate names
    get " #2", " #3".
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
    known = [(scored or {}).get(text) for _, text in pairs]
    ranked = evaluator.evaluate(pairs, source=document.text, references=references, budget=budget, progress=progress,
                                scored=known if any(known) else None)
    keyword_set = choose_keywords(document.text, KeywordConfig(count=evaluator.config.coverage.keywords))
    refs = [r for r in (references or []) if r and r.strip()]
    combine = evaluator.config.combine
    ordered = any(c.ordering is not None for c in ranked)  # 3 or more candidates
    settings = {
        "budget": budget,
        "keywords": evaluator.config.coverage.keywords,
        "keywords_chosen": len(keyword_set.keywords),
        "references": len(refs),
        "combined": combine.describe(),
        "ordering": evaluator.config.order.describe() if ordered else None,
    }
    extra = (combine.signature(),) + ((evaluator.config.order.signature(),) if ordered else ())
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
    linkable = tuple(aligning.linkable(document, sentences))
    provenance = provenance or {}
    _check_provenance(provenance, [(c.name, c.text) for c in ranked], len(sentences))
    links = []
    for c in ranked:
        own = split_sentences(c.text) if c.text.strip() else []
        if c.name in provenance:
            sources = tuple(tuple(int(i) for i in s) for s in provenance[c.name])
            origin = "provenance"
        else:
            sources = tuple(tuple(s) for s in aligning.align(own, source_texts, linkable))
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
        linkable=linkable,
    )


@dataclass(frozen=True)
class OwnCandidates:
    """boildown's own candidates for a comparison: (name, text) pairs, their provenance, and the
    results the summarizer already computed for them (by text, for ``compare(scored=...)``)."""

    pairs: tuple[tuple[str, str], ...]
    provenance: dict
    scored: dict
    built: int  # how many candidates were built and ranked to choose them from
    notice: str | None = None


def own_candidates(document: Document, n: int, words: int | None, *, evaluator=None,
                   progress: Callable[[str], None] | None = None, built: int | None = None) -> OwnCandidates:
    """boildown's ``n`` best candidate summaries of ``document`` (at ``words``, 150 by default),
    chosen from ``built`` (the summarizer's default number, or ``n`` when larger) that the
    summarizer builds and ranks, named "boildown:<recipe>", with their provenance (per sentence,
    the source sentence it came from) where each summary sentence is one sentence of the split.
    Give the evaluator the comparison will use, so that their scores can be reused."""
    from summarize.pipeline import DEFAULT_WORDS, summarize
    from summarize.recipes import DEFAULT_CANDIDATES

    wanted = max(n, built or DEFAULT_CANDIDATES, 1)
    own = summarize(document, words or DEFAULT_WORDS, candidates=wanted, progress=progress, evaluator=evaluator)
    pairs, provenance, scored = [], {}, {}
    for draft, scores in own.candidates[:n]:
        name = f"boildown:{draft.recipe}"
        pairs.append((name, draft.text))
        scored[draft.text] = dict(scores.scores)
        if len(split_sentences(draft.text)) == len(draft.sentences):
            provenance[name] = [[s.source] for s in draft.sentences]
    return OwnCandidates(tuple(pairs), provenance, scored, len(own.candidates), own.notice)


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
        f"and >= {aligning.SECOND_FLOOR:g}; contents lines and fragments are never linked"
    )
    if origins == {"provenance"}:
        return "recorded by the summarizer"
    if "provenance" in origins:
        return f"recorded by the summarizer where known; otherwise {rule}"
    return rule
