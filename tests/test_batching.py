"""Length batching: every text once, within the token budget, with bounded padding."""

from hypothesis import given
from hypothesis import strategies as st

from scoring.batching import PADDING_SLACK, length_batches


def test_worked_example():
    # lengths 10, 11, 12 pad to 3 x 12 = 36 for 33 real tokens (ratio 1.09, kept together);
    # adding 40 would pad to 160 for 73 (ratio 2.2), so 40 starts a batch of its own
    assert length_batches([12, 40, 10, 11], budget=4096) == [[2, 3, 0], [1]]


def test_budget_splits_equal_lengths():
    assert length_batches([100] * 5, budget=250) == [[0, 1], [2, 3], [4]]


@given(st.lists(st.integers(1, 300), max_size=60), st.integers(50, 2000))
def test_every_index_once_within_budget_and_slack(lengths, budget):
    batches = length_batches(lengths, budget)
    flat = [i for b in batches for i in b]
    assert sorted(flat) == list(range(len(lengths)))
    for b in batches:
        padded = len(b) * max(lengths[i] for i in b)
        if len(b) > 1:
            assert padded <= budget
            assert padded <= PADDING_SLACK * sum(lengths[i] for i in b) + 1e-9
