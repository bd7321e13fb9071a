"""Run every scorer over a set of candidate summaries of one source, and rank them.

One ``Evaluator`` per process holds the scorers, so a source's key words, its coverage
baseline and its reference perplexity are computed once and reused by every candidate (the
``score`` and ``compare`` commands, and the summarizer's candidate search, all come here).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from typing import Callable, Sequence

from scoring.agreement import AgreementConfig, AgreementScorer
from scoring.combine import Candidate, CombineConfig, combined_score, rank
from scoring.coverage import CoverageConfig, CoverageScorer
from scoring.fluency import FluencyConfig, FluencyScorer


@dataclass(frozen=True)
class EvalConfig:
    coverage: CoverageConfig = field(default_factory=CoverageConfig)
    fluency: FluencyConfig = field(default_factory=FluencyConfig)
    agreement: AgreementConfig = field(default_factory=AgreementConfig)
    combine: CombineConfig = field(default_factory=CombineConfig)


class Evaluator:
    """Scores and ranks candidates; reference scores only when references are given."""

    def __init__(self, config: EvalConfig = EvalConfig()):
        self.config = config
        self.coverage = CoverageScorer(config.coverage)
        self.fluency = FluencyScorer(config.fluency)
        self.agreement = AgreementScorer(config.agreement)

    @functools.cached_property
    def rouge(self):
        from scoring.reference import RougeScorer

        return RougeScorer()

    @functools.cached_property
    def bertscore(self):
        from scoring.reference import BertScoreScorer

        return BertScoreScorer()

    def evaluate(
        self,
        candidates: Sequence[tuple[str, str]],
        *,
        source: str,
        references: Sequence[str] | None = None,
        budget: int | None = None,
        progress: Callable[[str], None] | None = None,
    ) -> list[Candidate]:
        """Score (name, text) pairs against the source; return them ranked."""
        from scoring.text import count_words

        if not source or not source.strip():
            raise ValueError("the source is empty: there is nothing to summarise or cover")
        say = progress or (lambda _m: None)
        texts = [text for _, text in candidates]
        say(f"coverage of {len(texts)} candidate(s)")
        coverage = self.coverage.score_many(texts, source=source)
        say("fluency")
        fluency = self.fluency.score_many(texts, source=source)
        agreement = self.agreement.score_many(texts)  # None for each when fewer than 3 candidates
        refs = [r for r in (references or []) if r and r.strip()]
        rouge = bert = [None] * len(texts)
        if refs:
            say("ROUGE and BERTScore against the reference(s)")
            rouge = [self.rouge.score(t, reference=refs) for t in texts]
            bert = self.bertscore.score_many(texts, reference=refs)
        out = []
        for (name, text), cov, flu, agr, rg, bs in zip(candidates, coverage, fluency, agreement, rouge, bert):
            out.append(
                Candidate(
                    name=name,
                    text=text,
                    words=count_words(text),
                    budget=budget,
                    coverage=cov,
                    fluency=flu,
                    combined=combined_score(cov.share, flu.value, agr.value if agr is not None else None,
                                            self.config.combine),
                    rouge=rg,
                    bertscore=bs,
                    agreement=agr,
                    combine=self.config.combine,
                )
            )
        return rank(out)


@functools.cache
def default_evaluator() -> Evaluator:
    """The process-wide evaluator with default settings (its caches are shared)."""
    return Evaluator()
