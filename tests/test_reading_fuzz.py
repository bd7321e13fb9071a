"""Fuzzed readers, kept fast: every input ends in a Document or a one-line ReadError naming it,
within the batch's per-document limits (summarize/batch/worker.py READ_SECONDS, READ_MEMORY).

The long run (about 1,100 cases, 50 MB single lines) is bench/fuzz_readers.py; these tests use
its case makers at small sizes. Property tests use hypothesis (random bytes, truncations and
bit flips of real files: the demo documents, the reading fixtures, a DOCX made with
python-docx and a hand-written PDF). The linear-time emphasis stripper is checked against the
bounded regular expressions it replaced (Python's ``re.sub`` is the reference).
"""

from __future__ import annotations

import re
import time

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bench import fuzz_readers as fz
from summarize import reading
from summarize.batch import LeadJob
from summarize.batch import worker
from summarize.batch.worker import Task, process_task
from summarize.reading import markdown

SEEDS = fz.seed_files()
FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def assert_ends_well(name: str, data: bytes) -> str:
    kind, detail = fz.outcome_of(name, data)
    assert not kind.startswith("defect"), (kind, detail)
    return kind


def test_the_seed_files_cover_every_format_and_read():
    assert {name[name.rindex("."):] for name, _ in SEEDS} == set(fz.SUFFIXES)
    for name, data in SEEDS:
        assert assert_ends_well(name, data) == "document", name


@FAST
@given(suffix=st.sampled_from(fz.SUFFIXES), data=st.binary(min_size=0, max_size=4096))
def test_random_bytes_end_in_a_document_or_one_line(suffix, data):
    assert_ends_well(f"random{suffix}", data)


@FAST
@given(seed=st.sampled_from(range(len(SEEDS))), cut=st.floats(0, 1))
def test_truncated_real_files_end_in_a_document_or_one_line(seed, cut):
    name, data = SEEDS[seed]
    assert_ends_well(name, data[: int(len(data) * cut)])


@FAST
@given(seed=st.sampled_from(range(len(SEEDS))), flips=st.lists(st.tuples(st.floats(0, 1), st.integers(0, 7)),
                                                                min_size=1, max_size=16))
def test_bit_flipped_real_files_end_in_a_document_or_one_line(seed, flips):
    name, data = SEEDS[seed]
    flipped = bytearray(data)
    for where, bit in flips:
        flipped[min(len(flipped) - 1, int(len(flipped) * where))] ^= 1 << bit
    assert_ends_well(name, bytes(flipped))


@pytest.mark.parametrize("label, name, data", fz.adversarial(big_mb=1), ids=lambda v: v if isinstance(v, str) else "")
def test_adversarial_shapes_end_in_a_document_or_one_line(label, name, data):
    started = time.perf_counter()
    assert_ends_well(name, data)
    assert time.perf_counter() - started < worker.READ_SECONDS


# ------------------------------------------------------------------------------------------ linear time

OLD_EMPHASIS = (  # the bounded regexes markdown.py used before, the reference for the fast scan
    re.compile(r"\*\*(?=\S)(.{1,500}?)(?<=\S)\*\*"),
    re.compile(r"(?<!\w)__(?=\S)(.{1,500}?)(?<=\S)__(?!\w)"),
    re.compile(r"(?<![*\w])\*(?=[^\s*])(.{1,500}?)(?<=[^\s*])\*(?![*\w])"),
    re.compile(r"(?<![_\w])_(?=[^\s_])(.{1,500}?)(?<=[^\s_])_(?![_\w])"),
    re.compile(r"~~(?=\S)(.{1,500}?)(?<=\S)~~"),
)


@settings(max_examples=300, deadline=None)
@given(text=st.text(alphabet="*_~ a.\n\u00e9", max_size=60))
def test_emphasis_scan_matches_the_regular_expressions(text):
    for old, form in zip(OLD_EMPHASIS, markdown._MD_EMPHASIS):
        assert markdown._strip_emphasis(text, *form) == old.sub(r"\1", text)


def test_emphasis_spans_longer_than_the_bound_are_kept_as_written():
    text = "*" + "a" * 501 + "*"
    assert markdown._strip_emphasis(text, *markdown._MD_EMPHASIS[2]) == OLD_EMPHASIS[2].sub(r"\1", text) == text


@pytest.mark.parametrize("unit", ["<!-- ", "*a ", "_a ", "> ", "**a ", "~~a "])
def test_unclosed_markup_reads_in_linear_time(unit):
    """Four times the text must take well under sixteen times as long (quadratic would be 16x,
    linear 4x; the bound is 8x); the largest is 1.6 MB. Ratios within one run, the best of three,
    so the machine's load mostly cancels."""
    def seconds(size):
        data = (unit * (size // len(unit)))[:size].encode()
        best = float("inf")
        for _ in range(3):
            started = time.perf_counter()
            try:
                reading.read(data, name="marks.md")
            except reading.ReadError:
                pass
            best = min(best, time.perf_counter() - started)
        return best

    small, large = seconds(400_000), seconds(1_600_000)
    assert large < 8.0 * small + 0.05, (small, large)


# ------------------------------------------------------------------------------------------ the limits


def hang(text, name):
    while True:
        pass


def hog(text, name):
    return [bytearray(64 * 1024 * 1024) for _ in range(64)]


@pytest.mark.parametrize("reader, limit, message", [
    (hang, "READ_SECONDS", "'stuck.txt' was still being read after 1 s (the per-document limit) and was stopped"),
    (hog, "READ_MEMORY", "'stuck.txt' needed more than 0.25 GiB of memory to read (the per-document limit)"),
], ids=["time", "memory"])
def test_a_hanging_or_greedy_reader_is_stopped_and_recorded(monkeypatch, reader, limit, message):
    import resource

    from summarize.reading import txt

    monkeypatch.setattr(worker, "READ_SECONDS", 1.0 if limit == "READ_SECONDS" else 30.0)
    monkeypatch.setattr(worker, "READ_MEMORY", 256 * 1024**2)
    monkeypatch.setattr(txt, "parse", reader)
    before = resource.getrlimit(resource.RLIMIT_AS)
    outcome = process_task(Task("stuck.txt", b"The ferry left at noon. " * 4, {"words": 5, "ratio": None,
                                                                                "candidates": 1}), LeadJob())
    assert outcome.result is None and outcome.error.startswith(message)
    assert resource.getrlimit(resource.RLIMIT_AS) == before  # the worker gets its limits back
    monkeypatch.undo()
    fine = process_task(Task("fine.txt", b"The ferry left at noon and came back at two. " * 4,
                             {"words": 5, "ratio": None, "candidates": 1}), LeadJob())
    assert fine.error is None and fine.result.summary == "The ferry left at noon"


def test_a_zip_bomb_docx_is_refused_from_its_directory_before_unpacking():
    data = fz.zip_bomb_docx(300)  # 300 MB of XML, about 1 MB packed
    started = time.perf_counter()
    with pytest.raises(reading.ReadError, match=r"^'bomb.docx' would unpack to 300\.\d MB \(limit 256\.0 MB\)"):
        reading.read(data, name="bomb.docx")
    assert time.perf_counter() - started < 5  # nothing inflated (inflating 300 MB takes longer here)
