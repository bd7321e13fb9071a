"""Key-word choice: content a reader would name (no units, no bare numbers, no near-ubiquitous
words, names capped, senses kept apart) and containment of a key word in a summary.

External checks: the Porter stems are those of NLTK's implementation of Porter (1980); the
units list follows SI and common UK usage (written for this project). The sources are invented
text in the demo scenario (a fictional water board)."""

from __future__ import annotations

import pytest

from scoring.keywords import Keyword, KeywordConfig, choose_keywords, contains, summary_words
from conftest import DEMO

READINGS = (
    "Nitrate at the Midlow boreholes rose to 41 mg/l in August 2024, and lead at two Calderby taps "
    "reached 12 µg/l. The Scarrow WTW produced 3.2 ML/d less than planned; samplers took 250 ml "
    "bottles to the laboratory. Turbidity at Scarrow peaked at 4 NTU in 2024. Manganese deposits "
    "discoloured water in Scarrow, and geosmin gave an earthy taste in Wenlow Cross."
)


def lemmas(text: str, **config) -> set[str]:
    return {k.lemma for k in choose_keywords(text, KeywordConfig(**config)).keywords}


@pytest.mark.models  # spaCy's tagger
def test_units_and_bare_numbers_are_never_key_words():
    chosen = lemmas(READINGS)
    for unit in ("mg", "l", "µg", "ML", "ml", "NTU", "ntu", "d"):
        assert unit not in chosen, unit
    assert not any(ch.isdigit() for word in chosen for ch in word)  # 2024, 41, 3.2, 250
    # the findings stay: the substances and where they were found
    assert {"nitrate", "manganese", "geosmin", "turbidity"} <= chosen


@pytest.mark.models
def test_acronyms_keep_their_sense_apart_from_lower_case_words():
    text = ("The US office of the board met us at the works. The US team said the works told us "
            "little. Filters at the works were cleaned by the US contractor, who called us twice.")
    chosen = lemmas(text, name_share=1.0)
    assert "us" not in chosen  # the pronoun is not a key word ...
    assert "US" in chosen  # ... and the acronym is not merged into it by lower-casing


@pytest.mark.models
def test_near_ubiquitous_words_are_dropped_from_a_long_document():
    # the demo water-quality report (invented): "water" occurs in nearly every part of it
    text = (DEMO / "annual_water_quality_report.txt").read_text()
    assert text.lower().count("water") > 100
    chosen = lemmas(text)
    assert "water" not in chosen and "sample" not in chosen
    assert {"manganese", "nitrate", "geosmin", "lead"} <= chosen


@pytest.mark.models
def test_names_take_at_most_their_share_of_the_key_words():
    text = (DEMO / "annual_water_quality_report.txt").read_text()
    capped = choose_keywords(text, KeywordConfig(count=40, name_share=0.25))
    free = choose_keywords(text, KeywordConfig(count=40, name_share=1.0))
    places = {"calderby", "scarrow", "midlow", "ashpool", "thornmoor", "wenlow", "greyling", "hollins",
              "skell", "harrowmere", "WTW", "DWSO"}
    assert len(places & {k.lemma for k in free.keywords}) > 10  # uncapped, names crowd the list
    assert len(places & {k.lemma for k in capped.keywords}) <= 10  # floor(0.25 x 40)


def kw(lemma: str, *forms: str) -> tuple[Keyword, str]:
    source = " ".join(forms) if forms else lemma
    spans, at = [], 0
    for form in forms or (lemma,):
        spans.append((at, at + len(form)))
        at += len(form) + 1
    return Keyword(lemma, 1.0, tuple(spans)), source


@pytest.mark.parametrize(
    "lemma, forms, summary, found",
    [
        ("hatch", ("hatches",), "A roof hatch let rain in.", "hatch"),  # the lemma itself
        ("discolour", ("discoloured",), "Discolouration complaints rose.", "Discolouration"),  # NLTK Porter: both "discolour"
        ("discolour", ("discoloured",), "The water was discoloured.", "discoloured"),  # a source form
        ("replace", ("replaced",), "Crews are replacing pipes.", "replacing"),  # NLTK Porter: both "replac"
        ("hosepipe", ("hosepipe",), "A ban on garden hoses.", ""),  # no stem in common
        ("WTW", ("WTW",), "The Scarrow WTW was upgraded.", "WTW"),
        ("WTW", ("WTW",), "They would wtw.", ""),  # an acronym only as written
        ("coli", ("coli",), "E. coli was found once.", "coli"),
        ("board", ("Board's",), "The board's report.", "board"),  # possessive stripped
    ],
)
def test_contains_reads_forms_lemma_and_porter_stem(lemma, forms, summary, found):
    keyword, source = kw(lemma, *forms)
    assert contains(keyword, source, summary_words(summary)) == found


def test_an_empty_summary_contains_nothing():
    keyword, source = kw("hatch", "hatches")
    assert contains(keyword, source, summary_words("")) == ""


def test_name_share_is_validated():
    with pytest.raises(ValueError, match="name_share"):
        KeywordConfig(name_share=1.5)


# Pairs written for this project on the demo documents (bench/data/keyword_pairs.jsonl, invented
# text): a findings-carrying abstract against one that only names places, people and plant.
PAIRS = ["drought-findings", "drought-lessons", "incident-findings"]


def _pair_scores(name):
    from bench.keyword_pairs import load_pairs
    from scoring.coverage import CoverageScorer
    from summarize.reading import read

    pair = next(p for p in load_pairs() if p["name"] == name)
    source = read(DEMO / pair["document"]).text
    return pair, CoverageScorer().score_many([pair["good"], pair["weak"]], source=source)


@pytest.mark.models
@pytest.mark.parametrize("name", PAIRS)
def test_a_key_word_the_summary_contains_is_never_reported_missed(name):
    pair, (good, weak) = _pair_scores(name)
    for result, text in ((good, pair["good"]), (weak, pair["weak"])):
        assert any(k.in_summary for k in result.keywords)
        for k in result.keywords:
            assert not (k.in_summary and k.status == "missed")
            assert k.status != "recovered" or k.in_summary  # and none is recovered that it lacks
            assert k.in_summary == "" or k.in_summary.lower() in text.lower()


# The target is a margin of at least 10 points of coverage on every pair; it is not reached
# (bench/keyword_pairs.py: 0 of 11; docs/RESULTS.md). Strict: when a change reaches it, this test
# fails as XPASS and must become a plain test.
@pytest.mark.models
@pytest.mark.xfail(strict=True, reason="issue 25 target not reached: rare names dominate the log-probability gain")
@pytest.mark.parametrize("name", PAIRS)
def test_findings_abstract_out_covers_a_names_only_abstract_by_ten_points(name):
    _, (good, weak) = _pair_scores(name)
    assert 100 * (good.share - weak.share) >= 10.0
