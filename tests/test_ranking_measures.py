"""bench/ranking_measures.py: its orderings match the tool's own scorers, and its pick is the tool's pick.

Sources: the agreement values are checked against scoring.agreement (ROUGE-2 F1 from the
rouge-score reference library); the combined score against scoring.combine.combined_score.
The candidate texts are invented for the test.
"""

import pytest

pytest.importorskip("rouge_score")

from bench.ranking_measures import picks, story_scores  # noqa: E402
from scoring.agreement import AgreementScorer  # noqa: E402
from scoring.combine import combined_score  # noqa: E402

TEXTS = [
    "The valley council closed the north ferry after the spring flood damaged its landing.",
    "After the spring flood damaged its landing, the valley council closed the north ferry for the season.",
    "The council closed the north ferry; the spring flood had damaged the landing and the road.",
    "Orchard growers in the valley sold fewer pears this year than last.",
]
CANDIDATES = [
    {"name": "boildown:balanced", "text": TEXTS[0], "coverage": 0.40, "fluency": 0.90, "combined": 0.0, "rouge2": 0.12},
    {"name": "boildown:mmr", "text": TEXTS[1], "coverage": 0.45, "fluency": 0.95, "combined": 0.0, "rouge2": 0.20},
    {"name": "boildown:diverse", "text": TEXTS[2], "coverage": 0.30, "fluency": 0.80, "combined": 0.0, "rouge2": 0.08},
    {"name": "textrank", "text": TEXTS[3], "coverage": 0.10, "fluency": 0.99, "combined": 0.0, "rouge2": 0.01},
]


@pytest.fixture(scope="module")
def rouge():
    from rouge_score.rouge_scorer import RougeScorer

    return RougeScorer(["rouge1", "rouge2", "rougeL"], use_stemmer=True)


def test_agreement_ordering_equals_the_tools_agreement_scorer(rouge):
    ours = story_scores(CANDIDATES, rouge)["agreement rouge2 fmeasure"]
    tool = [a.value for a in AgreementScorer().score_many(TEXTS)]
    assert ours == pytest.approx(tool, abs=1e-5)
    assert ours[3] < min(ours[:3])  # the off-topic text agrees least with the rest


def test_pick_is_the_candidate_the_tool_would_return(rouge):
    own = TEXTS[:3]
    agreement = [a.value for a in AgreementScorer().score_many(own)]
    combined = [combined_score(c["coverage"], c["fluency"], a) for c, a in zip(CANDIDATES[:3], agreement)]
    expected = CANDIDATES[max(range(3), key=combined.__getitem__)]["rouge2"]
    got = picks(CANDIDATES, rouge)
    assert got["combined score (agreement, coverage, fluency)"] == pytest.approx(100 * expected)
    assert got["best boildown candidate (by the references)"] == pytest.approx(20.0)
    assert got["mean of boildown's candidates"] == pytest.approx(100 * (0.12 + 0.20 + 0.08) / 3)
    assert got["TextRank"] == pytest.approx(1.0)  # TextRank is never one of the candidates picked from
