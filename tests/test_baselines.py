"""Extractive baselines (bench/baselines.py) and the evaluation-data loaders (bench/data.py).

Fast tier: no models. The data tests read ../shared/data and skip cleanly when it is absent.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bench import data
from bench.baselines import BASELINES, lead, lexrank, oracle, pagerank, textrank, textrank_scores
from scoring.text import count_words, split_sentences

TOL = 1e-9  # power iteration runs to an L1 change below 1e-10

# --- LEAD --------------------------------------------------------------------------------------

LEAD_TEXT = "First  sentence here.\nSecond one,\tspread over\n\nlines. Third sentence is the last one."


@pytest.mark.parametrize("n", [0, 1, 2, 3, 4, 7, 12, 13, 50])
def test_lead_is_exactly_the_first_n_words(n):
    out = lead(LEAD_TEXT, n)
    assert out.split() == LEAD_TEXT.split()[:n]


def test_lead_puts_one_sentence_per_line():
    assert lead(LEAD_TEXT, 6) == "First sentence here.\nSecond one, spread"


# --- budgets, on generated texts -------------------------------------------------------------

_WORDS = st.sampled_from("amber basin cedar delta ember fjord grove heron inlet juniper kestrel lagoon".split())
_SENTENCE = st.lists(_WORDS, min_size=1, max_size=14).map(lambda ws: " ".join(ws).capitalize() + ".")
_TEXT = st.lists(_SENTENCE, min_size=0, max_size=12).map(" ".join)


@settings(max_examples=60, deadline=None)
@given(text=_TEXT, budget=st.integers(min_value=0, max_value=80), reference=_TEXT)
def test_no_baseline_exceeds_the_budget(text, budget, reference):
    sentences = set(split_sentences(text))
    outputs = {name: f(text, budget) for name, f in BASELINES.items()}
    outputs["oracle"] = oracle(text, budget, [reference])
    for name, out in outputs.items():
        assert count_words(out) <= budget, name
        if name != "lead":  # the extractive selectors output whole sentences of the text
            assert all(line in sentences for line in out.splitlines() if line), name


@pytest.mark.parametrize("f", [lead, textrank, lexrank])
def test_negative_budget_is_refused_with_the_value(f):
    with pytest.raises(ValueError, match="-3"):
        f("Some text here.", -3)


@pytest.mark.parametrize("f", [lead, textrank, lexrank])
def test_empty_text_gives_an_empty_summary(f):
    assert f("", 10) == ""
    assert f("   \n ", 10) == ""


# --- TextRank -----------------------------------------------------------------------------------

# Invented text: sentence 3 shares a word pair with every other sentence, which share nothing
# with each other, so it is the hub of the similarity graph.
HUB_TEXT = [
    "The harbour lantern burned through the long winter fog.",
    "Every morning the orchard ferry carried apples across the river.",
    "Bakery ovens warmed the narrow lanes before dawn.",
    "Harbour lantern, orchard ferry, bakery ovens, quarry bells, weaving looms and hill goats made up the village.",
    "Quarry bells rang whenever the stonecutters finished a block.",
    "Weaving looms clattered in the upper rooms of the mill.",
    "Hill goats wandered down to graze beside the chapel.",
]
HUB = 3


def test_textrank_ranks_the_hub_sentence_first():
    assert split_sentences(" ".join(HUB_TEXT)) == HUB_TEXT
    assert int(np.argmax(textrank_scores(HUB_TEXT))) == HUB


@pytest.mark.parametrize("f", [textrank, lexrank])
def test_graph_baselines_pick_the_hub_when_only_it_fits(f):
    assert f(" ".join(HUB_TEXT), count_words(HUB_TEXT[HUB])) == HUB_TEXT[HUB]


def test_textrank_fills_the_rest_of_the_budget_and_keeps_document_order():
    text = " ".join(HUB_TEXT)
    budget = count_words(HUB_TEXT[HUB]) + 9
    lines = textrank(text, budget).splitlines()
    assert HUB_TEXT[HUB] in lines and len(lines) == 2  # the hub, then one more that still fits
    assert lines == sorted(lines, key=HUB_TEXT.index)


# --- PageRank -----------------------------------------------------------------------------------

# Expected vectors solve the PageRank definition (Brin & Page 1998),
# p_i = (1 - d)/n + d * sum_j p_j * w_ji / sum_k w_jk, by hand with d = 0.85:
# - a symmetric triangle: every vertex looks the same, so p = (1/3, 1/3, 1/3);
# - the path A - B - C: p_A = 0.05 + 0.85 p_B / 2 and p_B = 0.05 + 0.85 (p_A + p_C), with
#   p_A = p_C and 2 p_A + p_B = 1, give p_A = 0.07125 / 0.2775 = 19/74 and p_B = 36/74;
# - two vertices, A -> B only (B has no out-edges, so it jumps uniformly): p_A = 0.075 + 0.425 p_B
#   with p_A + p_B = 1 gives p_A = 0.5 / 1.425 = 20/57.
PAGERANK_CASES = [
    ([[0, 1, 1], [1, 0, 1], [1, 1, 0]], [1 / 3, 1 / 3, 1 / 3]),
    ([[0, 2, 2], [2, 0, 2], [2, 2, 0]], [1 / 3, 1 / 3, 1 / 3]),  # weights scale out
    ([[0, 1, 0], [1, 0, 1], [0, 1, 0]], [19 / 74, 36 / 74, 19 / 74]),
    ([[0, 1], [0, 0]], [20 / 57, 37 / 57]),
]


@pytest.mark.parametrize(("weights", "expected"), PAGERANK_CASES)
def test_pagerank_matches_hand_computed_stationary_vectors(weights, expected):
    np.testing.assert_allclose(pagerank(weights, damping=0.85), expected, atol=TOL)


def test_pagerank_refuses_a_non_square_matrix():
    with pytest.raises(ValueError, match="square"):
        pagerank([[0, 1, 1], [1, 0, 1]])


# --- oracle -------------------------------------------------------------------------------------


def test_oracle_picks_the_sentences_the_reference_repeats_and_stops():
    text = " ".join(HUB_TEXT)
    reference = HUB_TEXT[0] + " " + HUB_TEXT[5]
    out = oracle(text, 200, [reference])
    assert out.splitlines() == [HUB_TEXT[0], HUB_TEXT[5]]  # adding anything else lowers F1


# --- Gutenberg notes ----------------------------------------------------------------------------

# Invented story wrapped in notes shaped like those in the SQuALITY files.
NOTED_STORY = """

Produced by Ann Example, Bo Sample and the Online
Distributed Proofreading Team at http://www.example.net
THE QUIET ORCHARD
By NOBODY IN PARTICULAR
 \n  [Transcriber's Note: This etext was produced from
   \n  Imaginary Stories Spring 1950.
   \n  Extensive research did not uncover any evidence that
   \n  the U.S. copyright on this publication was renewed.]
The orchard was quiet that spring.
 \n  Nobody knew why the birds had left.
[12]
They came back in autumn.
End of Project Gutenberg's The Quiet Orchard, by Nobody In Particular

*** END OF THE PROJECT GUTENBERG EBOOK THE QUIET ORCHARD ***
Licence text follows here.
"""


def test_strip_gutenberg_keeps_the_story_and_drops_the_notes():
    assert data.strip_gutenberg(NOTED_STORY) == (
        "THE QUIET ORCHARD\nBy NOBODY IN PARTICULAR\n\nThe orchard was quiet that spring.\n\n"
        "Nobody knew why the birds had left.\n\nThey came back in autumn."
    )


def test_strip_gutenberg_keeps_a_story_line_that_begins_produced_by():
    story = "The engine hummed.\nProduced by hand, the gears were rough.\nIt ran anyway."
    assert data.strip_gutenberg(story) == story


# --- loaders on the real data ---------------------------------------------------------------------


def _load(loader, *args):
    try:
        return loader(*args)
    except data.DataMissing as exc:
        pytest.skip(str(exc))


def test_loaders_raise_data_missing_when_the_folder_is_absent(monkeypatch, tmp_path):
    monkeypatch.setattr(data, "SQUALITY", tmp_path / "absent")
    monkeypatch.setattr(data, "LONGSCIVERIFY", tmp_path / "absent")
    with pytest.raises(data.DataMissing, match="absent"):
        data.squality("test")
    with pytest.raises(data.DataMissing, match="absent"):
        data.longsciverify()


def test_squality_rejects_an_unknown_split():
    with pytest.raises(ValueError, match="'valid'"):
        data.squality("valid")


# Split sizes from ../shared/data/README.md (train 50 / dev 25 / test 52).
@pytest.mark.parametrize(("split", "size"), [("train", 50), ("dev", 25), ("test", 52)])
def test_squality_loads_stories_with_four_references_and_no_production_notes(split, size):
    examples = _load(data.squality, split)
    assert len(examples) == size
    for ex in examples:
        assert len(ex.references) == 4
        mean_words = sum(count_words(r) for r in ex.references) / 4
        assert ex.budget_words == round(mean_words)
        for note in ("Project Gutenberg", "Produced by", "Transcriber", "etext was produced"):
            assert note not in ex.source_text, (ex.id, note)
        assert count_words(ex.source_text) > 2000


def test_squality_test_budget_matches_the_readme():
    examples = _load(data.squality, "test")
    # README: "SQuALITY test (52, N about 434)"
    assert sum(ex.budget_words for ex in examples) / len(examples) == pytest.approx(434, abs=1)


def test_longsciverify_loads_30_papers_with_their_abstracts():
    examples = _load(data.longsciverify)
    assert len(examples) == 30
    assert [ex.meta["domain"] for ex in examples] == ["arxiv"] * 15 + ["pubmed"] * 15
    for ex in examples:
        (abstract,) = ex.references
        assert ex.budget_words == count_words(abstract)
        assert "<S>" not in abstract and "</S>" not in abstract and "<S>" not in ex.source_text
        assert ex.meta["sections"] and all(isinstance(name, str) for name, _ in ex.meta["sections"])
        assert ex.source_text.split() == " ".join(ex.meta["sentences"]).split()
    # README: body 6,236 (arXiv) / 3,777 (PubMed) words, abstracts 166 / 224 words on average.
    arxiv, pubmed = examples[:15], examples[15:]
    assert sum(count_words(e.source_text) for e in arxiv) / 15 == pytest.approx(6236, abs=1)
    assert sum(count_words(e.source_text) for e in pubmed) / 15 == pytest.approx(3777, abs=1)
    assert sum(e.budget_words for e in arxiv) / 15 == pytest.approx(166, abs=1)
    assert sum(e.budget_words for e in pubmed) / 15 == pytest.approx(224, abs=1)


def test_longsciverify_sentences_survive_splitting():
    # The lowercased release text only splits where the release's sentence breaks are kept.
    ex = _load(data.longsciverify)[0]
    assert len(split_sentences(ex.source_text)) >= len(ex.meta["sentences"])


# --- ROUGE table ----------------------------------------------------------------------------------


def test_rouge_table_scores_a_copy_of_the_reference_100():
    from bench.reproduce_baselines import rouge_table

    ex = data.Example("x", "unused", ["The orchard was quiet. Birds came back."], 7)
    table = rouge_table({"copy": ["The orchard was quiet.\nBirds came back."], "none": [""]}, [ex])
    assert table["copy"]["rouge1"] == table["copy"]["rouge2"] == table["copy"]["rougeLsum"] == 100
    assert table["none"]["rouge1"] == 0
    with pytest.raises(ValueError, match="2 summaries for 1"):
        rouge_table({"bad": ["a", "b"]}, [ex])
