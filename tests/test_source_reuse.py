"""Source-side work is computed once per document and reused by every candidate (issue 21,
item 1): a candidate scored by an evaluator that has already scored others of the same source
(key words, blanked plan, filler baseline and fluency's reference perplexity all cached) gets
exactly the scores a fresh evaluator gives it. Reference: the same computation with nothing
cached, in the same process (equality, no tolerance: the reuse must not change any score)."""

from __future__ import annotations

import pytest

from conftest import MEETING

GOOD = "Thornmoor reservoir fell to 48 percent, so the board approved a hosepipe ban for Wenlow Cross and Ashpool; leakage fell to 21 megalitres a day."
OTHER = "The Scarrow works will run a second filter line while the reservoir stays low, the board said."


def _fields(candidate):
    cov, flu = candidate.scores["coverage"], candidate.scores["fluency"]
    return (cov.value, cov.share, cov.logprob_gain, cov.accuracy_gain, cov.keywords,
            flu.value, flu.perplexity, flu.reference_perplexity)


@pytest.mark.models
def test_a_further_candidate_scores_exactly_as_with_nothing_cached():
    from scoring.evaluate import EvalConfig, Evaluator
    from scoring.keywords import _choose_cached

    warm = Evaluator(EvalConfig())
    warm.evaluate([("first", GOOD)], source=MEETING)
    # the source's work is now cached: the plan and baseline in coverage, the reference in fluency
    assert warm.coverage._baselines and warm.fluency._references
    plans = warm.coverage._plan.cache_info()
    [reused] = warm.evaluate([("further", OTHER)], source=MEETING)
    after = warm.coverage._plan.cache_info()
    assert after.hits > plans.hits and after.misses == plans.misses  # the plan was reused, not rebuilt

    _choose_cached.cache_clear()
    [fresh] = Evaluator(EvalConfig()).evaluate([("further", OTHER)], source=MEETING)
    assert _fields(reused) == _fields(fresh)
