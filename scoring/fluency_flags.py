"""What fluency reads and what it flags: the tidy reading of a sentence, and the sentence flags.

The tidy reading: the causal model reads each sentence with typesetting undone and in lower
case (``tidy``): space before punctuation, ``-lrb-``-style brackets, ``@xmath0`` placeholders and
spaced hyphens are what tokenised corpora and their systems print, and lower-cased output is the
norm in some of them. A reader judging fluency reads past these; the model's perplexity does not
(it rises on them), so the score would otherwise rank typesetting rather than language.

Flags (each a word a reader can check):

* ``repeats``: half or more of the sentence's word trigrams appeared earlier in the summary;
* ``stutter``: a word written twice in a row ("the the", "hidden hidden");
* ``dangling``: the sentence ends on a function word ("... who has lost the."), what a cut
  or a broken generation leaves;
* ``unbalanced``: a bracket opened and not closed (or closed and not opened), or an odd number
  of straight double quotes, what a deletion across a bracket or quotation leaves;
* ``unfinished``: the last sentence stops without closing punctuation;
* ``no verb``: no finite verb by the spaCy parse (what a deletion that removed the verb leaves);
* ``reads poorly``: the sentence's own perplexity is far above the source's.

Which of them lower the value is ``FluencyConfig.penalised``; the choice and its ablation are in
``bench/fluency_validity.py`` (fitted on the SummEval dev half).
"""

from __future__ import annotations

import functools
import re

FLAGS = ("repeats", "stutter", "dangling", "unbalanced", "unfinished", "no verb", "reads poorly")

_WORD = re.compile(r"[a-z0-9']+")
# Words a complete English sentence does not end on (articles, prepositions, conjunctions,
# auxiliaries, possessives): common practice in compression-fragment checks, list written here.
FUNCTION_WORDS = frozenset(
    "the a an of to in on at by for with from into over after before and or but nor that which who whose "
    "as than is are was were be been being has have had its their his her our your my this these those "
    "if because while although".split()
)
_CLOSERS = (".", "!", "?", '"', "'", ")", ":", ";", "\u2026", "\u201d", "\u2019", "]")


def tidy(sentence: str) -> str:
    """The sentence as the model reads it: typesetting of tokenised corpora undone, lower case."""
    t = re.sub(r"@xmath\d+", "x", sentence)
    t = t.replace("-lrb-", "(").replace("-rrb-", ")").replace("``", '"').replace("''", '"')
    t = re.sub(r"\s+([,.;:!?%)\]])", r"\1", t)
    t = re.sub(r"([(\[])\s+", r"\1", t)
    t = re.sub(r"(\w) - (\w)", r"\1-\2", t)
    t = re.sub(r"\s+('s|n't|'re|'ve|'ll|'d|'m)\b", r"\1", t)
    return " ".join(t.split()).lower()


def words(sentence: str) -> list[str]:
    return _WORD.findall(sentence.lower())


def trigrams(sentence: str) -> set[tuple[str, ...]]:
    w = words(sentence)
    return {tuple(w[i : i + 3]) for i in range(len(w) - 2)}


def stutters(sentence: str) -> bool:
    w = words(sentence)
    return any(a == b and not a.isdigit() for a, b in zip(w, w[1:]))


def dangling(sentence: str) -> bool:
    w = words(sentence)
    return len(w) >= 2 and w[-1] in FUNCTION_WORDS


def unbalanced(sentence: str) -> bool:
    t = sentence.replace("-lrb-", "(").replace("-rrb-", ")")
    return any(t.count(a) != t.count(b) for a, b in ("()", "[]")) or t.count('"') % 2 == 1


def unfinished(sentence: str) -> bool:
    return not sentence.rstrip().endswith(_CLOSERS)


@functools.lru_cache(maxsize=4096)
def has_verb(sentence: str) -> bool:
    """A finite verb, or an imperative (a base-form verb at the root). A participle alone
    ("The filters, installed last spring.") is what a deletion that removed the verb leaves."""
    from scoring.models import load_spacy

    doc = load_spacy()(sentence)
    return any(t.tag_ in {"VBD", "VBP", "VBZ", "MD"} or (t.dep_ == "ROOT" and t.tag_ == "VB") for t in doc)


def sentence_flags(sentences: list[str], *, parse: bool = True) -> list[list[str]]:
    """The text flags of each sentence of one summary (``reads poorly`` is the scorer's)."""
    seen: set[tuple[str, ...]] = set()
    out = []
    for n, text in enumerate(sentences):
        flags = []
        grams = trigrams(text)
        if grams and len(grams & seen) * 2 >= len(grams):
            flags.append("repeats")
        seen |= grams
        if stutters(text):
            flags.append("stutter")
        if dangling(text):
            flags.append("dangling")
        if unbalanced(text):
            flags.append("unbalanced")
        if n == len(sentences) - 1 and unfinished(text):
            flags.append("unfinished")
        if parse and len(text.split()) >= 3 and not has_verb(text):
            flags.append("no verb")
        out.append(flags)
    return out
