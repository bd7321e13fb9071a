"""The statistics of ``boildown assess`` (summarize/assess/stats.py), checked against scipy and
against constructed cases whose answer is known. No models."""

import math

import numpy as np
import pytest

from summarize.assess import stats

# a fixed sample of 30 invented per-document scores, kept literally
SAMPLE = [0.61, 0.42, 0.75, 0.38, 0.55, 0.49, 0.71, 0.33, 0.64, 0.58, 0.47, 0.52, 0.69, 0.41, 0.36,
          0.73, 0.5, 0.44, 0.62, 0.57, 0.39, 0.66, 0.53, 0.48, 0.6, 0.35, 0.7, 0.45, 0.59, 0.51]


def test_bootstrap_interval_matches_scipy_percentile_bootstrap_on_a_fixed_sample():
    # Outside reference: scipy.stats.bootstrap(method="percentile") on the same sample. Both
    # resample at random (different generators), so the bounds agree up to Monte Carlo error:
    # with 20,000 resamples each the 2.5% / 97.5% percentiles of the mean move by about 0.003
    # here (tolerance = a tenth of the interval's width, common practice for MC comparisons).
    from scipy.stats import bootstrap

    theirs = bootstrap((np.asarray(SAMPLE),), np.mean, n_resamples=20000, method="percentile",
                       confidence_level=0.95, rng=np.random.default_rng(1)).confidence_interval
    ours = stats.bootstrap_interval(SAMPLE, samples=20000, seed=3)
    tolerance = (theirs.high - theirs.low) / 10
    assert ours.mean == pytest.approx(np.mean(SAMPLE))
    assert ours.low == pytest.approx(theirs.low, abs=tolerance)
    assert ours.high == pytest.approx(theirs.high, abs=tolerance)
    assert ours.low < ours.mean < ours.high


def test_bootstrap_interval_is_reproducible_from_its_seed_and_narrows_with_more_documents():
    one = stats.bootstrap_interval(SAMPLE, seed=5)
    assert one == stats.bootstrap_interval(SAMPLE, seed=5)
    assert one != stats.bootstrap_interval(SAMPLE, seed=6)
    wide = stats.bootstrap_interval(SAMPLE[:8], seed=5)
    assert (one.high - one.low) < (wide.high - wide.low)


def test_identical_systems_give_p_near_one_in_both_tests():
    # Known answer: with no difference on any document, no resample or shuffle can show one.
    values = dict(enumerate(SAMPLE))
    for method in stats.TESTS:
        test = stats.paired_test("a", values, "b", dict(values), method=method, seed=0)
        assert test.p_value == pytest.approx(1.0)
        assert test.difference == 0


@pytest.mark.parametrize("method", stats.TESTS)
def test_a_system_higher_on_every_document_gives_p_below_one_percent(method):
    # Known answer: 30 documents all favour a; a sign-flip null reaches the observed difference
    # with probability 2 / 2**30, and no bootstrap resample can reverse the order.
    a = {i: v + 0.02 for i, v in enumerate(SAMPLE)}
    b = dict(enumerate(SAMPLE))
    test = stats.paired_test("a", a, "b", b, method=method, samples=1000, seed=0)
    assert test.p_value < 0.01
    assert test.p_value == pytest.approx(1 / 1001)
    assert test.difference == pytest.approx(0.02)


def test_a_noisy_tie_is_not_called_significant():
    rng = np.random.default_rng(11)
    a = dict(enumerate(rng.normal(0.5, 0.1, 40)))
    b = {k: v + rng.normal(0, 0.1) for k, v in a.items()}
    for method in stats.TESTS:
        assert stats.paired_test("a", a, "b", b, method=method).p_value > 0.05


def test_paired_tests_use_only_the_documents_both_systems_have():
    a = {"d1": 0.9, "d2": 0.8, "d3": 0.7, "only-a": 0.0}
    b = {"d1": 0.5, "d2": 0.4, "d3": 0.3, "only-b": 1.0}
    test = stats.paired_test("a", a, "b", b)
    assert test.documents == 3
    assert test.difference == pytest.approx(0.4)
    assert stats.paired_test("a", {"d1": 1.0}, "b", {"d1": 0.0}) is None


def test_approximate_randomisation_matches_an_exact_permutation_test_on_a_small_case():
    # Outside reference: scipy.stats.permutation_test with permutation_type="samples" enumerates
    # all 2**8 sign flips exactly; with 20,000 random shuffles ours is within MC error of it.
    from scipy.stats import permutation_test

    a = np.array([0.62, 0.55, 0.71, 0.48, 0.66, 0.59, 0.52, 0.7])
    b = np.array([0.6, 0.57, 0.64, 0.47, 0.6, 0.61, 0.5, 0.63])
    exact = permutation_test((a, b), lambda x, y: np.mean(x - y), permutation_type="samples",
                             alternative="two-sided").pvalue
    ours = stats.approximate_randomisation(a, b, samples=20000, seed=2)
    assert ours == pytest.approx(exact, abs=0.01)


def test_kendall_matches_scipy_and_is_nan_for_a_constant_side():
    from scipy.stats import kendalltau

    x, y = [1, 2, 3, 4, 5], [2, 1, 4, 3, 5]
    assert stats.kendall(x, y) == pytest.approx(kendalltau(x, y).statistic)
    assert stats.kendall(x, y) == pytest.approx(0.6)  # 8 concordant, 2 discordant pairs: (8-2)/10
    assert math.isnan(stats.kendall([1, 1, 1], [1, 2, 3]))


def test_system_and_summary_level_tau_follow_the_summeval_conventions():
    # document, system, human, metric: the metric orders systems exactly as people do on d1 and
    # reverses two of them on d2.
    rows = [("d1", "s1", 1, 0.1), ("d1", "s2", 2, 0.2), ("d1", "s3", 3, 0.3),
            ("d2", "s1", 1, 0.2), ("d2", "s2", 2, 0.1), ("d2", "s3", 3, 0.3)]
    assert stats.summary_level_tau(rows) == pytest.approx((1.0 + 1 / 3) / 2)
    # per-system means: human 1, 2, 3; metric 0.15, 0.15, 0.3 -> tau-b with one tie
    from scipy.stats import kendalltau

    assert stats.system_level_tau(rows) == pytest.approx(kendalltau([1, 2, 3], [0.15, 0.15, 0.3]).statistic)
    assert stats.system_means([("s", 1.0), ("s", 3.0), ("t", None)]) == {"s": 2.0}


@pytest.mark.parametrize("call, message", [
    (lambda: stats.bootstrap_interval([], seed=0), "no values"),
    (lambda: stats.bootstrap_interval([1.0], samples=0), "at least 1"),
    (lambda: stats.bootstrap_interval([1.0], confidence=95), "between 0 and 1"),
    (lambda: stats.paired_test("a", {1: 1.0, 2: 2.0}, "b", {1: 1.0, 2: 2.0}, method="t-test"), "unknown paired test"),
])
def test_bad_settings_get_one_clear_error(call, message):
    with pytest.raises(ValueError, match=message):
        call()
