"""The combined score and the ranking of candidate summaries.

Formula (one place; ``CombineConfig.describe()`` is the text every report and help prints):

    combined = (w_agreement * agreement + w_coverage * coverage + w_fluency * fluency) / (sum of the weights used)

all three in [0, 1]: ``coverage`` is the coverage scorer's ``share`` (the part of the model's
uncertainty about the blanked key words that the summary removes, clipped to [0, 1]),
``fluency`` the fluency scorer's bounded value, ``agreement`` the candidate's mean ROUGE-2 F1
against the other candidates of the same source (``scoring.agreement``). Agreement exists only
when there are at least three candidates; without it the formula is the same with its weight
left out (coverage 0.75, fluency 0.25 after normalising).

Weights 0.5 / 0.375 / 0.125: agreement half, the other half split 3:1 between coverage (what the
tool is for) and fluency (a guard against compressed text that no longer reads). Chosen on 30
SQuALITY train stories (``bench/results/ranking_tuning_train.json``): the candidates' mean
Kendall tau with ROUGE-2 against the human summaries was 0.244 with these weights, against 0.109
with coverage and fluency alone; agreement weights from 0.25 to 4 times that of coverage plus
fluency gave 0.22 to 0.25. A candidate over its word budget is flagged and always ranked after
every candidate within budget; ties break on coverage, then on the order given.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from scoring.base import Signature


@dataclass(frozen=True)
class CombineConfig:
    w_agreement: float = 0.5
    w_coverage: float = 0.375
    w_fluency: float = 0.125

    def __post_init__(self):
        if min(self.w_agreement, self.w_coverage, self.w_fluency) < 0 or self.w_coverage + self.w_fluency <= 0:
            raise ValueError("weights must be non-negative, and coverage and fluency not both zero")

    def signature(self) -> Signature:
        return Signature.build("combined", {"agreement": self.w_agreement, "coverage": self.w_coverage,
                                            "fluency": self.w_fluency, "over_budget": "ranked-last"})

    def describe(self, agreement: bool = True) -> str:
        """The formula in words, with the weights normalised as they are applied."""
        parts = [("agreement", self.w_agreement if agreement else 0.0), ("coverage", self.w_coverage),
                 ("fluency", self.w_fluency)]
        total = sum(w for _, w in parts)
        text = " + ".join(f"{w / total:.3g} {name}" for name, w in parts if w > 0)
        return text + ("" if agreement else " (agreement needs 3 or more candidates)")


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
    agreement: object | None = None  # AgreementScore (3 or more candidates)
    rank: int = 0
    extra: dict = field(default_factory=dict)
    combine: CombineConfig = CombineConfig()  # the configuration that computed ``combined``

    @property
    def over_budget(self) -> bool:
        return self.budget is not None and self.words > self.budget

    def signatures(self) -> tuple:
        """The signature of every score this candidate carries, in report order."""
        found = (self.coverage, self.fluency, self.agreement, self.rouge, self.bertscore)
        return tuple(s.signature for s in found if s is not None)

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
            "agreement": self.agreement.to_dict() if self.agreement is not None else None,
            "text": self.text,
        }
        if self.rouge is not None:
            out["rouge"] = self.rouge.to_dict()
        if self.bertscore is not None:
            out["bertscore"] = self.bertscore.to_dict()
        out.update(self.extra)
        return out


def combined_score(coverage_share: float, fluency: float, agreement: float | None = None,
                   config: CombineConfig = CombineConfig()) -> float:
    clip = lambda x: min(1.0, max(0.0, x))  # noqa: E731
    total = config.w_coverage * clip(coverage_share) + config.w_fluency * clip(fluency)
    weights = config.w_coverage + config.w_fluency
    if agreement is not None:
        total += config.w_agreement * clip(agreement)
        weights += config.w_agreement
    return round(total / weights, 6)


def rank(candidates: list[Candidate]) -> list[Candidate]:
    """Within-budget first, then by combined score, then coverage; ranks start at 1."""
    from dataclasses import replace

    order = sorted(
        range(len(candidates)),
        key=lambda i: (candidates[i].over_budget, -candidates[i].combined, -candidates[i].coverage.share, i),
    )
    return [replace(candidates[i], rank=n + 1) for n, i in enumerate(order)]
