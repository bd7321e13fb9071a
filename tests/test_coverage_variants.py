"""The bench's other totals of coverage's key-word evidence (bench/coverage_variants.py),
worked by hand on two key words."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.coverage_variants import totals  # noqa: E402


def test_totals_worked_by_hand():
    # key word A: 2 nats of surprisal without the summary, 1 with it, carried, not a name;
    # key word B: a name, 4 nats either way, not carried. Gains: A 1 nat, B 0.
    t = totals([(math.exp(-2), math.exp(-1), True, False), (math.exp(-4), math.exp(-4), False, True)])
    assert t["variant: names x1, gain uncapped"] == pytest.approx(1 / 6)  # 1 / (2 + 4)
    assert t["variant: names x0, gain uncapped"] == pytest.approx(1 / 2)  # the name left out: 1 / 2
    assert t["variant: names x0.5, gain uncapped"] == pytest.approx(1 / 4)  # 1 / (2 + 0.5 * 4)
    assert t["variant: names x1, gain capped at 2 nats"] == pytest.approx(1 / 4)  # 1 / (2 + min(4, 2))
    assert t["variant: names x1, share of key words contained"] == pytest.approx(1 / 2)
    assert t["variant: names x0, share of key words contained"] == pytest.approx(1.0)
    assert t["variant: per-key-word share, contained"] == pytest.approx(0.25)  # (1/2 + 0) / 2
    assert t["variant: every key word's gain (credit all)"] == pytest.approx(0.5)


def test_no_evidence_no_totals():
    assert totals([]) == {}
