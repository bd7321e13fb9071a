"""What the comparison adds for an editor: links that skip contents lines, key words marked in
the candidates' sentences, what separated the first two, drafts word by word, the CSV, the
side-by-side view, reused scores for boildown's own candidates, and progress per candidate.

Fast tier: hand-made scores (the fakes of test_compare.py), no model runs.
"""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass, replace
from types import SimpleNamespace

import pytest
from click.testing import CliRunner

from scoring.base import Column
from scoring.combine import rank
from scoring.evaluate import Evaluator
from scoring.fluency import FluencyScore
from summarize import align as aligning
from summarize import compare as comparing
from summarize import compare_text, page_texts, report, report_html
from summarize import drafts as drafting
from summarize.cli import main
from summarize.progress import Progress
from summarize.reading import read_document
from summarize.segment import segment
from test_compare import (DATA, FAKE_WORDS, GOOD, GOOD_STATES, SOURCE, WEAK, WEAK_STATES, fake_candidate,
                          fake_comparison, fake_keyword_set, fake_ranked, fake_signature, parse)

CONTENTS = DATA / "contents_report.txt"  # invented (water board scenario): a contents list and a signature block


def comparison_of(document, ranked, **kw):
    return comparing.assemble(document, ranked, fake_keyword_set(document.text), name="x", **kw)


# --------------------------------------------------------------------------- links point at text


def test_links_skip_contents_lines_and_fragments():
    doc = read_document(CONTENTS)
    sentences = segment(doc)
    ok = aligning.linkable(doc, sentences)
    # read off the fixture by a person: two label lines, the four contents lines, the signature's two lines
    assert [s.text for s, k in zip(sentences, ok) if not k] == [
        "Prepared by: Operations Group", "Issued: July 2025", "Output and demand", "Manganese removal",
        "Events notified to the regulator", "Staffing", "Marta Quillan", "Works Manager",
    ]
    texts = [s.text for s in sentences]
    # without the rule, a summary sentence worded like a contents line points at the contents
    assert aligning.align(["Events notified to the regulator."], texts) == [[5]]
    # with it, at the body sentence that says it (index 11: "We notified the regulator of two events ...")
    assert aligning.align(["Events notified to the regulator."], texts, ok) == [[11]]
    summary = "Two events were notified to the regulator. Manganese removal worked: 94% was taken out."
    cmp = comparison_of(doc, [fake_candidate("a", summary, {}, share=0.5, fluency=0.9)])
    linked = {i for sources in cmp.links[0].sources for i in sources}
    assert linked and all(cmp.linkable[i] for i in linked)
    assert cmp.links[0].sources == ((11,), (10,))
    data = json.loads(compare_text.to_json(cmp))
    assert [s["linkable"] for s in data["source_sentences"]] == ok


@pytest.mark.parametrize("text, fragment", [
    ("Chief Executive", True),  # a signature line
    ("Published: April 2025", True),  # a label
    ("ANNUAL WATER QUALITY REPORT 2024", True),  # capitals: a heading the reader kept as a paragraph
    ("It rained.", False),  # short, but a sentence
    ("Storage fell to 48% in August after the driest spring", False),  # long enough without a full stop
])
def test_fragments(text, fragment):
    assert aligning.is_fragment(text) is fragment


def test_a_document_of_short_items_keeps_every_link_target():
    doc = read_document(SOURCE)
    short = replace(doc, blocks=tuple(b for b in doc.blocks if b.kind == "heading")[:1]
                    + tuple(replace(b, text="Greyling outlet") for b in doc.blocks if b.kind == "item"))
    assert aligning.linkable(short, segment(short)) == [True, True, True]


# --------------------------------------------------------------------------- key words in the candidates


def test_key_words_are_marked_in_each_sentence_with_the_grids_state():
    cmp = fake_comparison()
    good = cmp.marks[0]
    # read off good.txt: its first sentence names crack, Greyling, outlet and Thornmoor; its second
    # cofferdam, resin and 286,000 (FAKE_WORDS), each in the state GOOD_STATES gives it
    assert [(m.word, m.state) for m in good[0]] == [("crack", "recovered"), ("greyling", "recovered"),
                                                     ("outlet", comparing.UNSCORED), ("thornmoor", "known")]
    assert [(m.word, m.state) for m in good[1]] == [("cofferdam", "recovered"), ("resin", "missed"),
                                                     ("286,000", "recovered")]
    sentence = cmp.links[0].sentences[1]
    assert [sentence[m.start:m.end] for m in good[1]] == ["cofferdam", "resin", "286,000"]
    assert cmp.named_only_by(0) == FAKE_WORDS[:6] + ("outlet",) and cmp.named_only_by(1) == ()


def test_key_words_found_by_stem_and_without_a_possessive():
    finder = comparing.KeywordFinder(fake_keyword_set(SOURCE.read_text()), SOURCE.read_text())
    text = "Greyling's outlet cracked; the crack widened."
    assert [(text[s:e], w) for s, e, w in finder.find(text)] == [
        ("Greyling", "greyling"), ("outlet", "outlet"), ("cracked", "crack"), ("crack", "crack")]


def test_the_page_marks_key_words_by_symbol_and_words_as_well_as_colour():
    page = report_html.render_html(fake_comparison())
    assert ('<mark class="kc recovered" title="key word cofferdam: recovered">cofferdam'
            '<span class="sy" aria-hidden="true">+</span><span class="vh"> (key word, recovered)</span></mark>') in page
    assert "Names key words no other candidate names:</strong> greyling, cofferdam" in page


def test_legends_show_only_the_states_present():
    doc = read_document(SOURCE)
    all_states = {w: "recovered" for w in FAKE_WORDS} | {"resin": "missed"}
    ranked = rank([fake_candidate("a", GOOD.read_text().strip(), all_states, share=0.6, fluency=0.8),
                   fake_candidate("b", WEAK.read_text().strip(), all_states, share=0.5, fluency=0.8)])
    cmp = comparison_of(doc, ranked)
    page = report_html.render_html(cmp)
    assert "known from context" not in page and "not scored" not in page and "<strong>missed</strong>" in page
    text = compare_text.grid_text(cmp)
    assert "+ recovered:" in text and "- missed:" in text and "= known" not in text and ". not scored" not in text


def test_a_meaning_published_by_the_coverage_scorer_replaces_ours(monkeypatch):
    from scoring import coverage

    monkeypatch.setattr(coverage, "STATE_MEANINGS", {"recovered": "Plain words from the scorer."}, raising=False)
    page = report_html.render_html(fake_comparison())
    assert "<strong>recovered</strong>: Plain words from the scorer." in page
    assert comparing.state_text("known") == comparing.STATE_TEXT["known"]


# --------------------------------------------------------------------------- what separated the first two


def test_separation_names_the_component_that_made_the_gap():
    sep = fake_comparison().separation
    # hand computation from the fakes' scores: combined = 0.75 coverage + 0.25 fluency
    # (0.6675 against 0.315); coverage's part 0.75 x (0.62 - 0.12) = +0.375, fluency's 0.25 x (0.81 - 0.90) = -0.0225
    assert (sep.first, sep.second, sep.reason, sep.total, sep.decided_by) == (
        "good.txt", "weak.txt", "score", "Combined", "Coverage")
    parts = {p.label: p for p in sep.parts}
    assert set(parts) == {"Coverage", "Fluency"}
    assert parts["Coverage"].contribution == pytest.approx(0.375) and parts["Fluency"].contribution == pytest.approx(-0.0225)
    assert sum(p.contribution for p in sep.parts) == pytest.approx(sep.first_total - sep.second_total)
    assert sep.text == ("good.txt ranks above weak.txt on Combined: 0.667 against 0.315. Coverage made most of the "
                        "difference (62.0% against 12.0%, +0.375 at weight 0.75); Fluency pulled the other way "
                        "(0.81 against 0.90, -0.022 at weight 0.25).")
    page = report_html.render_html(fake_comparison())
    assert '<p class="separated"><strong>First and second.</strong> good.txt ranks above weak.txt' in page


def test_separation_by_budget_and_by_tie():
    over = fake_comparison(budget=40).separation  # good.txt (58 words) is over 40
    assert over.reason == "budget" and over.first == "weak.txt" and "over the word budget" in over.text
    doc = read_document(SOURCE)
    twins = rank([fake_candidate(n, GOOD.read_text().strip(), GOOD_STATES, share=0.5, fluency=0.8) for n in "ab"])
    tie = comparison_of(doc, twins).separation
    assert tie.reason == "tie" and tie.decided_by is None and tie.text.startswith("a and b tie on Combined (0.575)")


def test_a_new_total_in_the_row_model_is_charted_and_followed(monkeypatch):
    """An ordering score added to the row model (as the ranking work will add one) is drawn in the
    chart and, when the ranking follows it, named as the total that separated the first two."""
    weak, good = fake_ranked()[1], fake_ranked()[0]
    ranked = [replace(weak, rank=1, extra={"ordering": 0.7}), replace(good, rank=2, extra={"ordering": 0.4})]
    # before the column exists, no total shown follows this order: the page says so, not "on Combined"
    unseen = comparison_of(read_document(SOURCE), ranked).separation
    assert unseen.reason == "order" and unseen.text.startswith(
        "weak.txt ranks above good.txt by an order that no total shown follows (on Combined: 0.315 against 0.667).")
    ordering = report._Bound(None, Column("ordering", lambda c: c.extra["ordering"], "num3", "ordering", "Ordering"))
    real = report.columns
    monkeypatch.setattr(report, "columns", lambda cands: real(cands) + [ordering])
    cmp = comparison_of(read_document(SOURCE), ranked)
    sep = cmp.separation
    assert sep.total == "Ordering" and sep.first == "weak.txt" and sep.decided_by == "Fluency"
    assert all(p.share is None for p in sep.parts)  # its weights are not the combine config's: plain gaps
    page = report_html.render_html(cmp)
    assert page.count('<text class="metric" x="110" y=') == 4 * 2 and ">Ordering</text>" in page
    assert "Ordering (the total)" in page


# --------------------------------------------------------------------------- drafts


def test_word_runs_by_hand():
    # difflib's matcher over words: "sat" -> "lay" is one replacement between two equal runs
    assert drafting.word_runs("the cat sat on the mat", "the cat lay on the mat") == (
        ("same", "the cat"), ("only_first", "sat"), ("only_second", "lay"), ("same", "on the mat"))
    assert drafting.word_runs("a b", "a b c") == (("same", "a b"), ("only_second", "c"))


def test_drafts_are_found_and_shown_word_by_word():
    good = GOOD.read_text().strip()
    edited = good.replace(" over eleven weeks,", "").replace("Pellow Marine Works", "A contractor")
    assert drafting.draft_pairs([good, WEAK.read_text(), ""]) == ()  # written apart: no pair; empty: nobody's draft
    doc = read_document(SOURCE)
    ranked = rank([fake_candidate("good.txt", good, GOOD_STATES, share=0.62, fluency=0.8),
                   fake_candidate("weak.txt", WEAK.read_text().strip(), WEAK_STATES, share=0.1, fluency=0.8),
                   fake_candidate("edited.txt", edited, GOOD_STATES, share=0.6, fluency=0.8)])
    cmp = comparison_of(doc, ranked)
    (pair,) = cmp.drafts
    assert (pair.first, pair.second) == (0, 1) and pair.changed_words == (6, 2)  # "over eleven weeks," and the name
    page = report_html.render_html(cmp)
    assert '<section id="drafts"' in page and '<a href="#drafts">Drafts word by word</a>' in page
    assert '<del><span class="vh">only in #1: </span>over eleven weeks,</del>' in page
    assert '<ins><span class="vh">only in #2: </span>A contractor</ins>' in page
    data = json.loads(compare_text.to_json(cmp))
    assert data["drafts"][0]["first"] == "good.txt" and data["drafts"][0]["second"] == "edited.txt"


# --------------------------------------------------------------------------- CSV


def test_csv_has_a_ranking_section_and_the_grid_in_long_form():
    rows = list(csv.DictReader(io.StringIO(compare_text.to_csv(fake_comparison()))))
    ranking = [r for r in rows if r["section"] == "ranking"]
    grid = [r for r in rows if r["section"] == "keywords"]
    assert [r["name"] for r in ranking] == ["good.txt", "weak.txt"] and ranking[0]["coverage"] == "0.62"
    assert {"name", "coverage", "fluency", "combined"} <= set(ranking[0])  # score --csv's names
    assert len(grid) == len(FAKE_WORDS) * 2
    assert {(r["keyword"], r["name"]): r["state"] for r in grid}[("greyling", "weak.txt")] == "missed"
    assert all(r["keyword"] == "" for r in ranking) and all(r["coverage"] == "" for r in grid)


# --------------------------------------------------------------------------- side by side


def test_side_by_side_shows_up_to_four_columns_and_a_choice_of_two_beyond():
    doc = read_document(SOURCE)
    texts = [GOOD.read_text().strip(), WEAK.read_text().strip()]
    for n, checked in ((2, 0), (3, 3), (5, 2)):
        ranked = rank([fake_candidate(f"c{k}.txt", texts[k % 2] + " " * k, GOOD_STATES, share=0.5 - k / 100,
                                      fluency=0.8) for k in range(n)])
        page = report_html.render_html(comparison_of(doc, ranked))
        tags = parse(page)
        boxes = [a for t, a in tags.tags if t == "input"]
        assert len(boxes) == (n if n > 2 else 0) and sum("checked" in a for a in boxes) == checked
        assert [a["id"] for t, a in tags.tags if t == "article" and "col" in a.get("class", "")] == \
            [f"c-{k}" for k in range(1, n + 1)]
        rules = page.count(":not(:checked)) #c-")
        assert rules == (n if n > 2 else 0)


def test_a_weakest_sentence_is_shown_when_fluency_names_one():
    @dataclass(frozen=True)
    class WithWeakest(FluencyScore):
        weakest: str = ""

    good, weak = fake_ranked()
    flu = good.fluency
    marked = WithWeakest(flu.value, flu.perplexity, flu.reference_perplexity, flu.sentences, flu.signature,
                         weakest="Pellow <b>Marine</b> Works will repair it.")
    ranked = [replace(good, scores=good.scores | {"fluency": marked}), weak]
    page = report_html.render_html(comparison_of(read_document(SOURCE), ranked))
    assert "Weakest sentence (fluency):</strong> Pellow &lt;b&gt;Marine&lt;/b&gt; Works will repair it." in page


def test_every_view_has_a_way_back_to_the_list_of_views():
    page = report_html.render_html(fake_comparison())
    tags = parse(page)
    sections = [a["id"] for t, a in tags.tags if t == "section"]
    assert sections == ["ranking", "chart", "side", "keywords", "source", "settings"]
    nav = [a["href"] for t, a in tags.tags if t == "a" and a.get("href", "#")[1:] in sections]
    assert nav == [f"#{s}" for s in sections]
    assert page.count('<a href="#views">Back to the list of views</a>') == len(sections)
    assert '<nav id="views" aria-label="Views of this report" tabindex="-1">' in page


# --------------------------------------------------------------------------- boildown's own, scored once


def fake_summary(n_built: int):
    names = ["balanced", "lead", "concepts", "mmr", "sections", "semantic", "dense", "short"][:n_built]
    pairs = []
    for k, name in enumerate(names):
        text = f"Draft {name} says the Greyling outlet has a crack."
        draft = SimpleNamespace(recipe=name, text=text, sentences=(SimpleNamespace(source=1),))
        pairs.append((draft, fake_candidate(name, text, GOOD_STATES, share=0.9 - k / 10, fluency=0.8)))
    return SimpleNamespace(candidates=tuple(pairs), notice=None)


def test_own_candidates_are_the_n_best_of_those_built(monkeypatch):
    import summarize.pipeline

    asked = []

    def summarize_fake(document, words, *, candidates, progress=None, evaluator=None):
        asked.append((words, candidates, evaluator))
        return fake_summary(candidates)

    monkeypatch.setattr(summarize.pipeline, "summarize", summarize_fake)
    own = comparing.own_candidates(read_document(SOURCE), 2, 60, evaluator="the evaluator")
    assert asked == [(60, 8, "the evaluator")]  # recipes.DEFAULT_CANDIDATES built, as `summarize` does
    assert [name for name, _ in own.pairs] == ["boildown:balanced", "boildown:lead"] and own.built == 8
    assert set(own.scored) == {text for _, text in own.pairs}
    assert own.provenance == {"boildown:balanced": [[1]], "boildown:lead": [[1]]}


def test_cli_reuses_the_summarizers_scores(fake_cli, monkeypatch):
    import summarize.pipeline

    monkeypatch.setattr(summarize.pipeline, "summarize", lambda *a, **k: fake_summary(k["candidates"]))
    result = CliRunner().invoke(main, ["compare", str(SOURCE), str(WEAK), "--summaries", "2", "--words", "60",
                                       "--keywords", "12", "--json", "-q"])
    assert result.exit_code == 0, result.output
    call = fake_cli.calls[-1]
    assert call["names"] == ["weak.txt", "boildown:balanced", "boildown:lead"]
    assert call["scored"][0] is None and set(call["scored"][1]) == {"coverage", "fluency", "agreement"}
    assert fake_cli.options[-1] == {"coverage": {"keywords": 12}}


def test_cli_csv_and_its_conflict_with_json(fake_cli):
    args = ["compare", str(SOURCE), str(GOOD), str(WEAK), "-q"]
    out = CliRunner().invoke(main, args + ["--csv"])
    assert out.exit_code == 0 and out.output.startswith("section,rank,name,words,")
    both = CliRunner().invoke(main, args + ["--csv", "--json"])
    assert both.exit_code == 2 and "choose one of --json and --csv" in both.output


class CountingScorer:
    """A scorer that records what it was asked to score and returns hand-made results."""

    def __init__(self, name, needs, results):
        self.name, self.needs, self.results, self.asked = name, needs, results, []

    def signature(self):  # the signature its results carry
        return next((r.signature for r in self.results.values() if r is not None), fake_signature(self.name))

    def score_many(self, summaries, *, source=None, references=None):
        self.asked.append(list(summaries))
        return [self.results[s] for s in summaries] if self.needs != "pool" else [None] * len(summaries)


def test_the_evaluator_reuses_given_results_and_steps_per_candidate():
    texts = {"a": "Greyling outlet crack.", "b": "Some maintenance.", "c": "A cofferdam and resin."}
    made = {t: fake_candidate(n, t, GOOD_STATES, share=0.1 * (k + 1), fluency=0.8) for k, (n, t) in enumerate(texts.items())}
    evaluator = Evaluator()
    evaluator.scorers = {name: CountingScorer(name, needs, {t: c.scores.get(name) for t, c in made.items()})
                         for name, needs in (("coverage", "source"), ("fluency", "source"), ("agreement", "pool"))}
    given = [made[texts["a"]].scores, None, {"coverage": replace(made[texts["c"]].coverage,
                                                                signature=fake_signature("coverage", model="other"))}]
    steps = []
    ranked = evaluator.evaluate(list(texts.items()), source="The source text.", scored=given,
                                progress=lambda m: None)
    cov, flu, pool = (evaluator.scorers[n] for n in ("coverage", "fluency", "agreement"))
    # a's results are reused; c's coverage has another signature, so it is computed again
    assert cov.asked == [[texts["b"], texts["c"]]] and flu.asked == [[texts["b"], texts["c"]]]
    assert pool.asked == [list(texts.values())]  # the pool is new: always scored
    assert [c.name for c in ranked] == ["c", "b", "a"]

    class Stepping:
        def __call__(self, message):
            pass

        def step(self, stage, done, total):
            steps.append((stage, done, total))

    cov.asked.clear()
    evaluator.evaluate(list(texts.items()), source="The source text.", progress=Stepping())
    assert cov.asked == [[t] for t in texts.values()]  # one candidate at a time, each a step
    assert [s for s in steps if s[0] == "coverage"] == [("coverage", k, 3) for k in range(4)]


@pytest.fixture
def fake_cli(monkeypatch):
    import scoring.evaluate
    from test_compare import FakeEvaluator

    monkeypatch.setattr(comparing, "choose_keywords", lambda text, config: fake_keyword_set(text))
    evaluator = FakeEvaluator()
    evaluator.options = []

    def evaluator_for(options=None):
        evaluator.options.append(options)
        return evaluator

    monkeypatch.setattr(scoring.evaluate, "evaluator_for", evaluator_for)
    return evaluator


# --------------------------------------------------------------------------- progress


def test_progress_bars_per_stage_and_lines_in_between():
    out = io.StringIO()
    say = Progress(stream=out, bars=True)
    say("building candidate 1/3 (balanced)")
    say("building candidate 2/3 (lead)")
    say("scoring 3 candidate(s)")  # closes the building bar as complete
    for k in range(4):
        say.step("coverage", k, 3)
    text = out.getvalue()
    assert "boildown: building candidate" in text and "3/3" in text and "boildown: scoring 3 candidate(s)\n" in text
    assert "boildown: coverage" in text and text.count("cand/s") + text.count("s/cand") >= 1


def test_progress_without_a_terminal_writes_lines_only_and_quiet_nothing():
    out = io.StringIO()  # not a terminal
    say = Progress(stream=out)
    say("building candidate 1/3 (balanced)")
    say.step("coverage", 1, 3)
    assert out.getvalue() == "boildown: building candidate 1/3 (balanced)\n"
    quiet = io.StringIO()
    Progress(True, stream=quiet, bars=True)("anything")
    assert quiet.getvalue() == ""


def test_page_text_helpers_never_break_inside_a_run():
    assert page_texts.breakable("boildown:balanced") == "boildown:<wbr>balanced"
    assert page_texts.breakable("<a_b>") == "&lt;a_<wbr>b&gt;"
