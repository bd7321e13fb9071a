"""The comparison of candidate summaries: alignment, the Comparison record, its text, JSON and
HTML renderings, and the ``compare`` command.

Fast tier: scores are hand-made (real result dataclasses with invented values and a fake
evaluator), so the renderers are tested without models. One end-to-end test, marked
``models``, runs the real scorers through the command line on a small invented source.
The browser checks of the page are in test_report_html.py.
"""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest
from click.testing import CliRunner

from scoring.base import Signature
from scoring.combine import Candidate, combined_score, rank
from scoring.coverage import CoverageConfig, CoverageScore, KeywordEvidence
from scoring.evaluate import EvalConfig
from scoring.fluency import FluencyScore, SentenceFluency
from scoring.keywords import Keyword, KeywordConfig, KeywordSet, text_hash
from scoring.reference import BertScore, RougeScore
from summarize import align as aligning
from summarize import compare as comparing
from summarize import compare_text, reading, report_html
from summarize.cli import main
from summarize.reading import parse_text, read_document
from scoring.text import count_words, split_sentences

DATA = Path(__file__).resolve().parent / "data" / "compare"
SOURCE = DATA / "source.md"  # invented (Harrowmere Valley Water Board scenario); 175 words once parsed
GOOD = DATA / "good.txt"
WEAK = DATA / "weak.txt"
TOL = 1e-6  # tf-idf cosines: float64 arithmetic against a hand computation to 6 decimals

# Strings that would run script if a page pasted them in unescaped. Each also tries to mark the
# DOM, so a browser's dumped DOM shows whether anything ran (test_report_html.py).
HOSTILE = (
    "<script>window.__pwned=1;document.documentElement.setAttribute('data-pwned','script')</script>",
    "<img src=x onerror=\"window.__pwned=2;document.documentElement.setAttribute('data-pwned','img')\">",
    "</table>",
    "<a href=\"javascript:window.__pwned=3\">open</a>",
    "<svg onload=\"window.__pwned=4;document.documentElement.setAttribute('data-pwned','svg')\"></svg>",
    "</style><style>body{display:none}</style>",
    "<!-- ]]> \"quoted\" & 'single' -->",
)
HOSTILE_TEXT = "Odd input follows. " + " ".join(HOSTILE) + " End of odd input."

# The key words the fakes pretend the coverage scorer blanked, most salient first.
FAKE_WORDS = ("greyling", "cofferdam", "crack", "thornmoor", "286,000", "resin", "outlet")


# --------------------------------------------------------------------------- fakes


def fake_signature(name: str, **fields) -> Signature:
    return Signature(name, tuple((k, str(v)) for k, v in fields.items()), (("boildown", "test"),))


def fake_keyword_set(text: str, words=FAKE_WORDS) -> KeywordSet:
    """Key words with their real character spans in ``text`` (case-insensitive word starts)."""
    keywords = []
    for n, word in enumerate(words):
        spans = tuple((m.start(), m.end()) for m in re.finditer(rf"(?<!\w){re.escape(word)}\w*", text, re.I))
        keywords.append(Keyword(word, round(10.0 - n, 4), spans))
    return KeywordSet(tuple(keywords), text_hash(text))


def evidence(word: str, state: str) -> KeywordEvidence:
    """Evidence whose ``status`` (scoring/coverage.py's rule) is the state asked for."""
    if state == "known":
        return KeywordEvidence(word, 2, 0.7, 0.8, 2, 2)
    if state == "recovered":
        return KeywordEvidence(word, 2, 0.05, 0.8, 0, 2, in_summary=word)  # the summary contains it
    return KeywordEvidence(word, 2, 0.05, 0.1, 0, 0)


def fake_candidate(name, text, states: dict, *, share, fluency, budget=None, references=False, flags=()) -> Candidate:
    sentences = split_sentences(text) if text.strip() else []
    coverage = CoverageScore(
        value=share, share=share, logprob_gain=share, accuracy_gain=0.0, prob_gain=0.0, accuracy_with=0.0,
        accuracy_without=0.0, n_keywords=len(FAKE_WORDS), n_blanks=2 * len(states),
        keywords=tuple(evidence(w, s) for w, s in states.items()),
        signature=fake_signature("coverage", model="fake", keys=len(FAKE_WORDS)),
    )
    flu = FluencyScore(
        value=fluency, perplexity=20.0, reference_perplexity=18.0,
        sentences=tuple(SentenceFluency(s, 20.0, tuple(flags) if i == 0 else ()) for i, s in enumerate(sentences)),
        signature=fake_signature("fluency", model="fake"),
    )
    rouge = bert = None
    if references:
        scores = {k: {"precision": 0.5, "recall": 0.5, "f1": v} for k, v in
                  (("rouge1", 0.41), ("rouge2", 0.22), ("rougeL", 0.35), ("rougeLsum", 0.38))}
        rouge = RougeScore(scores, 1, {k: 0 for k in scores}, fake_signature("rouge", stem="yes"))
        bert = BertScore(0.8, 0.8, 0.812, 1, False, fake_signature("bertscore", model="fake"))
    scores = {"coverage": coverage, "fluency": flu, "agreement": None}
    if references:
        scores |= {"rouge": rouge, "bertscore": bert}
    return Candidate(name, text, count_words(text), budget, scores, combined_score(share, fluency))


GOOD_STATES = {"greyling": "recovered", "cofferdam": "recovered", "crack": "recovered", "thornmoor": "known",
               "286,000": "recovered", "resin": "missed"}
WEAK_STATES = {"greyling": "missed", "cofferdam": "missed", "crack": "missed", "thornmoor": "known",
               "286,000": "missed", "resin": "missed"}
# "outlet" has no evidence in either: the fakes' stand-in for a word past the blank limit.


def fake_ranked(budget=60, references=False, good_text=None, good_name="good.txt"):
    good = good_text if good_text is not None else GOOD.read_text().strip()
    return rank([
        fake_candidate("weak.txt", WEAK.read_text().strip(), WEAK_STATES, share=0.12, fluency=0.9, budget=budget,
                       references=references),
        fake_candidate(good_name, good, GOOD_STATES, share=0.62, fluency=0.81, budget=budget, references=references,
                       flags=("reads poorly",)),
    ])


def fake_comparison(budget=60, references=False, hostile=False, provenance=None) -> comparing.Comparison:
    """A Comparison of the fixture source from hand-made scores (no model runs)."""
    if hostile:
        document = parse_text(SOURCE.read_text() + "\n\n" + HOSTILE_TEXT, "txt", source="<script>src</script>.txt")
        ranked = fake_ranked(budget, references, good_text=GOOD.read_text().strip() + " " + HOSTILE_TEXT,
                             good_name=HOSTILE[0] + HOSTILE[2])
    else:
        document = read_document(SOURCE)
        ranked = fake_ranked(budget, references)
    return comparing.assemble(
        document, ranked, fake_keyword_set(document.text), budget=budget, provenance=provenance,
        settings={"keywords": len(FAKE_WORDS), "combined": "0.75 x coverage + 0.25 x fluency"},
        extra_signatures=(fake_signature("combined", cov=0.75, flu=0.25),), name=None if hostile else "source.md",
    )


class FakeEvaluator:
    """Stands in for scoring.evaluate.Evaluator: the real config, hand-made scores."""

    def __init__(self, keywords=len(FAKE_WORDS)):
        base = EvalConfig()
        self.config = EvalConfig(coverage=CoverageConfig(keywords=keywords), combine=base.combine)
        self.calls = []

    def evaluate(self, candidates, *, source, references=None, budget=None, progress=None, scored=None):
        self.calls.append({"names": [n for n, _ in candidates], "source": source, "references": references,
                           "budget": budget, "scored": scored})
        states = {"good.txt": GOOD_STATES, "weak.txt": WEAK_STATES}
        out = [fake_candidate(n, t, states.get(n, WEAK_STATES), share=0.62 if n == "good.txt" else 0.1, fluency=0.8,
                              budget=budget, references=bool(references)) for n, t in candidates]
        return rank(out)


@pytest.fixture
def fake_keywords(monkeypatch):
    """compare() asks choose_keywords for the scorer's key words; answer without spaCy, and record the config."""
    asked = []

    def choose(text, config):
        asked.append(config)
        return fake_keyword_set(text)

    monkeypatch.setattr(comparing, "choose_keywords", choose)
    return asked


# --------------------------------------------------------------------------- align


def test_align_hand_computed_cosine():
    # Smoothed idf, idf = ln((1 + n) / (1 + df)) + 1, as in scikit-learn's user guide
    # ("Tf-idf term weighting", smooth_idf=True). By hand: terms red, fox, "red fox" | blue, fox,
    # "blue fox"; idf(df=1) = ln(3/2) + 1 = 1.405465, idf(fox) = 1; the only shared term is fox,
    # so cos = 1 / (2 * 1.405465^2 + 1) = 0.201993.
    sims = aligning.similarities(["red fox"], ["red fox", "blue fox"])
    assert sims[0, 0] == pytest.approx(1.0, abs=TOL)
    assert sims[0, 1] == pytest.approx(0.201993, abs=TOL)
    # 0.202 clears the 0.2 floor but not 0.6 x the best (the rule): one source sentence
    assert aligning.align(["red fox"], ["red fox", "blue fox"]) == [[0]]


INVENTED_SOURCE = [
    "Storage in Thornmoor reservoir fell to 48% in August.",
    "Thornmoor reservoir storage had fallen to 48% by late August after the dry summer.",
    "New mains were laid in Scarrow.",
    "Taste complaints rose in Wenlow Cross.",
]


@pytest.mark.parametrize(
    "summary, expected",
    [
        # invented example; expected indices read off by a person from the sentences themselves
        ("Complaints about taste rose in Wenlow Cross.", [3]),
        ("Scarrow got new mains.", [2]),
        ("Nothing else matters here.", []),  # shares no term with the source
        # a merge of two source sentences draws on both, the closer first (0.732 then 0.650)
        ("Storage in Thornmoor reservoir fell to 48%, and taste complaints rose in Wenlow Cross.", [3, 0]),
        # two near-paraphrases: both kept (0.622 and 0.525 >= 0.6 x 0.622)
        ("Thornmoor reservoir storage fell to 48% by late August.", [1, 0]),
    ],
)
def test_align_invented_example(summary, expected):
    assert aligning.align([summary], INVENTED_SOURCE) == [expected]


def test_align_degenerate_inputs():
    assert aligning.align([], INVENTED_SOURCE) == []
    assert aligning.align(["Anything at all."], []) == [[]]
    assert aligning.align(["", "..."], INVENTED_SOURCE) == [[], []]
    # equal scores: the earlier source sentence first
    assert aligning.align(["alpha beta"], ["alpha beta", "alpha beta"]) == [[0, 1]]


def test_align_signature_names_the_rule():
    assert str(aligning.signature()).startswith(
        'align(similarity=tfidf-cosine, ngrams=1-2, second=0.6, floor=0.2, skip="contents,fragments<6") on boildown ')


# --------------------------------------------------------------------------- the Comparison


def test_grid_follows_salience_and_scores():
    cmp = fake_comparison()
    assert [c.name for c in cmp.candidates] == ["good.txt", "weak.txt"]
    assert [r.word for r in cmp.grid] == list(FAKE_WORDS)
    by_word = {r.word: r.states for r in cmp.grid}
    assert by_word["greyling"] == ("recovered", "missed")
    assert by_word["thornmoor"] == ("known", "known")
    assert by_word["resin"] == ("missed", "missed")
    assert by_word["outlet"] == (comparing.UNSCORED, comparing.UNSCORED)
    assert cmp.missed_by_all == ("resin",)
    # the grid's states are exactly the coverage scores' own
    for i, c in enumerate(cmp.candidates):
        assert {r.word for r in cmp.grid if r.states[i] == "missed"} == set(c.coverage.missed)
        assert {r.word for r in cmp.grid if r.states[i] == "recovered"} == set(c.coverage.recovered)


def test_links_use_provenance_when_given_and_alignment_otherwise():
    good_sentences = split_sentences(GOOD.read_text())
    cmp = fake_comparison(provenance={"good.txt": [[1, 3], [4, 5]]})
    links = {l.name: l for l in cmp.links}
    assert links["good.txt"].origin == "provenance" and links["good.txt"].sources == ((1, 3), (4, 5))
    assert links["good.txt"].sentences == tuple(good_sentences)
    assert links["weak.txt"].origin == "aligned"
    assert len(links["weak.txt"].sources) == len(split_sentences(WEAK.read_text()))
    # without provenance, the good candidate's sentences are aligned to the sentences they paraphrase:
    # the crack (source sentence 1) and the contractor's quote (source sentence 5), read off the fixture
    aligned = {l.name: l for l in fake_comparison().links}["good.txt"]
    assert aligned.origin == "aligned"
    assert 1 in aligned.sources[0] and 5 in aligned.sources[1]


@pytest.mark.parametrize(
    "provenance, message",
    [
        ({"nobody.txt": [[0]]}, "not one of the candidates"),
        ({"good.txt": [[0]]}, "lists 1 sentence(s) but the candidate has 2"),
        ({"good.txt": [[0], [99]]}, "99 is not a source sentence index (0..10)"),
        ({"good.txt": [[0], [-1]]}, "-1 is not a source sentence index"),
    ],
)
def test_bad_provenance_is_a_clear_error(provenance, message):
    with pytest.raises(ValueError) as info:
        fake_comparison(provenance=provenance)
    assert message in str(info.value)


def test_compare_uses_the_scorers_keyword_config(fake_keywords):
    evaluator = FakeEvaluator(keywords=7)
    doc = read_document(SOURCE)
    cmp = comparing.compare(doc, [("good.txt", GOOD.read_text()), ("weak.txt", WEAK.read_text())],
                            budget=60, evaluator=evaluator, references=["A reference."])
    # the key words come from the same call and settings as the coverage scorer's (coverage.py _plan)
    assert fake_keywords == [KeywordConfig(count=7)]
    assert evaluator.calls[0]["source"] == doc.text and evaluator.calls[0]["budget"] == 60
    assert cmp.settings["keywords"] == 7 and cmp.settings["references"] == 1 and cmp.budget == 60
    # two candidates: no ordering score, so no ordering signature (it is listed from 3 candidates)
    assert [s.name for s in cmp.signatures] == ["coverage", "fluency", "rouge", "bertscore", "combined", "align"]


def test_compare_names_duplicates_apart_and_refuses_bad_input(fake_keywords):
    cmp = comparing.compare("One plain sentence about Greyling. Another about Thornmoor.",
                            [("a.txt", "Greyling."), ("a.txt", "Thornmoor."), ("a.txt #2", "x.")],
                            evaluator=FakeEvaluator())
    assert sorted(c.name for c in cmp.candidates) == ["a.txt", "a.txt #2", "a.txt #2 #2"]
    with pytest.raises(ValueError, match="no candidate summaries"):
        comparing.compare("Some source text.", [], evaluator=FakeEvaluator())
    with pytest.raises(ValueError, match="text or a Document"):
        comparing.compare(b"bytes", [("a", "b")], evaluator=FakeEvaluator())
    with pytest.raises(ValueError, match="is empty"):
        comparing.compare("   ", [("a", "b")], evaluator=FakeEvaluator())


def test_candidate_warnings():
    assert reading.candidate_warnings("one two three", [("e", " "), ("long", "a b c d"), ("ok", "a b")]) == [
        "warning: candidate 'e' is empty; it scores 0",
        "warning: candidate 'long' (4 words) is longer than its source (3)",
    ]


# --------------------------------------------------------------------------- text and JSON


def test_grid_text_exact():
    # expected text written by hand from GOOD_STATES / WEAK_STATES above
    lines = compare_text.grid_text(fake_comparison()).splitlines()
    legend = [f"{comparing.state_text(s).symbol} {comparing.state_text(s).label}: {comparing.state_text(s).meaning}"
              for s in ("recovered", "known", "missed", comparing.UNSCORED)]
    assert lines == [
        "key word    #1   #2",
        "---------  ---  ---",
        "greyling    +    -",
        "cofferdam   +    -",
        "crack       +    -",
        "thornmoor   =    =",
        "286,000     +    -",
        "resin       -    -",
        "outlet      .    .",
        "",
        *legend,  # every state occurs in this grid, so each has its line, in legend order
        "columns are the candidates by rank, as in the table above",
        "missed by every candidate (1): resin",
    ]


def test_table_has_every_part():
    text = compare_text.table(fake_comparison(references=True))
    assert text.startswith("source: source.md (175 words), budget 60 words")
    for part in ("candidate", "R-Lsum", "good.txt", "greyling", "missed by every candidate (1): resin",
                 "first and second: good.txt ranks above weak.txt on Combined",
                 "flagged sentence (reads poorly)", "coverage(model=fake", "align(similarity=tfidf-cosine", "qualified person"):
        assert part in text


def test_json_structure():
    data = json.loads(compare_text.to_json(fake_comparison(references=True)))
    assert {"source", "source_words", "budget", "settings", "signatures", "keywords", "missed_by_every_candidate",
            "source_sentences", "links", "candidates", "caution", "separated", "drafts"} <= set(data)
    assert data["source"] == "source.md" and data["source_words"] == 175 and data["budget"] == 60
    assert data["keywords"][0] == {"word": "greyling", "salience": 10.0, "occurrences": 4,
                                   "states": {"good.txt": "recovered", "weak.txt": "missed"}}
    assert data["missed_by_every_candidate"] == ["resin"]
    # sentence numbers count from 1 in the JSON, as on the page ("s-1" is sentence 1)
    assert data["source_sentences"][0]["number"] == 1 and data["source_sentences"][0]["id"] == "s-1"
    assert "index" not in data["source_sentences"][0]
    good = data["links"]["good.txt"]
    assert good["origin"] == "aligned" and [s["number"] for s in good["sentences"]] == [1, 2]
    # the crack is source sentence 2 (index 1) and the quote sentence 6 (index 5), read off the fixture
    assert 2 in good["sentences"][0]["source_numbers"] and 6 in good["sentences"][1]["source_numbers"]
    page = report_html.render_html(fake_comparison(references=True))
    for s in good["sentences"]:
        for number in s["source_numbers"]:
            assert f'<a href="#s-{number}" aria-label="source sentence {number}">{number}</a>' in page
    assert good["sentences"][1]["keywords"][:2] == [{"word": "cofferdam", "state": "recovered"},
                                                    {"word": "resin", "state": "missed"}]
    assert data["separated"]["first"] == "good.txt" and data["separated"]["reason"] == "score"
    assert data["drafts"] == []
    assert [c["name"] for c in data["candidates"]] == ["good.txt", "weak.txt"]
    assert data["candidates"][0]["rouge"]["scores"]["rougeLsum"]["f1"] == 0.38
    assert [s["name"] for s in data["signatures"]][-2:] == ["combined", "align"]


# --------------------------------------------------------------------------- HTML


class _Tags(HTMLParser):
    """Every start tag with its attributes, every id, and the text (as a browser would parse it)."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    handle_startendtag = handle_starttag

    def handle_data(self, data):
        self.text.append(data)


def parse(page: str) -> _Tags:
    p = _Tags()
    p.feed(page)
    p.close()
    return p


def test_document_text_is_escaped_and_nothing_can_run():
    cmp = fake_comparison(hostile=True, references=True)
    assert all(h in cmp.document.text for h in HOSTILE)  # the hostile strings did reach the page's input
    page = report_html.render_html(cmp)
    tags = parse(page)
    names = [t for t, _ in tags.tags]
    # no script element and no event handler attribute anywhere (HTML Living Standard: the script
    # element and "on*" event handler content attributes are the ways markup runs script)
    assert "<script" not in page.lower() and "script" not in names
    assert not [a for _, attrs in tags.tags for a in attrs if a.lower().startswith("on")]
    # no link, no src, no remote address; every href stays inside the page
    assert "link" not in names and not [a for _, attrs in tags.tags for a in attrs if a == "src"]
    hrefs = [attrs["href"] for _, attrs in tags.tags if "href" in attrs]
    assert hrefs and all(h.startswith("#") for h in hrefs)
    assert not re.search(r"https?://(?!www\.w3\.org/2000/svg\")", page)  # only the SVG namespace name
    # the hostile strings are shown as text: in the source, the candidate's sentences and its name
    text = "".join(tags.text)
    for h in HOSTILE:
        assert text.count(h) >= 2, h
    assert "<h1>Summaries of <span class=\"name\">&lt;script&gt;src&lt;/script&gt;.txt</span> compared</h1>" in page
    assert "body{display:none}" not in "".join(re.findall(r"<style>(.*?)</style>", page, re.S))
    # a strict Content-Security-Policy, so even a slip could not run script or fetch
    csp = [a["content"] for t, a in tags.tags if t == "meta" and a.get("http-equiv") == "Content-Security-Policy"]
    assert csp == [report_html.CSP] and "default-src 'none'" in csp[0]


def test_every_link_lands_and_ids_are_unique():
    page = report_html.render_html(fake_comparison(provenance={"good.txt": [[1, 3], [4, 5]]}))
    tags = parse(page)
    ids = [a["id"] for _, a in tags.tags if "id" in a]
    assert len(ids) == len(set(ids))
    targets = {a["href"][1:] for _, a in tags.tags if "href" in a}
    assert targets <= set(ids)
    assert {"s-2", "s-4", "s-5", "s-6", "main", "c-1", "c-2"} <= targets
    assert {f"s-{i}" for i in range(1, 12)} <= set(ids)  # every one of the 11 source sentences


def test_page_structure_and_accessibility():
    cmp = fake_comparison(references=True)
    page = report_html.render_html(cmp)
    tags = parse(page)
    assert page.startswith("<!doctype html>\n<html lang=\"en\">")
    names = [t for t, _ in tags.tags]
    # headings in order (WCAG 2.1 technique G141): one h1, never a jump of more than one level
    levels = [int(t[1]) for t in names if re.fullmatch(r"h[1-6]", t)]
    assert levels[0] == 1 and levels.count(1) == 1
    assert all(b - a <= 1 for a, b in zip(levels, levels[1:]))
    for landmark in ("header", "main", "nav", "section", "footer", "table", "caption", "svg", "mark"):
        assert landmark in names, landmark
    assert names.count("table") == 2 and names.count("caption") == 2
    col_heads = [a for t, a in tags.tags if t == "th" and a.get("scope") == "col"]
    assert len(col_heads) == 10 + 2 + 2 + 1  # ranking with references; grid: word, count, 2 candidates, missed by all
    svg = next(a for t, a in tags.tags if t == "svg" and a.get("role") == "img")  # the chart (legend keys are hidden)
    assert svg["aria-labelledby"] == "chart-title chart-desc" and {"title", "desc", "text", "rect"} <= set(names)
    assert all(a.get("aria-hidden") == "true" for t, a in tags.tags if t == "svg" and a.get("role") != "img")
    assert page.index('class="skip" href="#main"') < page.index("<header")
    assert ":focus-visible" in page and "outline: 3px solid" in page
    # print: no backgrounds needed, link targets not written out, rows kept whole
    printing = page[page.index("@media print"):]
    assert "break-inside: avoid" in printing and "attr(href)" not in page
    # the source keeps its structure: headings, list items, paragraphs; key words marked
    unmarked = re.sub(r'<mark class="kw" title="key word: \w+">(\w+)</mark>', r"\1", page)
    assert "<h3>Greyling Reservoir Outlet Repair: Note to the Board</h3>" in unmarked
    assert "<h4>Risks</h4>" in unmarked and "<p><span class=\"sent\" id=\"s-1\">" in unmarked
    assert names.count("li") >= 3
    assert '<mark class="kw gap" title="key word: resin (missed by every candidate)">resin</mark>' in page
    # cell states by symbol and text as well as colour (WCAG 2.1 SC 1.4.1)
    assert '<td class="st recovered"><span aria-hidden="true">+</span><span class="vh">recovered</span></td>' in page
    assert "known from context" in page and "Missed by every candidate (1):</strong> resin" in page
    resin_row = re.search(r'<tr><th scope="row" class="gapword">resin</th>.*?</tr>', page).group(0)
    assert resin_row.endswith('<td class="allmiss">yes</td></tr>')


def test_over_budget_and_reference_columns():
    over = report_html.render_html(fake_comparison(budget=40))  # good.txt has 58 words
    assert "over budget by 18" in over and "58 / 40" in over
    plain = report_html.render_html(fake_comparison(budget=None))
    assert "ROUGE-1 F1" not in plain and "BERTScore F1" not in plain and "over budget" not in plain
    refs = report_html.render_html(fake_comparison(references=True))
    heads = [re.sub(r"<[^>]+>", "", h) for h in re.findall(r'<th scope="col"[^>]*>(.*?)</th>', refs)]
    assert heads[:10] == ["Rank", "Candidate", "Words / budget", "Coverage", "Fluency", "Combined",
                          "ROUGE-1 F1", "ROUGE-2 F1", "ROUGE-Lsum F1", "BERTScore F1"]
    assert ">0.812</td>" in refs


def relative_luminance(hex_colour: str) -> float:
    # W3C WCAG 2.1, definition of "relative luminance" (sRGB; the 0.03928 threshold as printed there)
    channels = [int(hex_colour[i:i + 2], 16) / 255 for i in (1, 3, 5)]
    r, g, b = [c / 12.92 if c <= 0.03928 else ((c + 0.055) / 1.055) ** 2.4 for c in channels]
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def contrast(a: str, b: str) -> float:
    # W3C WCAG 2.1, definition of "contrast ratio": (L1 + 0.05) / (L2 + 0.05), L1 the lighter
    la, lb = sorted((relative_luminance(a), relative_luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


def test_contrast_formula_against_known_values():
    # WCAG 2.1 "contrast ratio" note: ratios range from 1:1 to 21:1 (black on white)
    assert contrast("#000000", "#ffffff") == pytest.approx(21.0)
    assert contrast("#777777", "#777777") == pytest.approx(1.0)
    # #767676 on white is the commonly quoted lightest grey passing 4.5:1 (WebAIM contrast checker: 4.54:1)
    assert contrast("#767676", "#ffffff") == pytest.approx(4.54, abs=0.005)


@pytest.mark.parametrize("fg, bg", report_html.TEXT_PAIRS)
def test_palette_text_contrast(fg, bg):
    # W3C WCAG 2.1 SC 1.4.3 Contrast (Minimum): at least 4.5:1 for text
    assert contrast(report_html.PALETTE[fg], report_html.PALETTE[bg]) >= 4.5


@pytest.mark.parametrize("fg, bg", report_html.GRAPHIC_PAIRS)
def test_palette_graphics_contrast(fg, bg):
    # W3C WCAG 2.1 SC 1.4.11 Non-text Contrast: at least 3:1 for bars and focus indicators
    assert contrast(report_html.PALETTE[fg], report_html.PALETTE[bg]) >= 3.0


def test_every_colour_in_the_css_comes_from_the_palette():
    css = report_html.stylesheet()
    rules = css[css.index("}") + 1:]
    print_rules = rules[rules.index("@media print"):]
    assert not re.findall(r"#[0-9a-fA-F]{3,6}\b", rules.replace(print_rules, ""))
    assert set(re.findall(r"var\(--([\w-]+)\)", css)) <= set(report_html.PALETTE)


def test_write_html_is_atomic(tmp_path, monkeypatch):
    target = tmp_path / "report.html"
    target.write_text("previous report")
    written = report_html.write_html(fake_comparison(), target)
    assert written == target and target.read_text().startswith("<!doctype html>")
    assert [p.name for p in tmp_path.iterdir()] == ["report.html"]

    def crash(_cmp):
        raise RuntimeError("renderer crashed")

    target.write_text("previous report")
    monkeypatch.setattr(report_html, "render_html", crash)
    with pytest.raises(RuntimeError):
        report_html.write_html(fake_comparison(), target)
    assert target.read_text() == "previous report" and [p.name for p in tmp_path.iterdir()] == ["report.html"]


@pytest.mark.parametrize("where, message", [("missing/report.html", "does not exist"), (".", "is a folder")])
def test_report_target_checked_early(tmp_path, where, message):
    with pytest.raises(ValueError, match=message):
        report_html.check_target(tmp_path / where)


# --------------------------------------------------------------------------- the command, without models


@pytest.fixture
def fake_cli(monkeypatch, fake_keywords):
    """The compare command with the fake evaluator in place of the process-wide one."""
    import scoring.evaluate

    evaluator = FakeEvaluator()
    asked = []

    def evaluator_for(options=None):
        asked.append(options)
        return evaluator

    monkeypatch.setattr(scoring.evaluate, "evaluator_for", evaluator_for)
    evaluator.options = asked
    return evaluator


def test_cli_text_json_and_html(fake_cli, tmp_path):
    runner = CliRunner()
    args = ["compare", str(SOURCE), str(GOOD), str(WEAK), "--words", "60", "-q"]
    text = runner.invoke(main, args)
    assert text.exit_code == 0, text.output
    assert "missed by every candidate (1): resin" in text.output and "qualified person" in text.output

    as_json = runner.invoke(main, args + ["--json"])
    assert as_json.exit_code == 0, as_json.output
    data = json.loads(as_json.stdout)
    assert data["budget"] == 60 and [c["name"] for c in data["candidates"]] == ["good.txt", "weak.txt"]

    page = tmp_path / "out" / "page.html"
    page.parent.mkdir()
    result = runner.invoke(main, args + ["--html", str(page)])
    assert result.exit_code == 0, result.output
    assert result.output.strip() == str(page) and page.read_text().startswith("<!doctype html>")
    assert [p.name for p in page.parent.iterdir()] == ["page.html"]


def test_cli_reads_jsonl_candidates(fake_cli, tmp_path):
    lines = tmp_path / "cands.jsonl"
    lines.write_text(json.dumps({"name": "good.txt", "text": GOOD.read_text()}) + "\n"
                     + json.dumps({"name": "weak.txt", "text": WEAK.read_text()}) + "\n")
    result = CliRunner().invoke(main, ["compare", str(SOURCE), str(lines), "--json", "-q"])
    assert result.exit_code == 0, result.output
    assert fake_cli.calls[-1]["names"] == ["good.txt", "weak.txt"]


@pytest.mark.parametrize(
    "args, message",
    [
        (["missing.txt", str(GOOD)], "'missing.txt' was not found"),
        ([str(SOURCE), "nowhere.txt"], "'nowhere.txt' was not found"),
        ([str(SOURCE), str(GOOD), "--html", "no/such/folder/r.html"], "the folder 'no/such/folder' does not exist"),
    ],
)
def test_cli_errors_are_one_line_and_come_before_scoring(fake_cli, args, message):
    result = CliRunner().invoke(main, ["compare", *args, "-q"])
    assert result.exit_code == 1
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("boildown: error: ")
    assert message in result.output and "Traceback" not in result.output
    assert fake_cli.calls == []  # nothing was scored


def test_cli_refuses_non_english_unless_asked(fake_cli, tmp_path):
    foreign = tmp_path / "quelle.txt"
    foreign.write_text("Der Wasserverband hat im März einen Riss im Auslaufturm gefunden. " * 8)
    refused = CliRunner().invoke(main, ["compare", str(foreign), str(GOOD), "-q"])
    assert refused.exit_code == 1 and "--any-language" in refused.output
    allowed = CliRunner().invoke(main, ["compare", str(foreign), str(GOOD), "-q", "--any-language"])
    assert allowed.exit_code == 0, allowed.output


# --------------------------------------------------------------------------- end to end, real models


@pytest.mark.models
def test_compare_end_to_end_with_models(tmp_path):
    page = tmp_path / "report.html"
    result = CliRunner().invoke(
        main, ["compare", str(SOURCE), str(GOOD), str(WEAK), "--words", "60", "--json", "--html", str(page), "-q"]
    )
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert {c["name"] for c in data["candidates"]} == {"good.txt", "weak.txt"}
    assert data["budget"] == 60 and data["settings"]["keywords"] == CoverageConfig.keywords
    # the grid is the coverage scorer's own evidence, word for word
    for cand in data["candidates"]:
        scored = {k["word"]: k["status"] for k in cand["coverage"]["keywords"]}
        grid = {k["word"]: k["states"][cand["name"]] for k in data["keywords"]}
        assert {w: s for w, s in grid.items() if s != comparing.UNSCORED} == scored
    assert len(data["links"]["good.txt"]["sentences"]) == 2
    assert page.is_file() and "<table class=\"grid\">" in page.read_text()
    assert [s["name"] for s in data["signatures"]] == ["coverage", "fluency", "combined", "align"]


@pytest.mark.models
def test_compare_adds_boildowns_own_candidates_with_provenance(tmp_path):
    result = CliRunner().invoke(
        main, ["compare", str(SOURCE), str(WEAK), "--summaries", "2", "--words", "60", "--json", "-q"]
    )
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    own = [c["name"] for c in data["candidates"] if c["name"].startswith("boildown:")]
    assert 1 <= len(own) <= 2
    for name in own:
        assert data["links"][name]["origin"] == "provenance" or data["links"][name]["sentences"]


def test_compare_needs_candidates_or_summaries():
    result = CliRunner().invoke(main, ["compare", str(SOURCE)])
    assert result.exit_code == 2 and "--summaries" in result.output


def test_comparison_signatures_include_agreement_when_it_is_in_the_combined_score():
    """Agreement is half of the combined score with three or more candidates, so its signature
    must be listed beside coverage's and fluency's (a defect found in review: it was dropped)."""
    from dataclasses import replace

    from scoring.agreement import AgreementScore

    document = read_document(SOURCE)
    agree = AgreementScore(0.3, 2, 1, 0.4, fake_signature("agreement", measure="rouge2"))
    ranked = [replace(c, scores=c.scores | {"agreement": agree}) for c in fake_ranked()]
    cmp = comparing.assemble(document, ranked, fake_keyword_set(document.text), budget=60, name="source.md")
    assert [s.name for s in cmp.signatures] == ["coverage", "fluency", "agreement", "align"]
