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
    combined = [combined_score(c["coverage"], c["fluency"]) for c in CANDIDATES[:3]]
    z = lambda xs: [(x - sum(xs) / len(xs)) / (sum((y - sum(xs) / len(xs)) ** 2 for y in xs) / len(xs)) ** 0.5
                    for x in xs]  # population z-scores, written out here
    ordering = [a + 0.25 * c for a, c in zip(z(agreement), z(combined))]
    expected = CANDIDATES[max(range(3), key=ordering.__getitem__)]["rouge2"]
    got = picks(CANDIDATES, rouge)
    assert got["ordering score (agreement, then the combined score)"] == pytest.approx(100 * expected)
    assert got["best boildown candidate (by the references)"] == pytest.approx(20.0)
    assert got["mean of boildown's candidates"] == pytest.approx(100 * (0.12 + 0.20 + 0.08) / 3)
    assert got["TextRank"] == pytest.approx(1.0)  # TextRank is never one of the candidates picked from


def test_js_divergence_matches_scipy_and_its_bounds():
    """Jensen-Shannon divergence against scipy.spatial.distance.jensenshannon (which returns its
    square root, natural log by default); 0 for equal and ln 2 for disjoint distributions (Lin 1991)."""
    import math
    from collections import Counter

    from scipy.spatial.distance import jensenshannon

    from bench.ranking_measures import js_divergence

    p, q = Counter({"ferri": 3, "flood": 2, "council": 1}), Counter({"flood": 1, "pear": 4, "council": 2})
    vocab = sorted(set(p) | set(q))
    expected = jensenshannon([p[t] for t in vocab], [q[t] for t in vocab]) ** 2
    assert js_divergence(p, q) == pytest.approx(expected, rel=1e-9)
    assert js_divergence(p, Counter({t: 2 * n for t, n in p.items()})) == pytest.approx(0.0, abs=1e-12)
    assert js_divergence(p, Counter({"orchard": 1})) == pytest.approx(math.log(2))


def test_source_orderings_prefer_the_candidate_closest_to_the_source(rouge):
    source = " ".join(TEXTS[:3]) + " The ferry landing will be rebuilt before the autumn flood season."
    scores = story_scores(CANDIDATES, rouge, source)
    closeness = scores["source divergence alone (-JS)"]
    assert closeness[3] == min(closeness)  # the pear sentence shares no term with the ferry story
    assert "source divergence alone (-JS)" not in story_scores(CANDIDATES, rouge)
    assert scores["words per sentence alone"][1] == 17.0  # one sentence of 17 words
    held = scores["concept score alone"]
    # the pear sentence repeats only "the valley" (in 2 source sentences); the ferry ones far more
    assert held[3] == 2.0 and min(held[:3]) > 10
