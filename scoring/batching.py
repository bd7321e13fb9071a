"""Grouping texts of unequal length into batches for a model, with little padding."""

from __future__ import annotations

# a batch is closed when padding would make it this much larger than its texts
PADDING_SLACK = 1.25


def length_batches(lengths: list[int], budget: int, slack: float = PADDING_SLACK) -> list[list[int]]:
    """Indices grouped, shortest first, so that a batch (rows x its longest) stays within
    ``budget`` tokens and within ``slack`` times its texts' own tokens; a text longer than
    the budget gets a batch of its own. Every index appears once."""
    batches: list[list[int]] = []
    current: list[int] = []
    real = 0
    for i in sorted(range(len(lengths)), key=lambda j: lengths[j]):
        n = lengths[i]
        padded = (len(current) + 1) * n
        if current and (padded > budget or padded > slack * (real + n)):
            batches.append(current)
            current, real = [], 0
        current.append(i)
        real += n
    if current:
        batches.append(current)
    return batches
