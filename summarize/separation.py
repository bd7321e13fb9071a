"""What put the first-ranked candidate above the second: the comparison's "why".

The ranking's parts are read from the row model (``report.ranking_columns``: each column of a
scorer that reads the source or the pool, then the totals such as the combined score), never
from scorer names, so a new scorer or a new total shows up here by itself. The total the
order follows is the first one that never rises down the ranks. When that total is a weighted
mean of the scorers' values (the candidates' ``combine`` configuration gives it back exactly),
each part's share of the gap is its weight times its difference, and the part with the largest
share "made most of the difference"; otherwise the part with the largest difference is named.
A candidate over the word budget ranks after every candidate within it whatever its scores;
equal totals are a tie broken by the ranking's tie-break; and when no total shown follows the
ranking (an order computed but not shown), it says so rather than cite a total that disagrees.
"""

from __future__ import annotations

from dataclasses import dataclass

from summarize import report


@dataclass(frozen=True)
class Part:
    """One component of the ranking for the first two candidates. ``share`` is its normalised
    weight in the total that orders them, when that total is a weighted mean of the components
    (then ``contribution`` is its part of the gap), else None."""

    label: str
    kind: str
    first: float
    second: float
    share: float | None = None

    @property
    def gap(self) -> float:
        return self.first - self.second

    @property
    def contribution(self) -> float | None:
        if self.share is None:
            return None
        clip = lambda v: min(1.0, max(0.0, v))
        return self.share * (clip(self.first) - clip(self.second))

    @property
    def weight(self) -> float:
        """How much it moved the first two apart (its contribution where known, else its gap)."""
        return self.contribution if self.contribution is not None else self.gap


@dataclass(frozen=True)
class Separation:
    """Why the first candidate ranks above the second, in one sentence and in parts."""

    first: str
    second: str
    total: str | None  # the column the order follows ("Combined")
    total_kind: str
    first_total: float | None
    second_total: float | None
    reason: str  # "budget", "tie", "score", or "order" (no total shown follows the ranking)
    decided_by: str | None  # the component's label
    parts: tuple[Part, ...]
    text: str

    def to_dict(self) -> dict:
        return {"first": self.first, "second": self.second, "reason": self.reason, "decided_by": self.decided_by,
                "total": self.total, "first_total": self.first_total, "second_total": self.second_total,
                "parts": [{"label": p.label, "first": p.first, "second": p.second, "share": p.share,
                           "contribution": None if p.contribution is None else round(p.contribution, 6)}
                          for p in self.parts],
                "text": self.text}


def separation(candidates) -> Separation | None:
    """Which component of the ranking (``report.ranking_columns``: every column of the scorers
    that read the source or the pool, then the totals) put the first candidate above the second."""
    candidates = list(candidates)
    if len(candidates) < 2:
        return None
    a, b = candidates[:2]
    cols = report.ranking_columns(candidates)
    totals = [c for c in cols if c.scorer is None]
    following = next((t for t in totals if _follows(t, candidates)), None)
    total = following or (totals[0] if totals else None)
    shares = _shares(a, b, following)
    parts = tuple(Part(col.title, col.kind, col.value(a), col.value(b), shares.get(col.scorer))
                  for col in cols if col.scorer is not None and None not in (col.value(a), col.value(b)))
    fa, fb = (total.value(a), total.value(b)) if total else (None, None)
    lead = max(parts, key=lambda p: p.weight, default=None)
    by = lead.label if lead is not None and lead.weight > 0 else None
    if a.over_budget != b.over_budget:
        reason, by = "budget", None
        text = (f"{b.name} is over the word budget, and a candidate over it ranks after every candidate "
                f"within it, whatever its scores.")
    elif following is None:
        reason = "order"
        on = f" (on {total.title}: {_cell(total, fa)} against {_cell(total, fb)})" if total else ""
        text = f"{a.name} ranks above {b.name} by an order that no total shown follows{on}."
    elif fa == fb:
        reason, by = "tie", None
        text = f"{a.name} and {b.name} tie on {total.title} ({_cell(total, fa)}); {a.name} comes first on the tie-break."
    else:
        reason = "score"
        text = f"{a.name} ranks above {b.name} on {total.title}: {_cell(total, fa)} against {_cell(total, fb)}."
    if by is not None and reason in ("score", "order"):
        text += f" {lead.label} made most of the difference ({_part_text(lead)})"
        against = [p for p in parts if p.weight < 0]
        if against:
            worst = min(against, key=lambda p: p.weight)
            text += f"; {worst.label} pulled the other way ({_part_text(worst)})"
        text += "."
    return Separation(a.name, b.name, total.title if total else None, total.kind if total else "num3",
                      fa, fb, reason, by, parts, text)


def _cell(column, value) -> str:
    return report.cell(column.kind, value)


def _part_text(part: Part) -> str:
    out = f"{report.cell(part.kind, part.first)} against {report.cell(part.kind, part.second)}"
    if part.contribution is not None:
        out += f", {part.contribution:+.3f} at weight {part.share:.3g}"
    return out


def _follows(total, candidates) -> bool:
    """Whether the ranking follows this total: it never rises down the ranks (within budget, and
    over it)."""
    for x, y in zip(candidates, candidates[1:]):
        vx, vy = total.value(x), total.value(y)
        if vx is None or vy is None:
            return False
        if x.over_budget == y.over_budget and vy > vx + 1e-9:
            return False
    return True


def _shares(a, b, total) -> dict[str, float]:
    """Each scorer's normalised weight in ``total``, when the candidates' combine configuration
    gives that total back for both (a weighted mean of the scorers' values); else nothing."""
    combine = getattr(a, "combine", None)
    weights = getattr(combine, "weights", None)
    if total is None or not weights or not hasattr(combine, "value"):
        return {}
    used = {name: float(w) for name, w in dict(weights).items()
            if a.scores.get(name) is not None and b.scores.get(name) is not None}
    whole = sum(used.values())
    if whole <= 0:
        return {}
    for c in (a, b):
        again = combine.value({name: c.scores[name].unit for name in used})
        if total.value(c) is None or abs(again - total.value(c)) > 1e-6:
            return {}
    return {name: w / whole for name, w in used.items()}
