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
from summarize import report
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


def _words_cell(c) -> str:
    if c.budget is None:
        return f"<td class=\"n\">{c.words:,}</td>"
    if c.over_budget:
        return (f'<td class="n over"><strong>{c.words:,} / {c.budget:,}</strong>'
                f'<br><span class="tag">over budget by {c.words - c.budget:,}</span></td>')
    return f'<td class="n">{c.words:,} / {c.budget:,}</td>'


def _ranking(cmp: Comparison) -> str:
    """The ranked table: the same columns and formats as the terminal table and the CSV."""
    cols = [col for col in report.columns(cmp.candidates) if col.title and col.shown(cmp.candidates)]
    head = ["Rank", "Candidate", "Words" + (" / budget" if cmp.budget else "")] + [col.title for col in cols]
    rows = []
    for c in cmp.candidates:
        cells = [
            f'<td class="n">{c.rank}</td>',
            f'<th scope="row"><a href="#c-{c.rank}">{_breakable(c.name)}</a></th>',
            _words_cell(c),
        ]
        cells += [f'<td class="n{" strong" if col.key == "combined" else ""}">{esc(report.cell(col.kind, col.value(c)))}</td>'
                  for col in cols]
        rows.append("<tr>" + "".join(cells) + "</tr>")
    numeric = ' class="n"'
    ths = "".join(f'<th scope="col"{numeric if i != 1 else ""}>{_wrap_words(h)}</th>' for i, h in enumerate(head))
    order = " within budget first, then" if cmp.budget else ""
    notes = [f"<strong>{esc(label)}</strong>: {esc(meaning)}" for label, meaning in report.describe(cmp.candidates)]
    if cmp.budget:
        notes.append("A candidate over the word budget ranks after every candidate within it.")
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
    return {"coverage": report.cell("pct", c.coverage.share), "fluency": report.cell("num2", c.fluency.value),
            "combined": report.cell("num3", c.combined)}


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
    """The page's CSS: custom properties from PALETTE, then our rules (``page.css``, shipped with
    the package; no external resources)."""
    from importlib.resources import files

    props = "\n".join(f"  --{name}: {value};" for name, value in PALETTE.items())
    return ":root {\n" + props + "\n}\n" + files("summarize").joinpath("page.css").read_text(encoding="utf-8")

