"""Coverage by masked key-word recovery: mechanics, decided behaviours, and checks against
external data (SQuALITY dev human summaries)."""

from __future__ import annotations

import pytest

from scoring.coverage import RECOVERED_GAIN, RECOVERED_SHARE, CoverageConfig, CoverageScorer, KeywordEvidence, _dense_choice, _merge_windows
from conftest import MEETING, shared_data

SOURCE = MEETING
GOOD = "Thornmoor reservoir fell to 48 percent, so the board approved a hosepipe ban for Wenlow Cross and Ashpool; leakage fell to 21 megalitres a day."
UNRELATED = "A village fete raised money for the lifeboat station; the cake stall and the raffle did best."


def test_merge_windows():
    assert _merge_windows([5, 8, 30], 4, 40) == [(2, 9), (27, 31)]
    assert _merge_windows([], 4, 40) == []


def test_ranges_are_rows_of_their_own_by_default_so_any_subset_can_be_read():
    from scoring.coverage import _pack

    ids = list(range(100))
    ranges = [(2, 9), (27, 31), (50, 60)]
    positions = [8, 30, 55, 59]
    rows = _pack(ranges, positions, ids, [-1], 0)
    assert [r[0] for r in rows] == [tuple(range(2, 9)), tuple(range(27, 31)), tuple(range(50, 60))]
    assert [r[1] for r in rows] == [((6, 0),), ((3, 1),), ((5, 2), (9, 3))]
    packed = _pack(ranges, positions, ids, [-1], 128)  # the rule before: one row, a separator between
    assert len(packed) == 1 and packed[0][0][7] == -1


@pytest.mark.parametrize("changes, carried_only", [({}, True), ({"read": "all"}, False), ({"credit": "all"}, False),
                                                   ({"row_tokens": 128}, False)])
def test_only_the_carried_words_ranges_are_read_where_that_gives_the_same_value(changes, carried_only):
    assert CoverageConfig(**changes).reads_carried_only is carried_only


def test_dense_choice_worked_example():
    # Worked by hand, windows of 100 characters before each occurrence. Key word 0 occurs at
    # 100 and 1000 (middle = the first, index 0); key word 1 only at 1050; key word 2 at 3000 and
    # 5000. Key word 0 moves to 1000, whose window (900-1000) shares 50 characters with key
    # word 1's (950-1050); key word 2's windows touch nobody's, so it keeps its middle one.
    assert _dense_choice([[100, 1000], [1050], [3000, 5000]], 100) == {0: 1, 1: 0, 2: 0}
    # Nothing overlaps anywhere: the middle occurrences stay (as in mode "middle").
    assert _dense_choice([[0, 1000, 2000], [5000, 6000, 7000, 8000]], 10) == {0: 1, 1: 1}


@pytest.mark.parametrize("bad", [{"keywords": 0}, {"headline": "f1"}, {"credit": "some"}, {"mode": "all"}, {"dtype": "int8"}, {"window": 0},
                                 {"read": "some"}, {"row_tokens": -1}])
def test_config_is_validated(bad):
    with pytest.raises(ValueError):
        CoverageConfig(**bad)


@pytest.mark.parametrize(
    "p0, p1, in_summary, status",
    [
        (0.30, 0.90, "", "known"),  # guessable without the summary
        (0.30, 0.90, "hatch", "known"),  # ...even when the summary names it: it tells little
        (0.001, 0.20, "hatch", "recovered"),  # in the summary, not expected from the source alone
        (1e-9, 1e-9, "hatches", "recovered"),  # in the summary: never "missed", whatever p1 is
        (0.001, 0.20, "", "missed"),  # a big gain, but the summary does not contain the word
        (0.01, 0.04, "", "missed"),
    ],
)
def test_keyword_states(p0, p1, in_summary, status):
    assert KeywordEvidence("hatch", 1, p0, p1, 0, 0, in_summary).status == status


@pytest.mark.parametrize(
    "p0, p1, status",
    [
        (0.001, 0.20, "recovered"),  # gain 5.3 nats of a surprisal of 6.9 (77%)
        (0.01, 0.04, "missed"),  # gain 1.4 nats: under the 2-nat floor
        (1e-9, 1e-6, "missed"),  # 6.9 of 20.7 nats (33%): under 40%
    ],
)
def test_probability_states_kept_for_the_side_by_side(p0, p1, status):
    # the rule before containment: the summary removes >= 40% of the surprisal and >= 2 nats
    assert (RECOVERED_SHARE, RECOVERED_GAIN) == (0.4, 2.0)
    assert KeywordEvidence("w", 1, p0, p1, 0, 0).probability_status == status


def test_every_state_has_a_plain_words_meaning_without_fills_in():
    from scoring.coverage import STATE_MEANINGS
    from summarize.compare import state_text

    assert set(STATE_MEANINGS) == {"recovered", "known", "missed"}
    for state, meaning in STATE_MEANINGS.items():
        assert "fills in" not in meaning and "probabilit" in meaning
        assert state_text(state).meaning == meaning  # the legend reads these


def test_empty_source_is_refused():
    with pytest.raises(ValueError, match="source is empty"):
        CoverageScorer().score("anything", source="   ")


@pytest.mark.models
def test_empty_summary_scores_zero_and_misses_everything():
    result = CoverageScorer().score("", source=SOURCE)
    assert result.value == 0.0 and result.share == 0.0 and result.logprob_gain == 0.0
    assert result.recovered == ()
    assert result.n_blanks > 5


@pytest.mark.models
def test_order_copy_good_unrelated():
    scorer = CoverageScorer()
    copy, good, unrelated = scorer.score_many([SOURCE, GOOD, UNRELATED], source=SOURCE)
    assert copy.share > good.share > unrelated.share
    assert abs(unrelated.share) < 0.1
    assert {"hosepipe", "ashpool"} <= set(good.recovered)
    assert "korrow" in good.missed
    # a key word the summary contains is never "missed"; one it lacks is never "recovered"
    for k in good.keywords:
        assert (k.status == "missed") <= (not k.in_summary)
        assert (k.status == "recovered") <= bool(k.in_summary)


@pytest.mark.models
def test_signature_text():
    from scoring.base import package_version
    from scoring.models import fast_dtype, short_checksum

    sig = str(CoverageScorer().signature())
    assert sig == (
        f"coverage(model=smollm2-135m@{short_checksum('causal')}, dtype={fast_dtype()}, keywords=40, key_rule=3, "
        f"occurrence=middle, window=32, blanks=240, per_keyword=6, headline=logprob, credit=contained, lowercase=yes, "
        f"rows=alone) "
        f"on boildown {package_version('boildown')}, torch {package_version('torch')}, "
        f"transformers {package_version('transformers')}, spacy {package_version('spacy')}"
    )


@pytest.mark.models
def test_baseline_is_computed_once_per_document():
    scorer = CoverageScorer()
    calls = []
    real = scorer._runs  # one pass over the windows per prefix it is given
    scorer._runs = lambda prefixes, plan, reads=None: calls.extend(len(p) for p in prefixes) or real(prefixes, plan, reads)
    scorer.score_many([GOOD, GOOD + " " + GOOD[:40], UNRELATED], source=SOURCE)
    # three summary passes, and one filler pass per distinct filler length (32-token buckets)
    assert len(calls) <= 3 + 2
    first = len(calls)
    scorer.score_many([GOOD + " " + UNRELATED], source=SOURCE)
    assert len(calls) - first in (1, 2)  # its own pass, and a baseline only if its bucket is new
    scorer.score(GOOD, source=SOURCE)
    assert len(calls) - first in (2, 3)  # the baseline of GOOD's bucket is cached


@pytest.mark.models
def test_summaries_scored_together_score_as_they_do_alone():
    # the prefix passes of several summaries run as one batch; each score must not depend on
    # which other summaries share that batch (float tolerance: batched matrix products may
    # round differently)
    texts = [GOOD, UNRELATED, GOOD[:60], ""]
    together = CoverageScorer().score_many(texts, source=SOURCE)
    for text, joint in zip(texts, together):
        alone = CoverageScorer().score(text, source=SOURCE)
        assert joint.value == pytest.approx(alone.value, abs=1e-3)
        assert joint.share == pytest.approx(alone.share, abs=1e-3)


@pytest.mark.models
def test_grouped_query_attention_scores_as_the_copying_path(monkeypatch):
    # load_causal lets attention group SmolLM2's query heads over the shared key/value heads
    # (TRANSFORMERS_SDPA_FORCE_GQA=1) rather than copying keys and values per head; the two
    # paths must give the same coverage (the switch is read at every attention call).
    import os

    from scoring.models import load_causal

    load_causal()
    assert os.environ.get("TRANSFORMERS_SDPA_FORCE_GQA") == "1"
    texts = [GOOD, UNRELATED]
    grouped = CoverageScorer().score_many(texts, source=SOURCE)
    monkeypatch.setenv("TRANSFORMERS_SDPA_FORCE_GQA", "0")
    copied = CoverageScorer().score_many(texts, source=SOURCE)
    for a, b in zip(grouped, copied):
        assert a.value == pytest.approx(b.value, abs=1e-4)
        assert [k.p_with is None for k in a.keywords] == [k.p_with is None for k in b.keywords]
        assert [k.p_with for k in a.keywords if k.p_with is not None] == pytest.approx(
            [k.p_with for k in b.keywords if k.p_with is not None], rel=1e-3)


@pytest.mark.models
def test_reading_only_the_carried_words_ranges_gives_the_same_scores_as_reading_all():
    # read="carried" skips the ranges of key words the summary does not carry (they earn no
    # credit); every reported number must equal read="all"'s, only the left-out words'
    # probabilities with the summary go unmeasured (None).
    texts = [GOOD, UNRELATED, GOOD.split(";")[0]]
    carried = CoverageScorer().score_many(texts, source=SOURCE)
    every = CoverageScorer(CoverageConfig(read="all")).score_many(texts, source=SOURCE)
    for a, b in zip(carried, every):
        for name in ("value", "share", "logprob_gain", "accuracy_gain", "prob_gain", "accuracy_with", "n_blanks"):
            assert getattr(a, name) == pytest.approx(getattr(b, name), abs=1e-5), name  # batches of other shapes round differently in the 6th decimal
        assert a.missed == b.missed and a.recovered == b.recovered
        for x, y in zip(a.keywords, b.keywords):
            assert y.p_with is not None
            if x.in_summary:
                assert x.p_with == pytest.approx(y.p_with, rel=1e-5)
    assert any(k.p_with is None for k in carried[1].keywords)  # the unrelated text carries little


@pytest.mark.models
def test_squality_dev_own_summary_beats_another_storys():
    # External data: SQuALITY v1.3 dev (25 public-domain stories, human plot summaries, CC BY 4.0).
    # The check: for at least 23 of 25 stories, a human summary of that story covers it
    # better than a human summary of a different story.
    import sys
    from pathlib import Path

    shared_data("squality", "dev.jsonl")
    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
    from bench.data import squality

    stories = squality("dev")
    assert len(stories) == 25
    scorer = CoverageScorer()
    wins = 0
    for i, story in enumerate(stories):
        other = stories[(i + 1) % len(stories)]
        own, foreign = scorer.score_many([story.references[0], other.references[0]], source=story.source_text)
        wins += own.share > foreign.share
    assert wins >= 23, f"own summary won on {wins}/25 stories"
