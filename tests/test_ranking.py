"""The combined score is a summary's own (pool-independent); the ordering score ranks a pool
(scoring/combine.py, scoring/evaluate.py). Models are replaced by fixed results: what is checked
is how the numbers are put together and which candidate comes first."""

from __future__ import annotations

import pytest

from scoring.base import Signature
from scoring.combine import CombineConfig, OrderConfig, zscores
from scoring.coverage import CoverageScore
from scoring.evaluate import EvalConfig, Evaluator
from scoring.fluency import FluencyScore

SOURCE = ("The harbour board met on Tuesday. It approved the ban on night dredging near the estuary. "
          "Fishing crews had asked for the ban after two seasons of low catches.")
# invented candidates: three on the ban, one about something else
TEXTS = {
    "a": "The harbour board approved the ban on night dredging near the estuary.",
    "b": "The board approved a ban on night dredging near the estuary after low catches.",
    "c": "Fishing crews asked for the ban on night dredging near the estuary.",
    "d": "The board met on Tuesday.",
}
COVERAGE = {"a": 0.50, "b": 0.55, "c": 0.40, "d": 0.20}
FLUENCY = {"a": 0.9, "b": 0.8, "c": 0.9, "d": 1.0}


@pytest.fixture
def evaluator(monkeypatch):
    ev = Evaluator(EvalConfig())
    sig = Signature("fake", ())

    def coverage(texts, **_):
        name = {t: n for n, t in TEXTS.items()}
        return [CoverageScore(COVERAGE[name[t]], COVERAGE[name[t]], 0.0, 0.0, 0.0, 0.0, 0.0, 3, 3, (), sig)
                for t in texts]

    def fluency(texts, **_):
        name = {t: n for n, t in TEXTS.items()}
        return [FluencyScore(FLUENCY[name[t]], 20.0, 18.0, (), sig) for t in texts]

    monkeypatch.setattr(ev.coverage, "score_many", coverage)
    monkeypatch.setattr(ev.fluency, "score_many", fluency)
    return ev


def test_the_combined_score_of_a_summary_is_the_same_alone_and_in_any_pool(evaluator):
    alone = {n: evaluator.evaluate([(n, t)], source=SOURCE)[0].combined for n, t in TEXTS.items()}
    for pool in (["a", "b"], ["a", "b", "c"], list(TEXTS)):
        ranked = evaluator.evaluate([(n, TEXTS[n]) for n in pool], source=SOURCE)
        assert {c.name: c.combined for c in ranked} == {n: alone[n] for n in pool}
    assert alone["a"] == pytest.approx(0.75 * 0.50 + 0.25 * 0.9)


def test_the_ordering_score_exists_from_three_candidates_and_decides_the_ranking(evaluator):
    two = evaluator.evaluate([(n, TEXTS[n]) for n in "ab"], source=SOURCE)
    assert all(c.ordering is None for c in two)
    assert [c.name for c in two] == ["b", "a"]  # by the combined score
    four = evaluator.evaluate([(n, t) for n, t in TEXTS.items()], source=SOURCE)
    assert all(c.ordering is not None for c in four)
    assert [c.ordering for c in four] == sorted((c.ordering for c in four), reverse=True)
    assert four[-1].name == "d"  # agrees least with the others
    # ordering = z(agreement) + 0.25 z(combined), recomputed here from the candidates' own values
    agreement = [c.agreement.value for c in four]
    combined = [c.combined for c in four]
    expected = [a + 0.25 * b for a, b in zip(zscores(agreement), zscores(combined))]
    assert [c.ordering for c in four] == pytest.approx(expected, abs=1e-6)
    # and it is a pool-relative number: its mean over the pool is 0
    assert sum(c.ordering for c in four) == pytest.approx(0.0, abs=1e-5)


def test_zscores_match_scipy():
    """scipy.stats.zscore (population standard deviation, ddof=0) as the outside reference."""
    from scipy.stats import zscore

    xs = [0.61, 0.60, 0.57, 0.38, 0.55]
    assert zscores(xs) == pytest.approx(list(zscore(xs)), abs=1e-12)
    assert zscores([0.4, 0.4, 0.4]) == [0.0, 0.0, 0.0]


def test_pool_scores_are_refused_in_the_combined_score_and_the_ordering_needs_one():
    with pytest.raises(ValueError, match="ordering score"):
        CombineConfig((("agreement", 1.0), ("coverage", 1.0)))
    with pytest.raises(ValueError, match="pool score"):
        OrderConfig(pool_weights=(("agreement", 0.0),))


def test_outputs_name_the_two_scores_apart(evaluator):
    from summarize import report

    ranked = evaluator.evaluate([(n, t) for n, t in TEXTS.items()], source=SOURCE)
    csv_header = report.to_csv(ranked).splitlines()[0].split(",")
    assert {"name", "coverage", "fluency", "combined", "ordering"} <= set(csv_header)
    text = report.table(ranked)
    assert "combined: 0.75 coverage + 0.25 fluency" in text and "ordering: z(agreement)" in text
    assert "not comparable across runs" in text
    single = report.table(evaluator.evaluate([("a", TEXTS["a"])], source=SOURCE))
    assert "ordering: none: it needs 3 or more candidates" in single
    assert "ordering" in report.legend() and "combined" in report.legend()


def test_json_keeps_the_fields_a_rerun_reads_and_adds_the_ordering(evaluator):
    import json

    from summarize import report
    from summarize.pipeline import _scores

    ranked = evaluator.evaluate([(n, t) for n, t in TEXTS.items()], source=SOURCE)
    first = json.loads(report.to_json(ranked))["candidates"][0]
    assert {"name", "combined", "ordering", "coverage", "fluency", "text"} <= set(first)
    assert "share" in first["coverage"] and "missed" in first["coverage"]
    scores = _scores(ranked[0])
    assert scores["ordering"] == ranked[0].ordering
    assert scores["signatures"]["ordering"]["formula"].startswith("z(agreement) + 0.25 z(combined)")
    alone = _scores(evaluator.evaluate([("a", TEXTS["a"])], source=SOURCE)[0])
    assert alone["ordering"] is None and alone["signatures"]["ordering"] is None
