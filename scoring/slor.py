"""SLOR and WPSLOR: a sentence's log-probability with its words' plain frequency taken out.

Kann, Rothe & Filippova (2018), "Sentence-Level Fluency Evaluation: References Help, But Can Be
Spared!" (CoNLL), eq. 1: SLOR(S) = (ln p_M(S) - ln p_u(S)) / |S|, with p_M the language model's
probability of the sentence, p_u the product of its tokens' unigram probabilities and |S| its
length. WPSLOR is the same over word pieces (the model's own tokens) with word-piece unigrams.

Here: SLOR uses words (``wordfreq`` English frequencies; a word it does not know gets
``FLOOR``), WPSLOR the model's tokens with a unigram table counted from the source (add-one).
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Iterable, Sequence

FLOOR = 1e-8  # frequency given to a word wordfreq does not list (its own lower bound is about 1e-8)


def slor(lm_logprob: float, unigram_logprob: float, length: int) -> float:
    """Kann et al. (2018) eq. 1: (ln p_M(S) - ln p_u(S)) / |S|."""
    if length < 1:
        raise ValueError("SLOR of an empty sentence is undefined")
    return (lm_logprob - unigram_logprob) / length


def word_unigram_logprob(sentence: str) -> tuple[float, int]:
    """Sum of ln p_u over the sentence's words (wordfreq, English) and how many words."""
    from wordfreq import tokenize, word_frequency

    ws = tokenize(sentence, "en")
    return sum(math.log(max(word_frequency(w, "en"), FLOOR)) for w in ws), len(ws)


class TokenUnigrams:
    """Unigram log-probabilities of model tokens counted from texts (add-one over ``vocabulary``)."""

    def __init__(self, token_lists: Iterable[Sequence[int]], vocabulary: int):
        self.counts = Counter()
        for tokens in token_lists:
            self.counts.update(tokens)
        self.total = sum(self.counts.values())
        self.vocabulary = vocabulary

    def logprob(self, tokens: Sequence[int]) -> float:
        return sum(math.log((self.counts[t] + 1) / (self.total + self.vocabulary)) for t in tokens)
