"""The comparison page: one self-contained HTML file for editors, rendered from a Comparison.

No network: no scripts at all, no external fonts, stylesheets or images; the chart is inline
SVG. Every piece of document text goes through ``html.escape``, and a Content-Security-Policy
``<meta>`` (default-src 'none'; only inline styles and data: images) means that even a slip in
escaping could not run script or fetch anything.

Accessibility follows WCAG 2.1: ``lang``, headings in order, table captions and header scopes,
a skip link and visible focus outlines, state shown by symbol and text as well as colour
(1.4.1), text contrast of at least 4.5:1 (1.4.3) and graphics of at least 3:1 (1.4.11), all
computed from ``PALETTE`` by the tests. A print stylesheet drops backgrounds that carry no
meaning and keeps table rows whole.
"""

from __future__ import annotations

import html
import re
from pathlib import Path

from scoring.base import project_version
from summarize.files import check_writable, write_atomic
from summarize.compare import UNSCORED, Comparison, sentence_id
from summarize.report import CAUTION

# One palette, the only place colours are set; the CSS reads these as custom properties.
PALETTE = {
    "paper": "#f5f4ef",  # page background
    "panel": "#ffffff",  # section background
    "ink": "#1e2529",  # body text
    "muted": "#4f5a63",  # secondary text
    "rule": "#d3d6d9",  # borders (decorative)
    "accent": "#1f5673",  # links, heading accents
    "focus": "#a64500",  # keyboard focus outline
    "caution": "#fbf1df",  # caution note background
    "recovered-bg": "#d8ecdf",
    "recovered-ink": "#1a5230",
    "known-bg": "#e2e6ee",
    "known-ink": "#313d57",
    "missed-bg": "#f6ded4",
    "missed-ink": "#862c0f",
    "unscored-bg": "#eeeeee",
    "unscored-ink": "#4f5a63",
    "mark": "#f6e5ac",  # key words in the source
    "gap": "#f2cdbd",  # key words every candidate misses
    "target": "#fff2bf",  # the source sentence a link points at
    "bar-coverage": "#2b6a8a",
    "bar-fluency": "#7b6a22",
    "bar-combined": "#4f4a8c",
}

# (foreground, background) pairs used for text: WCAG 2.1 SC 1.4.3 asks at least 4.5:1.
TEXT_PAIRS = (
    ("ink", "paper"), ("ink", "panel"), ("muted", "paper"), ("muted", "panel"),
    ("accent", "paper"), ("accent", "panel"), ("ink", "caution"), ("accent", "caution"),
    ("recovered-ink", "recovered-bg"), ("known-ink", "known-bg"), ("missed-ink", "missed-bg"),
    ("unscored-ink", "unscored-bg"), ("missed-ink", "panel"), ("ink", "mark"), ("ink", "gap"),
    ("ink", "target"), ("accent", "target"), ("muted", "target"),
)
# (graphic, background) pairs: WCAG 2.1 SC 1.4.11 asks at least 3:1 for bars and focus rings.
GRAPHIC_PAIRS = (
    ("bar-coverage", "panel"), ("bar-fluency", "panel"), ("bar-combined", "panel"),
    ("focus", "panel"), ("focus", "paper"), ("focus", "target"), ("missed-ink", "gap"),
)

CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'"

METRICS = (("coverage", "Coverage"), ("fluency", "Fluency"), ("combined", "Combined"))
STATE_TEXT = {
    "recovered": ("+", "recovered", "The model fills in this blanked word when the summary is in front of the source, "
                                    "and not without it: the summary carries it."),
    "known": ("=", "known from context", "The model fills it in from the rest of the source even without the summary, "
                                         "so it tells little about the summary."),
    "missed": ("\u2212", "missed", "Even with the summary in front, the model cannot fill it in: "
                                   "the summary most likely leaves it out."),
    UNSCORED: ("\u00b7", "not scored", "The coverage check scored no blank of this word (its limit on blanks was "
                                       "reached first, or the word only opens the text); no evidence either way."),
}


def esc(text) -> str:
    """Escape any text for element content and quoted attribute values."""
    return html.escape(str(text), quote=True)


# --------------------------------------------------------------------------- the page


def render_html(comparison: Comparison) -> str:
    """The whole page as one string."""
    cmp = comparison
    n = len(cmp.candidates)
    facts = [
        f"{n} candidate{'s' if n != 1 else ''}",
        f"source {cmp.document.word_count:,} words in {len(cmp.source_sentences):,} sentences",
        f"budget {cmp.budget:,} words" if cmp.budget else "no word budget",
        f"{len(cmp.keyword_set.keywords)} key words",
    ]
    sections = [
        ("ranking", "Ranking", _ranking(cmp)),
        ("chart", "Scores at a glance", _chart(cmp)),
        ("keywords", "Key words by candidate", _grid(cmp)),
        ("candidates", "Candidates, sentence by sentence", _candidates(cmp)),
        ("source", "Source text", _source(cmp)),
        ("settings", "Settings and signatures", _settings(cmp)),
    ]
    nav = "".join(f'<li><a href="#{sid}">{esc(title)}</a></li>' for sid, title, _ in sections)
    body = "\n".join(
        f'<section id="{sid}" aria-labelledby="{sid}-h">\n<h2 id="{sid}-h">{esc(title)}</h2>\n{content}\n</section>'
        for sid, title, content in sections
    )
    return f"""<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="{esc(CSP)}">
<meta name="referrer" content="no-referrer">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="boildown {esc(project_version())}">
<title>Summaries of {esc(cmp.source_name)} compared</title>
<style>
{stylesheet()}
</style>
</head>
<body>
<a class="skip" href="#main">Skip to the report</a>
<header class="top">
<div class="wrap">
<p class="kicker">boildown comparison report</p>
<h1>Summaries of <span class="name">{esc(cmp.source_name)}</span> compared</h1>
<p class="facts">{' · '.join(esc(f) for f in facts)}</p>
<nav aria-label="Sections of this report"><ul>{nav}</ul></nav>
</div>
</header>
<main id="main" tabindex="-1" class="wrap">
<p class="caution"><strong>Read with care.</strong> {esc(CAUTION)}</p>
{body}
</main>
<footer class="wrap"><p>Made by boildown {esc(project_version())} on this computer.</p></footer>
</body>
</html>
"""


def write_html(comparison: Comparison, path) -> Path:
    """Write the page atomically (``files.write_atomic``), so an interrupted run never leaves
    half a report. Returns the path written."""
    check_target(path)
    return write_atomic(path, render_html(comparison), what="the report")


def check_target(path) -> None:
    """Fail early (before any scoring) when the report cannot be written where asked."""
    check_writable(path, what="the report")


# --------------------------------------------------------------------------- sections


def _num(value: float, places: int) -> str:
    return f"{value:.{places}f}"


def _pct(value: float) -> str:
    return f"{100 * value:.1f}%"


def _words_cell(c) -> str:
    if c.budget is None:
        return f"<td class=\"n\">{c.words:,}</td>"
    if c.over_budget:
        return (f'<td class="n over"><strong>{c.words:,} / {c.budget:,}</strong>'
                f'<br><span class="tag">over budget by {c.words - c.budget:,}</span></td>')
    return f'<td class="n">{c.words:,} / {c.budget:,}</td>'


def _ranking(cmp: Comparison) -> str:
    has_rouge = any(c.rouge is not None for c in cmp.candidates)
    has_bert = any(c.bertscore is not None for c in cmp.candidates)
    has_agreement = any(c.agreement is not None for c in cmp.candidates)
    head = ["Rank", "Candidate", "Words" + (" / budget" if cmp.budget else ""), "Coverage", "Fluency"]
    head += (["Agreement"] if has_agreement else []) + ["Combined"]
    if has_rouge:
        head += ["ROUGE-1 F1", "ROUGE-2 F1", "ROUGE-Lsum F1"]
    if has_bert:
        head += ["BERTScore F1"]
    rows = []
    for c in cmp.candidates:
        cells = [
            f'<td class="n">{c.rank}</td>',
            f'<th scope="row"><a href="#c-{c.rank}">{_breakable(c.name)}</a></th>',
            _words_cell(c),
            f'<td class="n">{_pct(c.coverage.share)}</td>',
            f'<td class="n">{_num(c.fluency.value, 2)}</td>',
        ]
        if has_agreement:
            cells.append(f'<td class="n">{_num(c.agreement.value, 3) if c.agreement else "–"}</td>')
        cells.append(f'<td class="n strong">{_num(c.combined, 3)}</td>')
        if has_rouge:
            for kind in ("rouge1", "rouge2", "rougeLsum"):
                cells.append(f'<td class="n">{_num(c.rouge.f1(kind), 3) if c.rouge else "–"}</td>')
        if has_bert:
            cells.append(f'<td class="n">{_num(c.bertscore.f1, 3) if c.bertscore else "–"}</td>')
        rows.append("<tr>" + "".join(cells) + "</tr>")
    numeric = ' class="n"'
    ths = "".join(f'<th scope="col"{numeric if i != 1 else ""}>{_wrap_words(h)}</th>' for i, h in enumerate(head))
    combined = cmp.settings.get("combined")
    order = " within budget first, then" if cmp.budget else ""
    notes = [
        "<strong>Coverage</strong>: the share of the model's uncertainty about the source's blanked key words that the "
        "summary removes (how much key content it carries).",
        "<strong>Fluency</strong>: 1 means the summary reads as easily as its source; lower means harder going.",
        *(["<strong>Agreement</strong>: the candidate's mean ROUGE-2 F1 against the other candidates; the typical "
            "candidate scores high, and a point every candidate leaves out costs none of them."] if has_agreement else []),
        "<strong>Combined</strong>: " + (esc(combined) if combined else "coverage and fluency weighted together") + ".",
    ]
    if cmp.budget:
        notes.append("A candidate over the word budget ranks after every candidate within it.")
    if has_rouge or has_bert:
        notes.append("ROUGE and BERTScore compare each candidate with the reference summaries given.")
    return (
        '<div class="scroll" role="region" aria-labelledby="ranking-cap" tabindex="0">'
        '<table class="ranking">'
        f'<caption id="ranking-cap">Candidates ranked{order} by combined score</caption>'
        f"<thead><tr>{ths}</tr></thead><tbody>{''.join(rows)}</tbody></table></div>\n"
        f'<ul class="notes">{"".join(f"<li>{n}</li>" for n in notes)}</ul>'
    )


def _chart(cmp: Comparison) -> str:
    """Horizontal grouped bars, one group per candidate, every bar labelled with its name and value."""
    width, label_w, bar_w, bar_h, gap = 760, 118, 520, 16, 6
    top = 34
    group_h = 24 + 3 * (bar_h + gap) + 14
    height = top + group_h * len(cmp.candidates) + 4
    parts = []
    for tick in (0, 0.25, 0.5, 0.75, 1):
        x = label_w + tick * bar_w
        parts.append(f'<line class="grid" x1="{x:.1f}" y1="{top - 8}" x2="{x:.1f}" y2="{height - 4}"/>')
        parts.append(f'<text class="tick" x="{x:.1f}" y="{top - 14}" text-anchor="middle">{tick:g}</text>')
    described = []
    for g, c in enumerate(cmp.candidates):
        y = top + g * group_h
        title = f"{c.rank}. {_short(c.name, 70)}" + (" (over budget)" if c.over_budget else "")
        parts.append(f'<text class="cand" x="0" y="{y + 15}">{esc(title)}</text>')
        values = {"coverage": c.coverage.share, "fluency": c.fluency.value, "combined": c.combined}
        shown = _shown(c)
        for k, (key, label) in enumerate(METRICS):
            by = y + 24 + k * (bar_h + gap)
            w = max(0.0, min(1.0, values[key])) * bar_w
            base = by + bar_h - 3
            parts.append(f'<text class="metric" x="{label_w - 8}" y="{base}" text-anchor="end">{label}</text>')
            parts.append(f'<rect class="bar {key}" x="{label_w}" y="{by}" width="{w:.1f}" height="{bar_h}" rx="2"/>')
            parts.append(f'<text class="value" x="{label_w + w + 6:.1f}" y="{base}">{shown[key]}</text>')
        described.append(f"{title}: " + ", ".join(f"{key} {shown[key]}" for key, _ in METRICS))
    desc = "Scale 0 to 1 (coverage as a share). " + "; ".join(described) + "."
    return (
        f'<figure class="chart"><svg xmlns="http://www.w3.org/2000/svg" role="img" viewBox="0 0 {width} {height}" '
        f'width="{width}" height="{height}" aria-labelledby="chart-title chart-desc" '
        f'aria-label="Bar chart of coverage, fluency and combined score for each candidate">'
        f'<title id="chart-title">Coverage, fluency and combined score of each candidate</title>'
        f'<desc id="chart-desc">{esc(desc)}</desc>'
        + "".join(parts)
        + "</svg>"
        "<figcaption>Each candidate's three scores on one scale from 0 to 1; the same numbers are in the ranking "
        "table above.</figcaption></figure>"
    )


def _shown(c) -> dict[str, str]:
    """The three headline scores as the page prints them (the table's formats)."""
    return {"coverage": _pct(c.coverage.share), "fluency": _num(c.fluency.value, 2), "combined": _num(c.combined, 3)}


def _state_cell(state: str) -> str:
    symbol, word, _ = STATE_TEXT[state]
    return f'<td class="st {state}"><span aria-hidden="true">{symbol}</span><span class="vh">{esc(word)}</span></td>'


def _legend(states) -> str:
    items = []
    for state in ("recovered", "known", "missed", UNSCORED):
        if state not in states:
            continue
        symbol, word, meaning = STATE_TEXT[state]
        items.append(f'<li><span class="st {state} swatch" aria-hidden="true">{symbol}</span>'
                     f"<span><strong>{esc(word)}</strong>: {esc(meaning)}</span></li>")
    return f'<ul class="legend" aria-label="What the grid\'s symbols mean">{"".join(items)}</ul>'


def _grid(cmp: Comparison) -> str:
    rows = cmp.grid
    if not rows:
        return "<p>No key words were chosen: the source has no content words to blank.</p>"
    present = {s for r in rows for s in r.states} | {"recovered", "known", "missed"}
    heads = "".join(
        f'<th scope="col" class="cand-col"><span class="rk">#{c.rank}</span> '
        f'<span class="nm">{_breakable(_middle(c.name, 30))}</span></th>'
        for c in cmp.candidates
    )
    body = []
    for r in rows:
        gap = ' class="gapword"' if r.missed_by_all else ""
        every = '<td class="allmiss">yes</td>' if r.missed_by_all else "<td></td>"
        body.append(
            f'<tr><th scope="row"{gap}>{esc(r.word)}</th><td class="n muted">{r.occurrences}</td>'
            + "".join(_state_cell(s) for s in r.states)
            + every
            + "</tr>"
        )
    missed = cmp.missed_by_all
    foot = []
    for state in ("recovered", "known", "missed"):
        symbol, word, _ = STATE_TEXT[state]
        counts = "".join(
            f'<td class="count">{sum(r.states[i] == state for r in rows)}</td>' for i in range(len(cmp.candidates))
        )
        last = f'<td class="count allmiss">{len(missed)}</td>' if state == "missed" else "<td></td>"
        foot.append(f'<tr><th scope="row" colspan="2">{esc(word.capitalize())} ({symbol})</th>{counts}{last}</tr>')
    listing = ", ".join(esc(w) for w in missed) if missed else "none: each key word is carried by some candidate"
    return (
        "<p>Each row is a key word the coverage check blanked in the source, most salient first; each column is a "
        "candidate, by rank. A cell tells what happened to that word with that summary in front.</p>"
        + _legend(present)
        + '<div class="scroll" role="region" aria-labelledby="grid-cap" tabindex="0"><table class="grid">'
        '<caption id="grid-cap">Each key word in each candidate (columns by rank)</caption>'
        f'<thead><tr><th scope="col">Key word</th><th scope="col" class="n">In source</th>{heads}'
        '<th scope="col" class="every">Missed by every candidate</th></tr></thead>'
        f"<tbody>{''.join(body)}</tbody><tfoot>{''.join(foot)}</tfoot></table></div>"
        f'<p class="allmiss-list"><strong>Missed by every candidate ({len(missed)}):</strong> {listing}</p>'
    )


def _candidates(cmp: Comparison) -> str:
    out = [
        "<p>Each sentence of each candidate, with the source sentences it draws on; follow a number to read that "
        "sentence in the source below.</p>"
    ]
    for c, links in zip(cmp.candidates, cmp.links):
        how = ("recorded by the summarizer" if links.origin == "provenance"
               else "found by word overlap (tf-idf), so treat them as pointers, not proof")
        flags = {s.text: s.flags for s in getattr(c.fluency, "sentences", ())}
        items = []
        for text, sources in zip(links.sentences, links.sources):
            if sources:
                refs = ", ".join(  # in reading order (the record keeps the closest first)
                    f'<a href="#{sentence_id(i)}" aria-label="source sentence {i + 1}">{i + 1}</a>'
                    for i in sorted(sources)
                )
                where = f'<span class="from">source {refs}</span>'
            else:
                where = '<span class="from">no matching source sentence</span>'
            flag = "".join(f' <span class="flag">{esc(f)}</span>' for f in flags.get(text, ()))
            items.append(f"<li><span class=\"ct\">{esc(text)}</span>{flag} {where}</li>")
        meta = [f"{c.words:,} words" + (f" of {c.budget:,}" if c.budget else "")]
        if c.over_budget:
            meta.append(f'<strong class="over">over budget by {c.words - c.budget:,}</strong>')
        meta.append(", ".join(f"{key} {value}" for key, value in _shown(c).items()))
        meta.append(f"links {how}")
        listing = f'<ol class="sents">{"".join(items)}</ol>' if items else "<p>This candidate is empty.</p>"
        out.append(
            f'<article class="cand" id="c-{c.rank}" aria-labelledby="c-{c.rank}-h">'
            f'<h3 id="c-{c.rank}-h"><span class="rk">#{c.rank}</span> {_breakable(c.name)}</h3>'
            f'<p class="meta">{" · ".join(meta)}</p>{listing}</article>'
        )
    return "\n".join(out)


def _source(cmp: Comparison) -> str:
    doc = cmp.document
    text = doc.text
    gap_words = set(cmp.missed_by_all)
    # key-word spans are character offsets in doc.text; blocks sit in it joined by "\n\n"
    starts, pos = [], 0
    for b in doc.blocks:
        starts.append(pos)
        pos += len(b.text) + 2
    marks: list[list[tuple[int, int, str]]] = [[] for _ in doc.blocks]
    for kw in cmp.keyword_set.keywords:
        for s, e in kw.spans:
            b = _block_of(starts, s)
            if b is not None and e <= starts[b] + len(doc.blocks[b].text):
                marks[b].append((s - starts[b], e - starts[b], kw.lemma))
    by_block: dict[int, list] = {}
    for sent in cmp.source_sentences:
        by_block.setdefault(sent.block, []).append(sent)
    levels = sorted({b.level for b in doc.blocks if b.kind == "heading"})
    out, lists, last_h = [], [], 2
    for b, block in enumerate(doc.blocks):
        inner_marks = sorted(marks[b])
        if block.kind != "item":
            out.append(_close_lists(lists))
        if block.kind == "heading":
            wanted = 3 + levels.index(block.level)
            h = min(6, wanted, last_h + 1)
            last_h = h
            out.append(f"<h{h}>{_marked(block.text, 0, len(block.text), inner_marks, gap_words)}</h{h}>")
            continue
        content = _sentences_html(block.text, by_block.get(b, []), inner_marks, gap_words)
        if block.kind == "paragraph":
            out.append(f"<p>{content}</p>")
        else:
            out.append(_open_item(lists, block.level) + content)
    out.append(_close_lists(lists))
    note = (
        '<p class="note">Key words are <mark class="kw">highlighted</mark>; the ones every candidate misses are '
        '<mark class="kw gap">highlighted and underlined</mark>. Small numbers count the sentences, as the '
        "candidates' links do.</p>"
    )
    return note + f'<div class="doc">{"".join(out)}</div>'


def _block_of(starts: list[int], offset: int) -> int | None:
    import bisect

    b = bisect.bisect_right(starts, offset) - 1
    return b if b >= 0 else None


def _open_item(lists: list[int], level: int) -> str:
    """Open an <li> at list depth ``level``, closing or opening <ul>s as needed."""
    out = []
    while lists and lists[-1] > level:
        out.append("</li></ul>")
        lists.pop()
    if lists and lists[-1] == level:
        out.append("</li><li>")
    else:
        out.append("<ul><li>")
        lists.append(level)
    return "".join(out)


def _close_lists(lists: list[int]) -> str:
    out = "</li></ul>" * len(lists)
    lists.clear()
    return out


def _sentences_html(text: str, sentences, marks, gap_words) -> str:
    out, pos = [], 0
    for sent in sentences:
        start = sent.start
        if text[start : start + len(sent.text)] != sent.text:  # offsets drifted: look for the sentence itself
            found = text.find(sent.text, pos)
            start = found if found >= 0 else start
        end = min(len(text), start + len(sent.text))
        if start < pos:
            continue
        out.append(_marked(text, pos, start, marks, gap_words))
        sid = sentence_id(sent.index)
        out.append(
            f'<span class="sent" id="{sid}"><sup class="sn" aria-hidden="true">{sent.index + 1}</sup>'
            f"{_marked(text, start, end, marks, gap_words)}</span>"
        )
        pos = end
    out.append(_marked(text, pos, len(text), marks, gap_words))
    return "".join(out)


def _marked(text: str, start: int, end: int, marks, gap_words) -> str:
    """text[start:end], escaped, with key-word spans inside it wrapped in <mark>."""
    out, pos = [], start
    for s, e, lemma in marks:
        s, e = max(s, pos), min(e, end)
        if s >= e:
            continue
        out.append(esc(text[pos:s]))
        cls = "kw gap" if lemma in gap_words else "kw"
        tip = f"key word: {lemma}" + (" (missed by every candidate)" if lemma in gap_words else "")
        out.append(f'<mark class="{cls}" title="{esc(tip)}">{esc(text[s:e])}</mark>')
        pos = e
    out.append(esc(text[pos:end]))
    return "".join(out)


def _settings(cmp: Comparison) -> str:
    labels = {
        "budget": "Word budget",
        "keywords": "Key words asked for",
        "keywords_chosen": "Key words chosen",
        "references": "Reference summaries",
        "source_words": "Source words",
        "source_sentences": "Source sentences",
        "candidates": "Candidates",
        "combined": "Combined score",
        "alignment": "Sentence links",
    }
    items = []
    for key, value in cmp.settings.items():
        if value is None:
            shown = "none"
        elif isinstance(value, int) and not isinstance(value, bool):
            shown = f"{value:,}"
        else:
            shown = value
        items.append(f"<dt>{esc(labels.get(key, key.replace('_', ' ').capitalize()))}</dt><dd>{esc(shown)}</dd>")
    sigs = "".join(f"<li><code>{esc(s)}</code></li>" for s in cmp.signatures)
    return (
        f'<dl class="settings">{"".join(items)}</dl>'
        "<h3>Signatures</h3><p>Every score's settings and the versions behind it; the same run with the same "
        "signatures gives the same numbers.</p>"
        f'<ul class="sigs">{sigs}</ul>'
    )


def _breakable(name: str) -> str:
    """An escaped name that may wrap after _ . - / (file names have few spaces)."""
    return re.sub(r"([_./-])(?=.)", r"\1<wbr>", esc(name))  # no entity contains any of these four


def _wrap_words(label: str) -> str:
    """A column label that may wrap between words but never inside one ("ROUGE-1 / F1")."""
    return " ".join(f'<span class="nw">{esc(w)}</span>' for w in label.split())


def _middle(text: str, width: int) -> str:
    """Shorten long names in the middle, where file names differ least ("annual_wa…t_good.txt")."""
    text = " ".join(str(text).split())
    if len(text) <= width:
        return text
    tail = (width - 1) // 2 + 3
    return text[: width - 1 - tail] + "…" + text[-tail:]


def _short(text: str, width: int) -> str:
    text = " ".join(str(text).split())
    return text if len(text) <= width else text[: width - 1] + "…"


# --------------------------------------------------------------------------- style


def stylesheet() -> str:
    """The page's CSS: custom properties from PALETTE, then our rules (no external resources)."""
    props = "\n".join(f"  --{name}: {value};" for name, value in PALETTE.items())
    return ":root {\n" + props + "\n}\n" + _RULES


_RULES = """
* { box-sizing: border-box; }
html { font-size: 100%; }
body { margin: 0; background: var(--paper); color: var(--ink);
  font: 1rem/1.55 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", "DejaVu Sans", Arial, sans-serif; }
.wrap { max-width: 76rem; margin: 0 auto; padding: 0 1.5rem; }
a { color: var(--accent); text-underline-offset: 0.15em; }
a:focus-visible, main:focus-visible, .scroll:focus-visible, .skip:focus {
  outline: 3px solid var(--focus); outline-offset: 2px; border-radius: 2px; }
a:focus:not(:focus-visible) { outline: none; }
main:focus { outline: none; }
.skip { position: absolute; left: 0.5rem; top: -4rem; background: var(--panel); color: var(--accent);
  padding: 0.5rem 0.9rem; border: 1px solid var(--rule); z-index: 10; }
.skip:focus { top: 0.5rem; }
.top { background: var(--panel); border-bottom: 1px solid var(--rule); padding: 1.4rem 0 0.4rem; }
.kicker { margin: 0; color: var(--muted); font-size: 0.85rem; letter-spacing: 0.06em; text-transform: uppercase; }
h1 { margin: 0.2rem 0 0.3rem; font-size: 1.7rem; line-height: 1.25; font-weight: 650; }
h1 .name { color: var(--accent); overflow-wrap: anywhere; }
.facts { margin: 0 0 0.6rem; color: var(--muted); }
nav ul { list-style: none; margin: 0; padding: 0; display: flex; flex-wrap: wrap; gap: 0.2rem 1.3rem; }
nav a { display: inline-block; padding: 0.3rem 0; }
main { padding-top: 1.2rem; padding-bottom: 1rem; }
.caution { background: var(--caution); border-left: 4px solid var(--focus); padding: 0.7rem 1rem; margin: 0 0 1.2rem; }
section { background: var(--panel); border: 1px solid var(--rule); border-radius: 6px; padding: 1.1rem 1.4rem 1.3rem;
  margin: 0 0 1.3rem; }
h2 { margin: 0 0 0.7rem; font-size: 1.3rem; line-height: 1.3; font-weight: 650; padding-bottom: 0.35rem;
  border-bottom: 2px solid var(--accent); display: inline-block; }
h3 { font-size: 1.08rem; margin: 1.2rem 0 0.4rem; }
p { margin: 0.5rem 0; }
.scroll { overflow-x: auto; }
table { border-collapse: collapse; font-variant-numeric: tabular-nums; }
caption { text-align: left; font-weight: 600; padding: 0 0 0.4rem; color: var(--muted); }
th, td { padding: 0.4rem 0.7rem; border-bottom: 1px solid var(--rule); text-align: left; vertical-align: top; }
thead th { border-bottom: 2px solid var(--ink); font-weight: 600; white-space: nowrap; }
tbody th { font-weight: 500; }
.n { text-align: right; white-space: nowrap; }
.strong { font-weight: 700; }
.muted { color: var(--muted); }
.ranking { width: 100%; }
.ranking th, .ranking td { padding: 0.45rem 0.5rem; }
.ranking thead th { white-space: normal; vertical-align: bottom; font-size: 0.92rem; }
.ranking tbody th { overflow-wrap: anywhere; min-width: 10rem; }
.nw { white-space: nowrap; }
.ranking tbody tr:hover { background: var(--paper); }
.over { color: var(--missed-ink); }
.tag { font-size: 0.82rem; font-weight: 600; color: var(--missed-ink); }
.notes { color: var(--muted); font-size: 0.92rem; margin: 0.8rem 0 0; padding-left: 1.2rem; }
.notes li { margin: 0.15rem 0; }
.chart { margin: 0; }
.chart svg { width: 100%; max-width: 760px; height: auto; display: block; }
.chart text { font-family: inherit; fill: var(--ink); }
.chart .cand { font-size: 14px; font-weight: 650; }
.chart .metric { font-size: 12.5px; fill: var(--muted); }
.chart .value { font-size: 12.5px; font-weight: 600; }
.chart .tick { font-size: 11.5px; fill: var(--muted); }
.chart .grid { stroke: var(--rule); stroke-width: 1; }
.chart .bar.coverage { fill: var(--bar-coverage); }
.chart .bar.fluency { fill: var(--bar-fluency); }
.chart .bar.combined { fill: var(--bar-combined); }
figcaption { color: var(--muted); font-size: 0.92rem; margin-top: 0.4rem; }
.legend { list-style: none; padding: 0; margin: 0.7rem 0 1.1rem; display: grid; gap: 0.5rem 1.6rem;
  grid-template-columns: repeat(auto-fit, minmax(22rem, 1fr)); font-size: 0.92rem; max-width: 60rem; }
.legend li { display: grid; grid-template-columns: 1.8rem 1fr; gap: 0.6rem; align-items: start; }
.swatch { display: block; text-align: center; border-radius: 3px; line-height: 1.5; }
.grid th, .grid td { padding: 0.22rem 0.6rem; }
.grid thead th { vertical-align: bottom; white-space: normal; }
.grid .cand-col { width: 8rem; min-width: 5.5rem; max-width: 9rem; text-align: center; font-size: 0.85rem;
  vertical-align: top; }
.grid .cand-col .rk { display: block; font-size: 0.95rem; }
.grid .cand-col .nm { display: block; font-weight: 400; color: var(--muted); overflow-wrap: anywhere; }
.grid tbody th { white-space: nowrap; }
.grid tbody tr:nth-child(5n) > * { border-bottom-color: var(--muted); }
.st { text-align: center; font-weight: 700; font-size: 1.05rem; }
.st.recovered { background: var(--recovered-bg); color: var(--recovered-ink); }
.st.known { background: var(--known-bg); color: var(--known-ink); }
.st.missed { background: var(--missed-bg); color: var(--missed-ink); }
.st.unscored { background: var(--unscored-bg); color: var(--unscored-ink); }
.grid td.st { border-left: 2px solid var(--panel); }
.gapword { color: var(--missed-ink); text-decoration: underline dashed; text-underline-offset: 0.2em; }
.grid tfoot th, .grid tfoot td { font-size: 0.92rem; }
.grid .count { text-align: center; font-variant-numeric: tabular-nums; }
.grid tfoot tr:first-child > * { border-top: 2px solid var(--ink); }
.grid .every { max-width: 7rem; white-space: normal; font-size: 0.85rem; text-align: center; vertical-align: top; }
.allmiss { color: var(--missed-ink); font-weight: 600; text-align: center; }
.allmiss-list { max-width: 60rem; }
.allmiss-list strong { color: var(--missed-ink); }
.vh { position: absolute; width: 1px; height: 1px; overflow: hidden; clip: rect(0 0 0 0); clip-path: inset(50%);
  white-space: nowrap; }
.cand { border-top: 1px solid var(--rule); padding-top: 0.2rem; }
.cand:first-of-type { border-top: none; }
.cand h3 .rk { color: var(--muted); font-weight: 600; margin-right: 0.2rem; }
.cand .meta { color: var(--muted); font-size: 0.92rem; margin-top: 0; }
.sents { margin: 0.4rem 0 0.6rem; padding-left: 1.8rem; max-width: 48rem; }
.sents li { margin: 0.3rem 0; }
.from { color: var(--muted); font-size: 0.85rem; white-space: nowrap; margin-left: 0.2rem; }
.from a { padding: 0 0.1rem; }
.flag { font-size: 0.8rem; font-weight: 600; color: var(--missed-ink); border: 1px solid var(--missed-ink);
  border-radius: 3px; padding: 0 0.3rem; white-space: nowrap; }
.note { color: var(--muted); font-size: 0.92rem; }
.doc { max-width: 46rem; }
.doc h3, .doc h4, .doc h5, .doc h6 { margin: 1.3rem 0 0.4rem; }
.doc ul { padding-left: 1.4rem; }
.doc li { margin: 0.2rem 0; }
mark.kw { background: var(--mark); color: var(--ink); padding: 0 0.08em; border-radius: 2px; }
mark.kw.gap { background: var(--gap); text-decoration: underline dashed var(--missed-ink);
  text-underline-offset: 0.2em; }
.sn { color: var(--muted); font-size: 0.68rem; margin-right: 0.15rem; font-variant-numeric: tabular-nums; }
.sent { scroll-margin-top: 2rem; }
.sent:target { background: var(--target); outline: 2px solid var(--focus); outline-offset: 1px; }
.settings { display: grid; grid-template-columns: max-content 1fr; gap: 0.25rem 1.2rem; margin: 0; }
.settings dt { color: var(--muted); }
.settings dd { margin: 0; }
.sigs { padding-left: 1.2rem; }
.sigs code { font-size: 0.85rem; overflow-wrap: anywhere; }
footer { color: var(--muted); font-size: 0.88rem; padding-bottom: 2rem; }
@media (max-width: 40rem) {
  .wrap { padding: 0 0.8rem; }
  section { padding: 0.9rem 0.8rem; }
}
@media print {
  body { background: none; color: #000; font-size: 10.5pt; }
  .skip, nav { display: none; }
  .top, section { background: none; border: none; padding: 0; }
  section { margin-bottom: 1.2rem; }
  a { color: inherit; text-decoration: none; }
  a[href]::after { content: none; }
  .caution { background: none; border: 1px solid #000; }
  .scroll { overflow: visible; }
  thead { display: table-header-group; }
  tr, li, .legend li, .cand h3, .sent { break-inside: avoid; page-break-inside: avoid; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  .st, mark.kw, .sent:target { background: none; }
  mark.kw { text-decoration: underline; }
  .chart svg { max-width: 100%; }
}
"""
