"""Candidate search: build several summaries that weigh salience, position, diversity and
compression differently, fit each to the word budget exactly, score them all, rank them.

Per candidate ("recipe"):
1. select sentences (``extract``) under the budget;
2. spend the words left on sentences that name key words the summary lacks (most new key-word
   salience per word first), then on the selection objective's next picks, then ``_fill``:
   this is the uncompressed draft;
3. compression (when the recipe asks for it): find deletable spans in the chosen sentences
   (``compress``) and make the ones that cost the causal model least fluency per word saved
   (mean token log-probability of the sentence with and without the span, at most the recipe's
   threshold in nats per word), never one that takes the last mention of a key word out of the
   summary, nor a scope phrase that names one; spend the freed words as in step 2, twice
   (the second round compresses what the first added);
4. keep the compressed draft only if it names key words of more total salience than the
   uncompressed one: deletions are there to buy room for content, not for their own sake.
``_fill`` restores deleted spans, most key-word-rich first, while they fit; if the summary is
still under 95% of the budget, it adds the best sentence that fits, and as a last resort the
best remaining sentence cut at a clause or word boundary and marked with an ellipsis.
Every candidate is then scored by ``scoring.evaluate`` and the best is returned.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np

from summarize.compress import Deletion
from summarize.recipes import RECIPES, ExtractConfig, Recipe  # noqa: F401 (re-exported)

FILL_TARGET = 0.95
# deletion-and-refill rounds (the second compresses the sentences the first round added)
COMPRESS_ROUNDS = 2
KEYWORD_SCALE_POWER = 0.3


@dataclass(frozen=True)
class SummarySentence:
    text: str
    source: int  # index of the source sentence it comes from (provenance)
    deleted: tuple[str, ...] = ()  # spans removed from the source sentence
    cut: bool = False  # shortened at a word boundary (last resort to fill the budget)


@dataclass(frozen=True)
class Draft:
    """A candidate before scoring."""

    recipe: str
    sentences: tuple[SummarySentence, ...]

    @property
    def text(self) -> str:
        return " ".join(s.text for s in self.sentences)

    @property
    def words(self) -> int:
        return len(self.text.split())


@dataclass
class Analysis:
    """What every recipe shares for one document: sentences, vectors, similarities, key words."""

    sentences: list
    texts: list[str]
    costs: np.ndarray
    complete: np.ndarray  # ends like a sentence (not a heading, contents line or table cell)
    quoted: np.ndarray  # mostly quoted speech (dialogue)
    points_back: np.ndarray  # opens with a back reference ("It was found...", "This means...")
    vectors: np.ndarray
    tfidf: np.ndarray
    headings: dict[int, str]
    n_sections: int
    keyword_salience: dict[str, float]  # key-word lemma -> salience (top = 1)
    keyword_forms: dict = field(default_factory=dict)  # lemma -> pattern of its surface forms in this source
    _sim: dict = field(default_factory=dict)
    _parse: dict = field(default_factory=dict)
    _fluency: dict = field(default_factory=dict)  # (sentence, start, end) -> fluency cost of that deletion
    _read: dict = field(default_factory=dict)  # sentence index -> its mean token log-probability read alone
    _named: dict = field(default_factory=dict)  # sentence index -> the key words it names
    _concepts: dict = field(default_factory=dict)  # minimum count -> extract.Concepts

    def concepts(self, min_count: int):
        """The sentences' concepts (``extract.concepts``), cached per minimum count."""
        from summarize.extract import concepts

        if min_count not in self._concepts:
            self._concepts[min_count] = concepts(self.texts, min_count)
        return self._concepts[min_count]

    def sim(self, embed_weight: float) -> np.ndarray:
        from summarize.extract import similarity

        if embed_weight not in self._sim:
            self._sim[embed_weight] = similarity(self.vectors, self.tfidf, embed_weight)
        return self._sim[embed_weight]


def analyse(document, keywords: int = 40, progress: Callable[[str], None] | None = None) -> Analysis:
    from scoring.keywords import KeywordConfig, choose_keywords
    from summarize.embed import embed, tfidf
    from summarize.segment import segment

    say = progress or (lambda _m: None)
    sentences = segment(document)
    texts = [s.text for s in sentences]
    headings, section = {}, 0
    for block in document.blocks:
        if block.kind == "heading":
            section += 1
            headings[section] = block.text
    say(f"embedding {len(texts)} sentences")
    vectors = embed(texts)
    say("choosing key words")
    kwset = choose_keywords(document.text, KeywordConfig(count=keywords))
    top = max((k.salience for k in kwset.keywords), default=1.0)
    salience = {k.lemma: k.salience / top for k in kwset.keywords}
    forms = {k.lemma: _forms_pattern(k.lemma, [document.text[b:e] for b, e in k.spans]) for k in kwset.keywords}
    costs = np.array([max(1, len(t.split())) for t in texts])
    complete = np.array([_complete(t) for t in texts], dtype=bool)
    quoted = np.array([_quoted(t) for t in texts], dtype=bool)
    points_back = np.array([bool(_BACK_REFERENCE.match(t)) for t in texts], dtype=bool)
    return Analysis(sentences, texts, costs, complete, quoted, points_back, vectors, tfidf(texts), headings, section, salience,
                    keyword_forms=forms)


def _forms_pattern(lemma: str, surfaces: list[str]) -> re.Pattern:
    """Every way a key word is written in the source ("pipe", "pipes"; "43,210"), as whole words."""
    forms = sorted({f.lower() for f in surfaces if f.strip()} | {lemma.lower()}, key=len, reverse=True)
    return re.compile(r"(?<![\w-])(?:" + "|".join(re.escape(f) for f in forms) + r")(?![\w-])", re.IGNORECASE)


def _keyword_counts(a: "Analysis", text: str) -> dict[str, int]:
    """How many times each key word (any of its forms) occurs in a text."""
    return {lemma: len(p.findall(text)) for lemma, p in a.keyword_forms.items()}


_QUOTE = re.compile(r"[\"\u201c\u201d]")


def _quoted(text: str) -> bool:
    """Mostly quoted speech: opens or closes a quotation, or half its words sit inside quotes."""
    t = text.strip()
    if t[:1] in ('"', "\u201c") or t.rstrip(".")[-1:] in ('"', "\u201d"):
        return True
    inside = sum(len(m.split()) for m in re.findall(r"[\"\u201c]([^\"\u201d]*)[\"\u201d]", t))
    return inside * 2 >= max(1, len(t.split()))


# A sentence opening with a word that points back ("It was found once...", "This is the main
# cause...") reads as a dangling reference without the sentence before it. Selection leaves such
# openers out (``build``'s eligible mask, unless too few sentences remain); the key-word refill
# also admits one whose predecessor is in the summary. Common practice in extractive summarizing
# (a rule of thumb, not tuned here).
# Personal pronouns (he, she, they) are left out of the rule: in narratives they usually name the
# story's main characters, and excluding them would exclude most of the story.
_BACK_REFERENCE = re.compile(r"^\W*(?:it|its|this|these|those|that|such|both|the latter|the former)\b(?!\s+(?:is|was)\s+(?:not\s+)?(?:clear|likely|possible|important|necessary|known|expected|estimated|thought|believed)\b)",
                             re.IGNORECASE)


def _points_back(a: "Analysis", j: int, chosen) -> bool:
    """Sentence j opens with a back reference and the sentence before it is not chosen."""
    return bool(a.points_back[j]) and (j - 1) not in chosen


_ENDINGS = (".", "!", "?", '."', '?"', '!"', ".\u201d", ".)", ".'")


# A line led by a short capitalised label and a colon ("Geosmin: a compound made by algae.") is a
# glossary entry or a form field, not a sentence a summary can stand on.
_LABEL = re.compile(r"^\W*[A-Z0-9][^\s:]*(?:\s+[A-Z0-9(&][^\s:]*){0,3}:\s")


def _complete(text: str) -> bool:
    """A full sentence: ends with terminal punctuation, has a lower-case word, and is not a
    label-and-colon line."""
    t = text.rstrip()
    return t.endswith(_ENDINGS) and any(w.islower() for w in t.split()[1:]) and not _LABEL.match(t)


def build(analysis: Analysis, recipe: Recipe, budget: int, progress=None) -> Draft:
    """One candidate, fitted to the budget."""
    from summarize.extract import mmr, pagerank, priors, select

    a = analysis
    cfg = recipe.extract
    sim = a.sim(cfg.embed_weight)
    sized = (a.costs >= cfg.min_words) & (a.costs <= max(cfg.max_words, budget // 2))
    eligible = sized & a.complete & ~a.points_back
    if a.costs[eligible].sum() < budget:  # too few full, self-contained sentences (e.g. unpunctuated text)
        eligible = sized if a.costs[sized].sum() >= budget else a.costs >= 1
    prior = priors(a.sentences, a.n_sections, a.headings, cfg)
    salience = pagerank(sim, cfg.damping) * prior * np.where(a.quoted, cfg.quote_weight, 1.0)
    k = max(1, int(round(cfg.cluster_share * len(a.texts))))
    labels = _clusters(a, k)
    from summarize.compress import apply

    def choose(costs, limit, allowed):
        if recipe.method == "mmr":
            masked = np.where(allowed, costs, 10**9)
            return mmr(sim, salience, masked, limit)
        if recipe.sections and a.n_sections >= 3:
            return _by_section(a, sim, salience, costs, limit, labels, cfg, allowed)
        return select(sim, salience, costs, limit, labels, cfg, eligible=allowed, concepts=a.concepts(cfg.concept_min_count))

    chosen = choose(a.costs, budget, eligible)
    off = _assemble(a, chosen, {}, {}, budget, salience, eligible, sim, labels, cfg)
    if recipe.compress <= 0 or not off.sentences:
        return replace(off, recipe=recipe.name)
    texts: dict[int, str] = {}
    dropped: dict[int, list[Deletion]] = {}
    for _ in range(COMPRESS_ROUNDS):
        dropped = _compress(a, chosen, recipe.compress)
        texts = {i: apply(a.texts[i], dropped[i]) if dropped[i] else a.texts[i] for i in chosen}
        costs = _costs(a, texts)
        chosen = _add_keywords(a, chosen, texts, costs, budget, eligible)
    on = _assemble(a, chosen, texts, dropped, budget, salience, eligible, sim, labels, cfg)
    # compression earns its place only by letting the summary name key words it would miss
    better = _keyword_mass(a, on.text) > _keyword_mass(a, off.text) + 1e-9
    return replace(on if better else off, recipe=recipe.name)


def _costs(a: Analysis, texts: dict[int, str]) -> np.ndarray:
    costs = a.costs.copy().astype(float)
    for i, t in texts.items():
        costs[i] = max(1, len(t.split()))
    return costs


def _assemble(a, chosen, texts, dropped, budget, salience, eligible, sim, labels, cfg) -> Draft:
    """Spend the words left after ``chosen``: sentences that name missing key words first, then
    the selection objective's next picks, then ``_fill``."""
    from summarize.extract import select

    costs = _costs(a, texts)
    chosen = _add_keywords(a, list(chosen), texts, costs, budget, eligible)
    chosen = select(sim, salience, costs, budget, labels, cfg, start=chosen, eligible=eligible,
                    concepts=a.concepts(cfg.concept_min_count))
    return _fill(a, chosen, texts, dropped, budget, salience, eligible)


def _keyword_mass(a: Analysis, text: str) -> float:
    """Salience of the distinct key words a text names (in any form the source writes them)."""
    return sum(a.keyword_salience.get(lemma, 0.0) for lemma, n in _keyword_counts(a, text).items() if n)


def _add_keywords(a: Analysis, chosen: list[int], texts: dict[int, str], costs: np.ndarray, budget: int,
                  eligible: np.ndarray) -> list[int]:
    """Add sentences that fit the words left and name key words the summary lacks, the most new
    key-word salience per word (cost-scaled as in ``select``) first."""
    chosen = list(chosen)
    present = {lemma for lemma, n in _keyword_counts(a, "\n".join(texts.get(i, a.texts[i]) for i in chosen)).items() if n}
    used = float(sum(costs[i] for i in chosen))
    while True:
        room = budget - used
        fits = np.flatnonzero(eligible & (costs <= room))
        best, best_value = None, 0.0
        for j in fits:
            if j in chosen or _points_back(a, int(j), chosen):
                continue
            gain = sum(a.keyword_salience[lemma] for lemma in _named(a, int(j)) if lemma not in present)
            value = gain / costs[j] ** KEYWORD_SCALE_POWER
            if value > best_value:
                best, best_value = int(j), value
        if best is None:
            return sorted(chosen)
        chosen.append(best)
        used += costs[best]
        present |= _named(a, best)


def _named(a: Analysis, i: int) -> frozenset:
    """The key words source sentence i names (cached per analysis)."""
    if i not in a._named:
        a._named[i] = frozenset(lemma for lemma, n in _keyword_counts(a, a.texts[i]).items() if n)
    return a._named[i]


def _clusters(a: Analysis, k: int) -> np.ndarray:
    from summarize.extract import clusters

    key = ("clusters", k)
    if key not in a._sim:
        a._sim[key] = clusters(a.vectors, k)
    return a._sim[key]


def _by_section(a, sim, salience, costs, budget, labels, cfg, allowed) -> list[int]:
    """Share the budget across sections in proportion to their salience, then select in each."""
    from summarize.extract import select

    sections = sorted({s.section for s in a.sentences})
    mass = {sec: float(sum(salience[i] for i, s in enumerate(a.sentences) if s.section == sec and allowed[i]))
            for sec in sections}
    total = sum(mass.values()) or 1.0
    chosen: list[int] = []
    used = 0
    for sec in sorted(sections, key=lambda s: -mass[s]):
        share = int(budget * mass[sec] / total)
        mask = allowed & np.array([s.section == sec for s in a.sentences])
        if share <= 0 or not mask.any():
            continue
        picked = select(sim, salience, costs, min(share, budget - used), labels, cfg, eligible=mask,
                        concepts=a.concepts(cfg.concept_min_count))
        chosen += picked
        used += int(sum(costs[j] for j in picked))
    # leftover words: continue the global greedy from what the sections chose
    rest = select(sim, salience, costs, budget, labels, cfg, start=chosen, eligible=allowed,
                  concepts=a.concepts(cfg.concept_min_count))
    return sorted(set(rest))


# Phrases that set where, when or under what a statement holds: deleting one that names a key
# word can turn a true sentence into a false one, so those are never deleted.
SCOPE_KINDS = ("leading phrase", "prepositional phrase")


def _compress(a: Analysis, chosen: list[int], threshold: float) -> dict[int, list[Deletion]]:
    """Deletions to make in the chosen sentences: the ones that cost the causal model least
    fluency per word saved (at most ``threshold`` nats per word), and never one that would take
    the last mention of a key word out of the summary."""
    from summarize.compress import compatible

    found = _deletions(a, chosen)
    counts = _keyword_counts(a, "\n".join(a.texts[i] for i in chosen))
    usable = []
    for i, dels in found.items():
        for d in dels:
            held = _keyword_counts(a, d.text)
            if d.kind in SCOPE_KINDS and any(held.values()):
                continue  # "At service reservoirs, coliforms were found": the phrase is the fact's scope
            if _keyword_loss(a, held, counts):
                continue
            usable.append((i, d, held))
    _price_fluency(a, [(i, d) for i, d, _ in usable])  # only the spans this call may delete go to the model
    priced = sorted(((_fluency_cost(a, i, d) / max(1, d.words), i, d, held) for i, d, held in usable), key=lambda x: x[0])
    out: dict[int, list[Deletion]] = {i: [] for i in chosen}
    for per_word, i, d, held in priced:
        if per_word > threshold:
            break
        trial = out[i] + [d]
        # a key word another deletion already left only here stays
        if compatible(trial) and sum(x.words for x in trial) < 0.7 * a.costs[i] and not _keyword_loss(a, held, counts):
            out[i] = trial
            for lemma, n in held.items():
                counts[lemma] = counts.get(lemma, 0) - n
    return out


def _deletions(a: Analysis, pool: list[int]) -> dict[int, list[Deletion]]:
    from summarize.compress import find

    todo = [i for i in pool if i not in a._parse]
    if todo:
        for i in todo:
            a._parse[i] = []
        for d in find([a.texts[i] for i in todo]):
            i = todo[d.sentence]
            a._parse[i].append(replace(d, sentence=i))
    return {i: a._parse[i] for i in pool}


def _keyword_loss(a: Analysis, held: dict[str, int], counts: dict[str, int]) -> float:
    """Salience of the key words a span holds (``held``: counts in any of the forms the source
    writes them in) that the rest of the summary (``counts``) does not repeat."""
    loss = 0.0
    for lemma, n in held.items():
        if n and counts.get(lemma, 0) - n <= 0:
            loss += a.keyword_salience.get(lemma, 0.0)
    return loss


def _fluency_cost(a: Analysis, i: int, d: Deletion) -> float:
    """Drop in the causal model's mean token log-probability when the span goes (>= 0)."""
    key = (i, d.start, d.end)
    if key not in a._fluency:
        _price_fluency(a, [(i, d)])
    return a._fluency.get(key, 1.0)


def _price_fluency(a: Analysis, wanted: list[tuple[int, Deletion]]) -> None:
    """Batch the deletions in ``wanted`` not priced yet (and their sentences) through the causal
    model. A span is priced the same whichever batch it is in, so pricing only what a recipe
    may use changes no choice; spans that a key word keeps are never read at all."""
    from summarize.compress import apply

    todo = list({(i, d.start, d.end): (i, d) for i, d in wanted if (i, d.start, d.end) not in a._fluency}.values())
    if not todo:
        return
    # a sentence is read alone once, however many calls price its deletions
    originals = sorted({i for i, _ in todo if i not in a._read})
    texts = [[a.texts[i]] for i in originals] + [[apply(a.texts[i], [d])] for i, d in todo]
    scored = _token_model().logprobs(texts)
    a._read.update({i: _mean(scored[n][0]) for n, i in enumerate(originals)})
    for n, (i, d) in enumerate(todo):
        after = _mean(scored[len(originals) + n][0])
        a._fluency[(i, d.start, d.end)] = max(0.0, a._read[i] - after)


@functools.cache
def _token_model():
    from scoring.lm import causal_lm

    return causal_lm("auto")


def _mean(values: list[float]) -> float:
    return sum(values) / len(values) if values else 0.0


def _fill(a: Analysis, chosen: list[int], texts: dict[int, str], dropped: dict[int, list[Deletion]],
          budget: int, salience: np.ndarray, eligible: np.ndarray) -> Draft:
    """Bring the draft as close to the budget as it can go without passing it."""
    from summarize.compress import apply

    chosen = sorted(chosen)
    current = {i: list(dropped.get(i, [])) for i in chosen}
    text_of = {i: texts.get(i, a.texts[i]) for i in chosen}
    used = sum(len(text_of[i].split()) for i in chosen)
    # 1. restore deleted spans, most key-word-rich first, while they fit
    restorable = sorted(
        ((d, i) for i in chosen for d in current[i]),
        key=lambda x: -sum(a.keyword_salience.get(lemma, 0.0) * n
                           for lemma, n in _keyword_counts(a, x[0].text).items()) / max(1, x[0].words),
    )
    for d, i in restorable:
        keep = [x for x in current[i] if x is not d]
        new = apply(a.texts[i], keep) if keep else a.texts[i]
        delta = len(new.split()) - len(text_of[i].split())
        if used + delta <= budget:
            current[i], text_of[i] = keep, new
            used += delta
    # 2. still short: add the best sentence that fits (compressed form if we have it)
    order = [int(j) for j in np.argsort(-salience)]
    order = [j for j in order if a.complete[j]] + [j for j in order if not a.complete[j]]
    if used < FILL_TARGET * budget:
        for j in order:
            if j in text_of or not eligible[j]:
                continue
            form = texts.get(j, a.texts[j])
            if used + len(form.split()) <= budget:
                text_of[j] = form
                current[j] = list(dropped.get(j, []))
                used += len(form.split())
                if used >= FILL_TARGET * budget:
                    break
    cut = None
    # 3. last resort: the best remaining full sentence, cut after a clause (or a word) to fit
    if used < FILL_TARGET * budget:
        room = budget - used
        for j in order:
            if j in text_of:
                continue
            form = texts.get(j, a.texts[j]).split()
            if len(form) > room:
                text_of[j] = _cut(form, room, math.ceil(FILL_TARGET * budget) - used)
                current[j] = list(dropped.get(j, []))
                cut = j
                used += len(text_of[j].split())
                break
    sentences = tuple(
        SummarySentence(text_of[i], a.sentences[i].index, tuple(d.text.strip(" ,") for d in current.get(i, [])), i == cut)
        for i in sorted(text_of)
    )
    return Draft("", sentences)


def _cut(words: list[str], room: int, minimum: int = 0) -> str:
    """The first ``room`` words, ending after the last clause mark if that keeps 60% of them
    and at least ``minimum`` words (what the budget's fill target still needs)."""
    head = words[:room]
    for k in range(len(head) - 1, -1, -1):
        if k + 1 < max(0.6 * room, minimum):
            break
        if head[k].endswith((",", ";", ":")):
            head = head[: k + 1]
            break
    return " ".join(head).rstrip(",;:") + "…"


def by_sentences(analysis: Analysis, n: int) -> Draft:
    """The n most salient non-redundant sentences (the --sentences mode), no compression."""
    from summarize.extract import pagerank, priors, select

    a = analysis
    cfg = ExtractConfig()
    sim = a.sim(cfg.embed_weight)
    salience = pagerank(sim, cfg.damping) * priors(a.sentences, a.n_sections, a.headings, cfg)
    labels = _clusters(a, max(1, int(round(cfg.cluster_share * len(a.texts)))))
    chosen = select(sim, salience, np.ones(len(a.texts)), n, labels, cfg, concepts=a.concepts(cfg.concept_min_count))
    return Draft("by-sentences", tuple(SummarySentence(a.texts[i], i) for i in chosen))


def distinct(drafts: list[Draft]) -> list[Draft]:
    """Drop drafts whose text repeats an earlier one (recipes often agree)."""
    seen, out = set(), []
    for d in drafts:
        if d.text not in seen:
            seen.add(d.text)
            out.append(d)
    return out
