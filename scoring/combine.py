"""The combined score and the ranking of candidate summaries.

Formula (one place; ``CombineConfig.describe()`` is the text every report and help prints):

    combined = (w_agreement * agreement + w_coverage * coverage + w_fluency * fluency) / (sum of the weights used)

(the weights are ``CombineConfig.weights``, by scorer name; each scorer's value is its result's ``unit``)

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

from collections.abc import Mapping
from dataclasses import dataclass, field, replace

from scoring.base import Signature


@dataclass(frozen=True)
class CombineConfig:
    """Weights of the scorers that enter the combined score, by registry name (order = the order
    the formula is written in). A scorer whose result is missing (agreement with fewer than
    three candidates) is left out and the other weights are normalised."""

    weights: tuple[tuple[str, float], ...] = (("agreement", 0.5), ("coverage", 0.375), ("fluency", 0.125))

    def __post_init__(self):
        object.__setattr__(self, "weights", tuple((str(n), float(w)) for n, w in dict(self.weights).items()))
        if any(w < 0 for _, w in self.weights) or sum(w for n, w in self.weights if n != "agreement") <= 0:
            raise ValueError("weights must be non-negative, and not all zero apart from agreement's")

    def signature(self) -> Signature:
        return Signature.build("combined", {**dict(self.weights), "over_budget": "ranked-last"})

    def describe(self, agreement: bool = True) -> str:
        """The formula in words, with the weights normalised as they are applied."""
        parts = [(name, w) for name, w in self.weights if agreement or name != "agreement"]
        total = sum(w for _, w in parts)
        text = " + ".join(f"{w / total:.3g} {name}" for name, w in parts if w > 0)
        return text + ("" if agreement else " (agreement needs 3 or more candidates)")

    def value(self, units: Mapping[str, float | None]) -> float:
        """The combined score from each scorer's value in [0, 1] (its result's ``unit``); a
        scorer given as None is left out."""
        used = [(w, units[name]) for name, w in self.weights if units.get(name) is not None]
        weights = sum(w for w, _ in used)
        return round(sum(w * min(1.0, max(0.0, u)) for w, u in used) / weights, 6) if weights else 0.0


@dataclass(frozen=True)
class Candidate:
    """One summary with every score boildown computed for it (``scores``: registry name ->
    result, or None where a scorer ran but had nothing to say, e.g. agreement of a pool of two)."""

    name: str
    text: str
    words: int
    budget: int | None
    scores: Mapping[str, object]
    combined: float
    rank: int = 0
    extra: dict = field(default_factory=dict)
    combine: CombineConfig = CombineConfig()  # the configuration that computed ``combined``

    # the scorers every report shows by name
    coverage = property(lambda self: self.scores["coverage"])
    fluency = property(lambda self: self.scores["fluency"])
    agreement = property(lambda self: self.scores.get("agreement"))
    rouge = property(lambda self: self.scores.get("rouge"))
    bertscore = property(lambda self: self.scores.get("bertscore"))

    @property
    def over_budget(self) -> bool:
        return self.budget is not None and self.words > self.budget

    def signatures(self) -> tuple:
        """The signature of every score this candidate carries, in report order."""
        return tuple(r.signature for r in self.scores.values() if r is not None)

    def to_dict(self) -> dict:
        out = {"rank": self.rank, "name": self.name, "words": self.words, "budget": self.budget,
               "over_budget": self.over_budget, "combined": self.combined}
        out.update({name: r.to_dict() if r is not None else None for name, r in self.scores.items()})
        out["text"] = self.text
        out.update(self.extra)
        return out


def combined_score(coverage_share: float, fluency: float, agreement: float | None = None,
                   config: CombineConfig = CombineConfig()) -> float:
    """``config.value`` for the three scorers of the default formula."""
    return config.value({"coverage": coverage_share, "fluency": fluency, "agreement": agreement})


def rank(candidates: list[Candidate]) -> list[Candidate]:
    """Within-budget first, then by combined score, then coverage; ranks start at 1."""
    order = sorted(
        range(len(candidates)),
        key=lambda i: (candidates[i].over_budget, -candidates[i].combined, -candidates[i].coverage.share, i),
    )
    return [replace(candidates[i], rank=n + 1) for n, i in enumerate(order)]
