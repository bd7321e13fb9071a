"""Fluency: the small causal model's perplexity of a summary, mapped to a bounded score.

Perplexity is PP = exp(mean negative log-likelihood per token) (Jurafsky & Martin, Speech
and Language Processing, 3rd ed., ch. 3). A summary is read in one pass after a beginning-of-
text token, so each sentence is scored in the context of the sentences before it; per-sentence
perplexities come from the same pass.

The rule that bounds it: the reference point is the source's own perplexity under the same
model (a sample of its sentences; without a source, ``REFERENCE_LOG_PP``). With
``gap = log PP(summary) - log PP(reference)``, ``fluency = exp(-max(0, gap) / scale)``: a
summary that reads as easily as its source scores 1, one whose perplexity is e^scale times
the source's scores 1/e. Sentences are flagged when they read poorly (their own gap above
``flag_gap``), have no verb (a deletion that removed it), or repeat an earlier sentence; the
last sentence is flagged "unfinished" when the summary stops mid-sentence (one cut to fit the
budget ends with an ellipsis and is not). The flagged share of words lowers the value by
``flag_penalty`` times that share.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass, field
from typing import Protocol

from scoring.base import BaseScorer, Column, Result, Signature, result_dict
from scoring.lm import ModelSettings

# log PP of edited English prose under SmolLM2-135M (Q4_1 dequantised, bfloat16), each sentence
# read on its own: median 4.65 over 1,253 sentences of the demo documents and 5.23 over 199
# sentences of the LongSciVerify abstracts (lower-cased, tokenised), measured 2026-12-02.
# Used only when no source is given.
REFERENCE_LOG_PP = 4.7


class TokenModel(Protocol):
    """What fluency needs from a language model: per-token log-probabilities of texts."""

    def logprobs(self, pieces: list[list[str]]) -> list[list[list[float]]]:
        """For each text given as pieces (sentences), the log-probability of every token of
        every piece, read in order after a beginning-of-text token."""


@dataclass(frozen=True)
class FluencyConfig(ModelSettings):
    """Settings of the fluency scorer, after the model's.

    ``scale``: nats of perplexity gap over the source that take fluency from 1 to 1/e;
    ``flag_gap``: a sentence whose own gap exceeds this is flagged "reads poorly";
    ``flag_penalty``: how much the flagged share of words lowers the value (0 to 1);
    ``reference_sentences``: how many source sentences (an even sample) give the reference
    perplexity. Rules of thumb, not tuned (see the module docstring)."""

    scale: float = 2.0
    flag_gap: float = 1.5
    flag_penalty: float = 0.5
    reference_sentences: int = 24

    def __post_init__(self):
        super().__post_init__()
        if self.scale <= 0 or self.flag_gap <= 0:
            raise ValueError("scale and flag_gap must be positive")
        if not 0 <= self.flag_penalty <= 1:
            raise ValueError(f"flag_penalty must lie in [0, 1], got {self.flag_penalty}")
        if self.reference_sentences < 1:
            raise ValueError("reference_sentences must be at least 1")


@dataclass(frozen=True)
class SentenceFluency:
    text: str
    perplexity: float
    flags: tuple[str, ...]


@dataclass(frozen=True)
class FluencyScore(Result):
    """Fluency of one summary: the bounded value, the perplexities behind it, each sentence."""

    value: float
    perplexity: float
    reference_perplexity: float
    sentences: tuple[SentenceFluency, ...]
    signature: Signature = field(compare=False)

    @property
    def flagged(self) -> tuple[SentenceFluency, ...]:
        return tuple(s for s in self.sentences if s.flags)

    def to_dict(self) -> dict:
        return result_dict(self, sentences=[{"text": s.text, "perplexity": s.perplexity, "flags": list(s.flags)}
                                            for s in self.sentences])


def perplexity(logprobs: list[float]) -> float:
    """PP = exp(-mean log p). Empty input has no perplexity."""
    if not logprobs:
        raise ValueError("perplexity of an empty token sequence is undefined")
    return math.exp(-sum(logprobs) / len(logprobs))


_FINITE = {"VBD", "VBP", "VBZ", "MD"}
_WORD = re.compile(r"[a-z0-9']+")


@functools.lru_cache(maxsize=4096)
def _has_verb(sentence: str) -> bool:
    """A finite verb, or an imperative (a base-form verb at the root). A participle alone
    ("The filters, installed last spring.") is what a deletion that removed the verb leaves."""
    from scoring.models import load_spacy

    doc = load_spacy()(sentence)
    return any(t.tag_ in _FINITE or (t.dep_ == "ROOT" and t.tag_ == "VB") for t in doc)


def _trigrams(sentence: str) -> set[tuple[str, ...]]:
    words = _WORD.findall(sentence.lower())
    return {tuple(words[i : i + 3]) for i in range(len(words) - 2)}


class FluencyScorer(BaseScorer, name="fluency", label="Fluency", needs="source", config=FluencyConfig):
    """How easily the summary reads, from the small language model's perplexity relative to the
    source's: 1 = as easily as the source, lower = harder going."""

    columns = (
        Column("fluency", lambda r: r.value, "num2", "fluency", "Fluency"),
        Column("perplexity", lambda r: r.perplexity),
    )

    def __init__(self, config: FluencyConfig | None = None, model: TokenModel | None = None):
        super().__init__(config)
        if model is None:
            from scoring.lm import causal_lm

            model = causal_lm(self.config.dtype, self.config.batch_tokens)
        self.model = model
        self._references: dict[str, float] = {}

    def signature(self) -> Signature:
        c = self.config
        describe = getattr(self.model, "describe", None)
        model = describe() if describe else {"model": type(self.model).__name__, "dtype": c.dtype}
        return Signature.build(
            "fluency",
            {**model, "scale": c.scale,
             "flag_gap": c.flag_gap, "reference": f"source-sample-{c.reference_sentences}"},
            ("torch", "transformers", "spacy"),
        )

    def score(self, summary: str, *, source: str | None = None, reference=None) -> FluencyScore:
        return self.score_many([summary], source=source)[0]

    def score_many(self, summaries: list[str], *, source: str | None = None, references=None) -> list[FluencyScore]:
        from scoring.text import split_sentences

        ref = self.reference_log_pp(source)
        split = [split_sentences(s) if s and s.strip() else [] for s in summaries]
        scored = self.model.logprobs([s for s in split if s]) if any(split) else []
        results, k = [], 0
        sig = self.signature()
        for sentences in split:
            if not sentences:
                results.append(FluencyScore(0.0, float("inf"), round(math.exp(ref), 3), (), sig))
                continue
            results.append(self._one(sentences, scored[k], ref, sig))
            k += 1
        return results

    def reference_log_pp(self, source: str | None) -> float:
        """log PP of the source (an even sample of its sentences), cached per source."""
        if not source or not source.strip():
            return REFERENCE_LOG_PP
        key = str(hash(source))
        if key not in self._references:
            from scoring.text import split_sentences

            sentences = [s for s in split_sentences(source) if len(s.split()) >= 4] or split_sentences(source)
            n = self.config.reference_sentences
            step = max(1, len(sentences) // n)
            sample = sentences[::step][:n]
            # each sentence on its own, so the sample's order does not matter
            scored = self.model.logprobs([[s] for s in sample])
            flat = [x for text in scored for piece in text for x in piece]
            self._references[key] = -sum(flat) / len(flat)
        return self._references[key]

    def _one(self, sentences: list[str], scored: list[list[float]], ref: float, sig: Signature) -> FluencyScore:
        c = self.config
        flat = [x for piece in scored for x in piece]
        log_pp = -sum(flat) / len(flat)
        seen: set[tuple[str, ...]] = set()
        out, flagged_words = [], 0
        for n, (text, lps) in enumerate(zip(sentences, scored)):
            flags = []
            own = -sum(lps) / len(lps) if lps else ref
            if own - ref > c.flag_gap:
                flags.append("reads poorly")
            if len(text.split()) >= 3 and not _has_verb(text):
                flags.append("no verb")
            last = n == len(sentences) - 1
            if last and not text.rstrip().endswith((".", "!", "?", '"', "'", ")", ":", ";", "\u2026")):
                flags.append("unfinished")  # the summary stops mid-sentence
            grams = _trigrams(text)
            if grams and len(grams & seen) * 2 >= len(grams):
                flags.append("repeats")
            seen |= grams
            if flags:
                flagged_words += len(text.split())
            out.append(SentenceFluency(text, round(math.exp(own), 3), tuple(flags)))
        base = math.exp(-max(0.0, log_pp - ref) / c.scale)
        share = flagged_words / max(1, sum(len(s.split()) for s in sentences))
        value = base * (1 - c.flag_penalty * share)
        return FluencyScore(round(value, 6), round(math.exp(log_pp), 3), round(math.exp(ref), 3), tuple(out), sig)
