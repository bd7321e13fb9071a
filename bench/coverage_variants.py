"""Other ways to total coverage's per-key-word evidence, without another model pass (shared by
bench/coverage_validity.py and bench/keyword_pairs.py, so the REALSumm taus and the demo pairs'
margins are read off the same totals).

A key word's evidence here is (p_without, p_with, carried, is_name): its blank's probability
without and with the summary, whether the summary carries it, and whether it is a name. From
the mean probability of its blanks (one blank per key word in the default mode).
"""

from __future__ import annotations

import math

NAME_WEIGHTS = (1.0, 0.5, 0.25, 0.0)  # the weight of a name among the key words
CAPS = (None, 2.0, 4.0)  # each key word's gain (and surprisal) counted up to this many nats


def _nats(p: float) -> float:
    return -math.log(max(p, 1e-12))


def totals(evidence: list[tuple[float, float, bool, bool]]) -> dict[str, float]:
    """Each variant's value for one summary (labels as the results page shows them)."""
    if not evidence:
        return {}
    n = len(evidence)
    surprisal = [_nats(p0) for p0, _, _, _ in evidence]
    gain = [s - _nats(p1) for s, (_, p1, _, _) in zip(surprisal, evidence)]
    carried = [c for _, _, c, _ in evidence]
    out = {}
    for names in NAME_WEIGHTS:
        w = [names if is_name else 1.0 for _, _, _, is_name in evidence]
        for cap in CAPS:
            top = (lambda x: x) if cap is None else (lambda x, c=cap: min(x, c))
            den = sum(wi * top(s) for wi, s in zip(w, surprisal))
            num = sum(wi * top(g) for wi, g, c in zip(w, gain, carried) if c)
            label = f"variant: names x{names:g}, gain {'uncapped' if cap is None else f'capped at {cap:g} nats'}"
            out[label] = num / den if den > 0 else 0.0
        out[f"variant: names x{names:g}, share of key words contained"] = (
            sum(wi for wi, c in zip(w, carried) if c) / sum(w) if sum(w) else 0.0)
    own = [min(1.0, max(0.0, g / s)) if s > 0 else 0.0 for g, s in zip(gain, surprisal)]
    out["variant: every key word's gain (credit all)"] = sum(gain) / n
    out["variant: per-key-word share, contained"] = sum(o for o, c in zip(own, carried) if c) / n
    out["variant: share of key words contained"] = sum(carried) / n
    return out
