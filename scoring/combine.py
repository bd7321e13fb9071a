"""The combined score and the ranking of candidate summaries.

Formula (one place, documented in the README):

    combined = w_coverage * coverage + w_fluency * fluency            (both in [0, 1])

where ``coverage`` is the coverage scorer's ``share`` (the part of the model's uncertainty
about the blanked key words that the summary removes, clipped to [0, 1]) and ``fluency`` is the
fluency scorer's bounded value. Weights default to 0.75 / 0.25: coverage is what the tool is
for, fluency guards against compressed text that no longer reads. A candidate over its word
budget is flagged and always ranked after every candidate within budget; ties break on
coverage, then on the order given.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from scoring.base import Signature


@dataclass(frozen=True)
class CombineConfig:
    w_coverage: float = 0.75
    w_fluency: float = 0.25

    def __post_init__(self):
        if self.w_coverage < 0 or self.w_fluency < 0 or self.w_coverage + self.w_fluency <= 0:
            raise ValueError("weights must be non-negative and not both zero")

    def signature(self) -> Signature:
        return Signature.build("combined", {"cov": self.w_coverage, "flu": self.w_fluency, "over": "last"})


@dataclass(frozen=True)
class Candidate:
    """One summary with every score boildown computed for it."""

    name: str
    text: str
    words: int
    budget: int | None
    coverage: object  # CoverageScore
    fluency: object  # FluencyScore
    combined: float
    rouge: object | None = None  # RougeScore
    bertscore: object | None = None  # BertScore
    rank: int = 0
    extra: dict = field(default_factory=dict)

    @property
    def over_budget(self) -> bool:
        return self.budget is not None and self.words > self.budget

    def to_dict(self) -> dict:
        out = {
            "rank": self.rank,
            "name": self.name,
            "words": self.words,
            "budget": self.budget,
            "over_budget": self.over_budget,
            "combined": self.combined,
            "coverage": self.coverage.to_dict(),
            "fluency": self.fluency.to_dict(),
            "text": self.text,
        }
        if self.rouge is not None:
            out["rouge"] = self.rouge.to_dict()
        if self.bertscore is not None:
            out["bertscore"] = self.bertscore.to_dict()
        out.update(self.extra)
        return out


def combined_score(coverage_share: float, fluency: float, config: CombineConfig = CombineConfig()) -> float:
    cov = min(1.0, max(0.0, coverage_share))
    flu = min(1.0, max(0.0, fluency))
    total = config.w_coverage + config.w_fluency
    return round((config.w_coverage * cov + config.w_fluency * flu) / total, 6)


def rank(candidates: list[Candidate]) -> list[Candidate]:
    """Within-budget first, then by combined score, then coverage; ranks start at 1."""
    from dataclasses import replace

    order = sorted(
        range(len(candidates)),
        key=lambda i: (candidates[i].over_budget, -candidates[i].combined, -candidates[i].coverage.share, i),
    )
    return [replace(candidates[i], rank=n + 1) for n, i in enumerate(order)]
