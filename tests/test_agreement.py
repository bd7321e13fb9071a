"""Agreement: each candidate's mean ROUGE-2 F1 against the other candidates (scoring/agreement.py),
and how the combined score takes it in (scoring/combine.py)."""

from __future__ import annotations

import pytest

from scoring.agreement import AgreementConfig, AgreementScorer
from scoring.combine import CombineConfig, combined_score

TOL = 1e-6
# The worked examples of Lin (2004) as CHECKS.md lists them: against "police killed the gunman",
# "police kill the gunman" has ROUGE-2 F1 1.0 with stemming on, and "the gunman police killed"
# 0.66667 (example S4).
A = "police killed the gunman"
B = "police kill the gunman"
C = "the gunman police killed"


def test_pairwise_values_are_rouge_scores():
    # With stemming on: A~B ROUGE-2 F1 = 1.0 (CHECKS.md, both reference implementations);
    # A~C: bigrams of A {police kill, kill the, the gunman}, of C {the gunman, gunman police,
    # police kill}: 2 of 3 shared -> F1 2/3 (the 0.66667 of CHECKS.md's Lin (2004) example S4);
    # B~C the same 2/3 since "kill" and "killed" stem alike.
    scores = AgreementScorer().score_many([A, B, C])
    assert scores[0].value == pytest.approx((1.0 + 2 / 3) / 2, abs=TOL)
    assert scores[1].value == pytest.approx((1.0 + 2 / 3) / 2, abs=TOL)
    assert scores[2].value == pytest.approx(2 / 3, abs=TOL)
    assert scores[0].closest == 1 and scores[2].closest == 0  # first on ties
    assert all(s.others == 2 for s in scores)


def test_matches_rouge_score_directly():
    # rouge-score itself, one pair at a time: agreement is the mean of these F1 values.
    from rouge_score.rouge_scorer import RougeScorer

    texts = ["The board approved a hosepipe ban for two towns after the dry spring.",
             "After the driest spring in forty years the board approved a hosepipe ban.",
             "Leakage fell to 21 megalitres a day after twelve kilometres of mains were renewed."]
    direct = RougeScorer(["rouge2"], use_stemmer=True)
    expected = [sum(direct.score(texts[j], texts[i])["rouge2"].fmeasure for j in range(3) if j != i) / 2 for i in range(3)]
    got = [s.value for s in AgreementScorer().score_many(texts)]
    assert got == pytest.approx(expected, abs=TOL)
    # the outlier (about leakage, not the ban) agrees least
    assert got[2] < min(got[:2])


def test_score_one_against_given_others():
    result = AgreementScorer().score(A, reference=[C, B])
    assert result.value == pytest.approx((2 / 3 + 1.0) / 2, abs=TOL)
    assert result.closest == 1
    with pytest.raises(ValueError, match="other candidates"):
        AgreementScorer().score(A, reference=[])


def test_too_few_candidates_gives_none_and_the_combined_score_never_reads_agreement():
    assert AgreementScorer().score_many([A, B]) == [None, None]
    # the combined score is coverage and fluency alone, 3:1, whatever the pool
    assert combined_score(0.4, 0.8) == pytest.approx(0.75 * 0.4 + 0.25 * 0.8, abs=TOL)
    with pytest.raises(ValueError, match="ordering score"):
        CombineConfig((("agreement", 0.5), ("coverage", 0.5)))


def test_empty_candidate_agrees_with_nothing():
    scores = AgreementScorer().score_many(["", A, B])
    assert scores[0].value == 0.0
    assert scores[1].value == pytest.approx(0.5, abs=TOL)  # 0 with the empty one, 1.0 with B


def test_describe_and_signature():
    c = CombineConfig()
    assert c.describe().startswith("0.75 coverage + 0.25 fluency (")
    assert "agreement" not in c.describe()
    from scoring.base import package_version, project_version

    assert str(AgreementScorer().signature()) == (
        f"agreement(measure=rouge2, stemmed=yes, gain=mean-f1) on boildown {project_version()}, "
        f"rouge-score {package_version('rouge-score')}, nltk {package_version('nltk')}")


@pytest.mark.parametrize("bad", [{"measure": "rougeL"}, {"measure": "bleu"}, {"min_candidates": 2}])
def test_config_is_validated(bad):
    with pytest.raises(ValueError):
        AgreementConfig(**bad)
