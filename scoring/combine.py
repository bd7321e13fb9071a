"""The combined score (one summary's own), the ordering score (its place in a pool) and the ranking.

Two numbers, never mixed (``CombineConfig.describe()`` and ``OrderConfig.describe()`` are the
texts every report and help prints):

    combined = 0.75 coverage + 0.25 fluency                       (pool-independent, in [0, 1])
    ordering = z(agreement) + 0.25 z(combined)                    (pool-relative; 3+ candidates)

``coverage`` is the coverage scorer's ``share`` (the part of the model's uncertainty about the
blanked key words that the summary removes, clipped to [0, 1]) and ``fluency`` the fluency
scorer's bounded value: a summary's combined score is the same whether it is scored alone or
among ten. ``agreement`` (``scoring.agreement``, mean ROUGE-2 F1 against the other candidates)
exists only in a pool of three or more and means something only within that pool, so it enters
the *ordering* score alone: z(x) is x's z-score among the pool's candidates (mean 0, population
standard deviation 1; 0 when every candidate has the same x). The ordering score decides the
ranking when it exists; with fewer than three candidates the combined score does.

Where the weights come from (``bench/ranking_fit.py``, ``bench/results/ranking_fit.json``; fitted
on the saved candidates of 30 SQuALITY train stories, read on the 25 dev stories, among
boildown's own 8 candidates per story): ordering by agreement alone had a mean Kendall tau with
ROUGE-2 against the human summaries of 0.180 on train (0.195 dev); adding the combined score at
0.25 of agreement's weight 0.182 (0.184 dev); at 0.5 to 2, 0.149 to 0.091 on train. The 3:1 split
of the combined score between coverage (what the tool is for) and fluency (a guard against
compressed text that no longer reads) is the earlier formula's, kept: no pool-independent term
tried (coverage alone, a budget-fill term, concept weight, source divergence) ordered the train
candidates better than agreement. A candidate over its word budget is flagged and always ranked
after every candidate within budget; ties break on the combined score, on coverage, then on the
order given.
"""

from __future__ import annotations

import statistics
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace

from scoring.base import Signature

POOL_SCORERS = ("agreement",)  # scores that mean something only among the other candidates


@dataclass(frozen=True)
class CombineConfig:
    """Weights of the scorers that enter the combined score, by registry name (order = the order
    the formula is written in). Only scores of one summary against its source: a pool score
    (agreement) belongs to ``OrderConfig``."""

    weights: tuple[tuple[str, float], ...] = (("coverage", 0.75), ("fluency", 0.25))

    def __post_init__(self):
        object.__setattr__(self, "weights", tuple((str(n), float(w)) for n, w in dict(self.weights).items()))
        pooled = [n for n, _ in self.weights if n in POOL_SCORERS]
        if pooled:
            raise ValueError(f"{pooled[0]} depends on the other candidates: it enters the ordering score "
                             "(OrderConfig), not the combined score")
        if any(w < 0 for _, w in self.weights) or sum(w for _, w in self.weights) <= 0:
            raise ValueError("weights must be non-negative and not all zero")

    def signature(self) -> Signature:
        return Signature.build("combined", {**dict(self.weights), "pool": "independent"})

    def describe(self) -> str:
        """The formula in words, with the weights normalised as they are applied."""
        total = sum(w for _, w in self.weights)
        text = " + ".join(f"{w / total:.3g} {name}" for name, w in self.weights if w > 0)
        return text + " (this summary against its source alone: the same scored alone or among others)"

    def value(self, units: Mapping[str, float | None]) -> float:
        """The combined score from each scorer's value in [0, 1] (its result's ``unit``); a
        scorer given as None is left out."""
        used = [(w, units[name]) for name, w in self.weights if units.get(name) is not None]
        weights = sum(w for w, _ in used)
        return round(sum(w * min(1.0, max(0.0, u)) for w, u in used) / weights, 6) if weights else 0.0


@dataclass(frozen=True)
class OrderConfig:
    """How candidates of one source are put in order: z-scores within the pool of the pool
    scorers' values (``pool_weights``) plus ``combined_weight`` times the combined score's
    z-score. Computed only when every pool scorer has a value (3 or more candidates)."""

    pool_weights: tuple[tuple[str, float], ...] = (("agreement", 1.0),)
    combined_weight: float = 0.25

    def __post_init__(self):
        object.__setattr__(self, "pool_weights", tuple((str(n), float(w)) for n, w in dict(self.pool_weights).items()))
        if any(w < 0 for _, w in self.pool_weights) or self.combined_weight < 0:
            raise ValueError("ordering weights must be non-negative")
        if not any(w > 0 for _, w in self.pool_weights):
            raise ValueError("the ordering needs a pool score with a positive weight; without one, rank by combined")

    def signature(self) -> Signature:
        return Signature.build("ordering", {**dict(self.pool_weights), "combined": self.combined_weight,
                                            "scale": "z-within-pool"})

    def describe(self) -> str:
        parts = [f"{w:.3g} z({n})" if w != 1 else f"z({n})" for n, w in self.pool_weights if w > 0]
        if self.combined_weight > 0:
            parts.append(f"{self.combined_weight:.3g} z(combined)")
        return (" + ".join(parts) + ", z = standard score among this run's candidates: relative to them, "
                "not comparable across runs, unlike the combined score")

    def values(self, pool_units: Mapping[str, Sequence[float | None]], combined: Sequence[float]) -> list[float] | None:
        """The ordering score of each candidate of one pool, or None when a pool scorer has no
        value for some candidate (a pool too small)."""
        n = len(combined)
        total = [0.0] * n
        for name, w in self.pool_weights:
            xs = list(pool_units.get(name) or [None] * n)
            if len(xs) != n or any(x is None for x in xs):
                return None
            total = [t + w * z for t, z in zip(total, zscores(xs))]
        return [round(t + self.combined_weight * z, 6) for t, z in zip(total, zscores(list(combined)))]


def zscores(xs: Sequence[float]) -> list[float]:
    """Standard scores (population standard deviation); all 0 when the values are equal."""
    if not xs:
        return []
    mu, sd = statistics.fmean(xs), statistics.pstdev(xs)
    return [(x - mu) / sd if sd > 1e-12 else 0.0 for x in xs]


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
    ordering: float | None = None  # pool-relative (OrderConfig); None in a pool under 3
    extra: dict = field(default_factory=dict)
    combine: CombineConfig = CombineConfig()  # the configuration that computed ``combined``
    order: OrderConfig = OrderConfig()  # the configuration that computed ``ordering``

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
               "over_budget": self.over_budget, "combined": self.combined,
               "ordering": self.ordering}
        out.update({name: r.to_dict() if r is not None else None for name, r in self.scores.items()})
        out["text"] = self.text
        out.update(self.extra)
        return out


def combined_score(coverage_share: float, fluency: float, config: CombineConfig = CombineConfig()) -> float:
    """``config.value`` for the two scorers of the default formula."""
    return config.value({"coverage": coverage_share, "fluency": fluency})


def rank(candidates: list[Candidate]) -> list[Candidate]:
    """Within-budget first, then by ordering score where the pool has one, then by combined
    score, then coverage; ranks start at 1."""
    order = sorted(
        range(len(candidates)),
        key=lambda i: (candidates[i].over_budget,
                       -(candidates[i].ordering if candidates[i].ordering is not None else 0.0),
                       -candidates[i].combined, -candidates[i].coverage.share, i),
    )
    return [replace(candidates[i], rank=n + 1) for n, i in enumerate(order)]
