"""Key-word choice: which words of a source a coverage check blanks out.

Candidates are content words by spaCy's universal POS tags (nouns, proper nouns, verbs,
adjectives, numbers). Each lemma is ranked by a tf-idf-style salience: how often it occurs in
this document (1 + log tf) times how rare it is in general English, where rarity is
``8 - zipf`` from the `wordfreq` word-frequency tables (Zipf scale: log10 of occurrences per
billion words). Ties break on first position, so the choice is deterministic.
"""

from __future__ import annotations

import functools
import hashlib
import math
from dataclasses import dataclass

CONTENT_POS = ("NOUN", "PROPN", "VERB", "ADJ", "NUM")

# Words so frequent that blanking them tests grammar, not content. Zipf 6.0 is about one
# occurrence per thousand words (e.g. "said", "new", "first"); a rule of thumb, not tuned.
MAX_ZIPF = 6.0
# Rarity of a word absent from wordfreq's tables (names, codes): as rare as Zipf 1.
UNSEEN_ZIPF = 1.0


@dataclass(frozen=True)
class KeywordConfig:
    """How many key words to choose, and of which kinds."""

    count: int = 40
    pos: tuple[str, ...] = CONTENT_POS
    min_chars: int = 2

    def __post_init__(self):
        if self.count < 1:
            raise ValueError(f"key-word count must be at least 1, got {self.count}")
        unknown = set(self.pos) - set(CONTENT_POS)
        if unknown:
            raise ValueError(f"unknown POS tags {sorted(unknown)}; choose from {CONTENT_POS}")


@dataclass(frozen=True)
class Keyword:
    """One chosen key word (a lemma) with every place it occurs in the source."""

    lemma: str
    salience: float
    spans: tuple[tuple[int, int], ...]  # character spans of its occurrences, in order

    @property
    def count(self) -> int:
        return len(self.spans)


@dataclass(frozen=True)
class KeywordSet:
    keywords: tuple[Keyword, ...]
    text_hash: str

    def occurrences(self) -> list[tuple[int, int, int]]:
        """(start, end, key-word index) for every occurrence of every key word, in text order."""
        out = [(s, e, i) for i, kw in enumerate(self.keywords) for s, e in kw.spans]
        return sorted(out)


def text_hash(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()[:16]


@functools.lru_cache(maxsize=4096)
def rarity(word: str) -> float:
    """8 - Zipf frequency of the word in general English (higher = rarer)."""
    from wordfreq import zipf_frequency

    zipf = zipf_frequency(word, "en") or UNSEEN_ZIPF
    return max(0.0, 8.0 - zipf)


@functools.cache
def _tagger():
    from scoring.models import load_spacy

    return load_spacy()


def _tag(text: str):
    nlp = _tagger()
    with nlp.select_pipes(enable=["tok2vec", "tagger", "attribute_ruler", "lemmatizer"]):
        if len(text) > nlp.max_length:
            nlp.max_length = len(text) + 1
        return nlp(text)


def choose_keywords(text: str, config: KeywordConfig = KeywordConfig()) -> KeywordSet:
    """Rank the source's content lemmas by salience and keep the top ``config.count``."""
    return _choose_cached(text, config)


@functools.lru_cache(maxsize=64)
def _choose_cached(text: str, config: KeywordConfig) -> KeywordSet:
    from wordfreq import zipf_frequency

    spans: dict[str, list[tuple[int, int]]] = {}
    for token in _tag(text):
        if token.pos_ not in config.pos:
            continue
        surface = token.text
        if len(surface) < config.min_chars and token.pos_ != "NUM":
            continue
        if not any(ch.isalnum() for ch in surface):
            continue
        lemma = (token.lemma_ or surface).lower()
        if token.pos_ != "NUM" and zipf_frequency(lemma, "en") > MAX_ZIPF:
            continue
        spans.setdefault(lemma, []).append((token.idx, token.idx + len(surface)))
    scored = []
    for lemma, where in spans.items():
        salience = (1.0 + math.log(len(where))) * rarity(lemma)
        scored.append((-salience, where[0][0], lemma, where))
    scored.sort()
    chosen = tuple(
        Keyword(lemma, round(-neg, 4), tuple(where)) for neg, _, lemma, where in scored[: config.count]
    )
    return KeywordSet(chosen, text_hash(text))
