"""Fluency: the small causal model's perplexity of a summary, relative to its source's, lowered
by the sentence flags that readers hold against a summary.

Perplexity is PP = exp(mean negative log-likelihood per token) (Jurafsky & Martin, Speech
and Language Processing, 3rd ed., ch. 3). A summary is read in one pass after a beginning-of-
text token, so each sentence is scored in the context of the sentences before it; per-sentence
perplexities come from the same pass. The model reads the tidy form of each sentence
(``scoring.fluency_flags.tidy``: typesetting of tokenised corpora undone, lower case), the
source's sample likewise, so casing and spacing do not count as fluency.

The rule that bounds it: the reference point is the source's own perplexity under the same
model (a sample of its sentences; without a source, ``REFERENCE_LOG_PP``). With
``gap = log PP(summary) - log PP(reference)`` (``aggregate="mean"``: over all tokens; ``"min"``:
the worst sentence's), ``base = exp(-max(0, gap) / scale)``: a summary that reads as easily as
its source scores 1, one whose perplexity is e^scale times the source's scores 1/e. The share of
words in sentences carrying a penalised flag (``fluency_flags``) lowers the value by
``flag_penalty`` times that share. ``weakest`` names the sentence a reader should look at first
and why. The defaults were chosen on the SummEval dev half (``bench/fluency_validity.py``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Protocol

from scoring.base import BaseScorer, Column, Result, Signature, check_choice, result_dict
from scoring.fluency_flags import FLAGS, sentence_flags, tidy
from scoring.lm import ModelSettings

# log PP of edited English prose under SmolLM2-135M (Q4_1 dequantised, bfloat16), each sentence
# read on its own: median 4.65 over 1,253 sentences of the demo documents and 5.23 over 199
# sentences of the LongSciVerify abstracts (lower-cased, tokenised), measured 2026-12-02.
# Used only when no source is given.
REFERENCE_LOG_PP = 4.7

READINGS = ("tidy", "as-written")
AGGREGATES = ("mean", "min")
# chosen on the SummEval dev half (bench/fluency_validity.py, ablation in docs/RESULTS.md);
# "unbalanced" never fires on SummEval dev, so it is neither validated nor refuted there: it is
# kept because an unbalanced bracket or quote is what a deletion across one leaves (our own
# compressor's failure mode). "no verb" and "reads poorly" are shown, not penalised.
PENALISED = ("repeats", "stutter", "dangling", "unbalanced", "unfinished")


class TokenModel(Protocol):
    """What fluency needs from a language model: per-token log-probabilities of texts."""

    def logprobs(self, pieces: list[list[str]]) -> list[list[list[float]]]:
        """For each text given as pieces (sentences), the log-probability of every token of
        every piece, read in order after a beginning-of-text token."""


@dataclass(frozen=True)
class FluencyConfig(ModelSettings):
    """Settings of the fluency scorer, after the model's.

    ``scale``: nats of perplexity gap over the source that take the base from 1 to 1/e;
    ``flag_gap``: a sentence whose own gap exceeds this is flagged "reads poorly";
    ``flag_penalty``: how much the share of words in penalised sentences lowers the value;
    ``penalised``: the flags that lower the value (the others are shown only);
    ``reading``: "tidy" (typesetting undone, lower case) or "as-written";
    ``aggregate``: the gap of the whole summary ("mean") or of its worst sentence ("min");
    ``reference_sentences``: how many source sentences (an even sample) give the reference
    perplexity. ``scale`` and ``flag_gap`` are rules of thumb; the rest was chosen on SummEval dev."""

    scale: float = 2.0
    flag_gap: float = 1.5
    flag_penalty: float = 0.5
    penalised: tuple[str, ...] = PENALISED
    reading: str = "tidy"
    aggregate: str = "mean"
    reference_sentences: int = 24

    def __post_init__(self):
        super().__post_init__()
        if self.scale <= 0 or self.flag_gap <= 0:
            raise ValueError("scale and flag_gap must be positive")
        if not 0 <= self.flag_penalty <= 1:
            raise ValueError(f"flag_penalty must lie in [0, 1], got {self.flag_penalty}")
        if self.reference_sentences < 1:
            raise ValueError("reference_sentences must be at least 1")
        check_choice("reading", self.reading, READINGS)
        check_choice("aggregate", self.aggregate, AGGREGATES)
        for flag in self.penalised:
            check_choice("a penalised flag", flag, FLAGS)


@dataclass(frozen=True)
class SentenceFluency:
    """One sentence: its text as written, its own perplexity in the summary's context, its
    flags, its gap over the source (nats) and its token log-probability sum (SLOR's input)."""

    text: str
    perplexity: float
    flags: tuple[str, ...]
    gap: float = 0.0
    logprob: float = 0.0
    tokens: int = 0


@dataclass(frozen=True)
class Weakest:
    """The sentence a reader should look at first: its index (from 0), text and why."""

    index: int
    text: str
    why: str


@dataclass(frozen=True)
class FluencyScore(Result):
    """Fluency of one summary: the bounded value, the perplexities behind it, each sentence,
    and the weakest sentence (None for an empty summary)."""

    value: float
    perplexity: float
    reference_perplexity: float
    sentences: tuple[SentenceFluency, ...]
    signature: Signature = field(compare=False)
    weakest: Weakest | None = None

    @property
    def flagged(self) -> tuple[SentenceFluency, ...]:
        return tuple(s for s in self.sentences if s.flags)

    def to_dict(self) -> dict:
        w = self.weakest
        return result_dict(
            self,
            sentences=[{"text": s.text, "perplexity": s.perplexity, "flags": list(s.flags)} for s in self.sentences],
            weakest=None if w is None else {"index": w.index, "text": w.text, "why": w.why},
        )


def perplexity(logprobs: list[float]) -> float:
    """PP = exp(-mean log p). Empty input has no perplexity."""
    if not logprobs:
        raise ValueError("perplexity of an empty token sequence is undefined")
    return math.exp(-sum(logprobs) / len(logprobs))


def fluency_value(sentences: tuple[SentenceFluency, ...], ref: float, config: FluencyConfig) -> float:
    """The value from the evidence: base from the perplexity gap (whole summary or worst
    sentence), lowered by the share of words in sentences with a penalised flag."""
    scored = [s for s in sentences if s.tokens]
    if not scored:
        return 0.0
    if config.aggregate == "min":
        gap = max(s.gap for s in scored)
    else:
        gap = -sum(s.logprob for s in scored) / sum(s.tokens for s in scored) - ref
    base = math.exp(-max(0.0, gap) / config.scale)
    penalised = set(config.penalised)
    flagged = sum(len(s.text.split()) for s in sentences if penalised & set(s.flags))
    share = flagged / max(1, sum(len(s.text.split()) for s in sentences))
    return base * (1 - config.flag_penalty * share)


def weakest(sentences: tuple[SentenceFluency, ...], penalised: tuple[str, ...]) -> Weakest | None:
    """The sentence with most penalised flags, then the most flags, then the largest gap."""
    if not sentences:
        return None
    pen = set(penalised)
    k = max(range(len(sentences)),
            key=lambda i: (len(pen & set(sentences[i].flags)), len(sentences[i].flags), sentences[i].gap))
    s = sentences[k]
    if s.flags:
        why = ", ".join(s.flags)
    else:
        why = f"hardest to read of the summary (perplexity {s.perplexity:.1f}, {s.gap:+.2f} nats against the source)"
    return Weakest(k, s.text, why)


class FluencyScorer(BaseScorer, name="fluency", label="Fluency", needs="source", config=FluencyConfig):
    """How easily the summary reads, from the small language model's perplexity relative to the
    source's, lowered for sentences that repeat earlier ones, stutter, end on a dangling word or
    stop unfinished: 1 = as easily as the source and no such sentence, lower = harder going."""

    columns = (
        Column("fluency", lambda r: r.value, "num2", "fluency", "Fluency"),
        Column("perplexity", lambda r: r.perplexity),
        Column("weakest_sentence", lambda r: None if r.weakest is None else r.weakest.index + 1, "int"),
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
            {**model, "reading": c.reading, "aggregate": c.aggregate, "scale": c.scale, "flag_gap": c.flag_gap,
             "penalised": "+".join(c.penalised) or "none", "flag_penalty": c.flag_penalty,
             "reference": f"source-sample-{c.reference_sentences}"},
            ("torch", "transformers", "spacy"),
        )

    def score(self, summary: str, *, source: str | None = None, reference=None) -> FluencyScore:
        return self.score_many([summary], source=source)[0]

    def read(self, sentence: str) -> str:
        return tidy(sentence) if self.config.reading == "tidy" else sentence

    def score_many(self, summaries: list[str], *, source: str | None = None, references=None) -> list[FluencyScore]:
        from scoring.text import split_sentences

        ref = self.reference_log_pp(source)
        split = [split_sentences(s) if s and s.strip() else [] for s in summaries]
        todo = [[self.read(x) for x in s] for s in split if s]
        scored = self.model.logprobs(todo) if todo else []
        results, k = [], 0
        sig = self.signature()
        for sentences in split:
            if not sentences:
                results.append(FluencyScore(0.0, float("inf"), round(math.exp(ref), 3), (), sig, None))
                continue
            results.append(self._one(sentences, scored[k], ref, sig))
            k += 1
        return results

    def reference_log_pp(self, source: str | None) -> float:
        """log PP of the source (an even sample of its sentences, read as the summary is),
        cached per source."""
        if not source or not source.strip():
            return REFERENCE_LOG_PP
        key = str(hash(source))
        if key not in self._references:
            from scoring.text import split_sentences

            sentences = [s for s in split_sentences(source) if len(s.split()) >= 4] or split_sentences(source)
            n = self.config.reference_sentences
            step = max(1, len(sentences) // n)
            sample = [self.read(s) for s in sentences[::step][:n]]
            # each sentence on its own, so the sample's order does not matter
            scored = self.model.logprobs([[s] for s in sample])
            flat = [x for text in scored for piece in text for x in piece]
            self._references[key] = -sum(flat) / len(flat)
        return self._references[key]

    def _one(self, sentences: list[str], scored: list[list[float]], ref: float, sig: Signature) -> FluencyScore:
        c = self.config
        flat = [x for piece in scored for x in piece]
        log_pp = -sum(flat) / len(flat) if flat else float("inf")
        out = []
        for text, lps, flags in zip(sentences, scored, sentence_flags(sentences)):
            own = -sum(lps) / len(lps) if lps else ref
            if own - ref > c.flag_gap:
                flags.append("reads poorly")
            out.append(SentenceFluency(text, round(math.exp(own), 3), tuple(flags), round(own - ref, 4),
                                       sum(lps), len(lps)))
        out = tuple(out)
        value = fluency_value(out, ref, c)
        return FluencyScore(round(value, 6), round(math.exp(log_pp), 3), round(math.exp(ref), 3), out, sig,
                            weakest(out, c.penalised))
