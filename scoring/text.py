"""Text rules every part of boildown shares: the one word count and the one sentence split.

Word counting: a word is a maximal run of non-whitespace characters, exactly what `wc -w`
counts (and Python's ``str.split()``). Budgets, reports, tests and benchmarks all use
``count_words``; a printed summary of N words here is N words to `wc -w`.

Sentence splitting uses syntok's rule-based segmenter (no data download), which keeps
abbreviations such as "Dr.", "e.g." and "No. 3" inside their sentences. It lives here, at the
bottom of the package graph, so that the scorers and the summarizer split alike and
``scoring`` never imports ``summarize``.

Stemming is NLTK's Porter stemmer (Porter, 1980), one cached instance for the key words'
matching and the summarizer's tf-idf terms alike.
"""

from __future__ import annotations

import functools
import re


def count_words(text: str) -> int:
    """Whitespace-separated tokens: the same number `wc -w` prints."""
    return len(text.split())


_SPACE = re.compile(r"\s+")


def split_sentences(text: str) -> list[str]:
    """Split running text into sentences with syntok; whitespace inside each is normalised."""
    return [s for s, _ in split_offsets(text)]


# A "sentence" longer than this is split again at terminal punctuation followed by space, even
# before a lower-case word: syntok (rightly) never splits there, but lower-cased or tokenised
# text ("... countries ( 1).vitamin d is ...") otherwise comes back as one huge sentence.
LONG_SENTENCE = 80
_RESPLIT = re.compile(r"(?<=[.!?])\s+(?=[a-z(\[])|(?<=\S[.!?])(?=[a-z][a-z])")


def split_offsets(text: str) -> list[tuple[str, int]]:
    out = []
    for sentence, start in _syntok_offsets(text):
        if len(sentence.split()) <= LONG_SENTENCE:
            out.append((sentence, start))
            continue
        raw = text[start:]
        cursor = 0
        pieces = []
        for m in _RESPLIT.finditer(sentence):
            pieces.append(sentence[cursor : m.start()].strip())
            cursor = m.end()
        pieces.append(sentence[cursor:].strip())
        offset = start
        for piece in pieces:
            if piece:
                found = raw.find(piece.split()[0])
                out.append((piece, start + found if found >= 0 else offset))
                offset = out[-1][1]
    return out


def _syntok_offsets(text: str) -> list[tuple[str, int]]:
    from syntok import segmenter

    out = []
    for paragraph in segmenter.analyze(text):
        for sentence in paragraph:
            if not sentence:
                continue
            start = sentence[0].offset
            end = sentence[-1].offset + len(sentence[-1].value)
            raw = text[start:end]
            clean = _SPACE.sub(" ", raw).strip()
            if clean:
                out.append((clean, start))
    return out


@functools.lru_cache(maxsize=1)
def _stemmer():
    from nltk.stem.porter import PorterStemmer

    return PorterStemmer()


@functools.lru_cache(maxsize=200_000)
def stem(word: str) -> str:
    """Porter stem of a lowercased word (cached: documents repeat their words)."""
    return _stemmer().stem(word)
