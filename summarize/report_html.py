"""The comparison page: one self-contained HTML file for editors, rendered from a Comparison.

It answers "which one, and why": the ranking with what put the first candidate above the
second, a chart of every score that decides the ranking, the key-word grid, the candidates side
by side with their key words marked, the word-level differences of drafts, and the source.
The text views are ``page_texts``'s; this module holds the page, its tables and chart, and the
palette.

No network: no scripts at all, no external fonts, stylesheets or images; the chart is inline
SVG, and the choice of columns side by side is check boxes read by CSS. Every piece of document
text goes through ``page_texts.esc`` (``html.escape``), and a Content-Security-Policy
``<meta>`` (default-src 'none'; only inline styles and data: images) means that even a slip in
escaping could not run script or fetch anything.

Accessibility follows WCAG 2.1: ``lang``, headings in order, table captions and header scopes,
a skip link, a list of the views with a way back to it from each, visible focus outlines, state
shown by symbol and text as well as colour (1.4.1), text contrast of at least 4.5:1 (1.4.3) and
graphics of at least 3:1 (1.4.11), all computed from ``PALETTE`` by the tests. A print
stylesheet drops what only works on screen, keeps table rows whole and prints the columns side
by side two to a row.
"""

from __future__ import annotations

from pathlib import Path

from scoring.base import project_version
from summarize import page_texts as texts
from summarize import report
from summarize.compare import UNSCORED, Comparison, present_states
from summarize.files import check_writable, write_atomic
from summarize.page_texts import breakable, esc, middle, short, wrap_words
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
    # chart bars: the scorers' columns in table order, then the totals
    "bar-1": "#2b6a8a",
    "bar-2": "#7b6a22",
    "bar-3": "#8a3f6e",
    "bar-4": "#3c7045",
    "bar-5": "#8a4b22",
    "bar-6": "#5a5f66",
    "bar-total-1": "#4f4a8c",
    "bar-total-2": "#24413f",
}
BARS = tuple(k for k in PALETTE if k.startswith("bar-") and not k.startswith("bar-total"))
TOTAL_BARS = tuple(k for k in PALETTE if k.startswith("bar-total"))

# (foreground, background) pairs used for text: WCAG 2.1 SC 1.4.3 asks at least 4.5:1.
TEXT_PAIRS = (
    ("ink", "paper"), ("ink", "panel"), ("muted", "paper"), ("muted", "panel"),
    ("accent", "paper"), ("accent", "panel"), ("ink", "caution"), ("accent", "caution"),
    ("recovered-ink", "recovered-bg"), ("known-ink", "known-bg"), ("missed-ink", "missed-bg"),
    ("unscored-ink", "unscored-bg"), ("missed-ink", "panel"), ("recovered-ink", "panel"), ("ink", "mark"),
    ("ink", "gap"), ("ink", "target"), ("accent", "target"), ("muted", "target"),
)
# (graphic, background) pairs: WCAG 2.1 SC 1.4.11 asks at least 3:1 for bars and focus rings.
GRAPHIC_PAIRS = tuple((b, "panel") for b in BARS + TOTAL_BARS) + (
    ("focus", "panel"), ("focus", "paper"), ("focus", "target"), ("missed-ink", "gap"),
)

CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'"


# --------------------------------------------------------------------------- the page


def sections(cmp: Comparison) -> list[tuple[str, str, str]]:
    """The page's views in order: (id, title, content)."""
    out = [
        ("ranking", "Ranking", _ranking(cmp)),
        ("chart", "What decides the ranking", _chart(cmp)),
        ("side", "Side by side", texts.side_by_side(cmp, _meta)),
        ("keywords", "Key words by candidate", _grid(cmp)),
    ]
    if cmp.drafts:
        out.append(("drafts", "Drafts word by word", texts.drafts_view(cmp)))
    out += [("source", "Source text", texts.source_view(cmp)), ("settings", "Settings and signatures", _settings(cmp))]
    return out


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
    views = sections(cmp)
    nav = "".join(f'<li><a href="#{sid}">{esc(title)}</a></li>' for sid, title, _ in views)
    back = '<p class="to-views"><a href="#views">Back to the list of views</a></p>'
    body = "\n".join(
        f'<section id="{sid}" aria-labelledby="{sid}-h" tabindex="-1">\n<h2 id="{sid}-h">{esc(title)}</h2>\n'
        f"{content}\n{back}\n</section>"
        for sid, title, content in views
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
{texts.side_rules(cmp)}
</style>
</head>
<body>
<a class="skip" href="#main">Skip to the report</a>
<header class="top">
<div class="wrap">
<p class="kicker">boildown comparison report</p>
<h1>Summaries of <span class="name">{esc(cmp.source_name)}</span> compared</h1>
<p class="facts">{' · '.join(esc(f) for f in facts)}</p>
<nav id="views" aria-label="Views of this report" tabindex="-1"><ul>{nav}</ul></nav>
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


# --------------------------------------------------------------------------- ranking and chart


def _words_cell(c) -> str:
    if c.budget is None:
        return f"<td class=\"n\">{c.words:,}</td>"
    if c.over_budget:
        return (f'<td class="n over"><strong>{c.words:,} / {c.budget:,}</strong>'
                f'<br><span class="tag">over budget by {c.words - c.budget:,}</span></td>')
    return f'<td class="n">{c.words:,} / {c.budget:,}</td>'


def _ranking(cmp: Comparison) -> str:
    """The ranked table (the same columns and formats as the terminal table and the CSV), then
    what put the first candidate above the second."""
    cols = [col for col in report.columns(cmp.candidates) if col.title and col.shown(cmp.candidates)]
    head = ["Rank", "Candidate", "Words" + (" / budget" if cmp.budget else "")] + [col.title for col in cols]
    rows = []
    for c in cmp.candidates:
        cells = [
            f'<td class="n">{c.rank}</td>',
            f'<th scope="row"><a href="#c-{c.rank}">{breakable(c.name)}</a></th>',
            _words_cell(c),
        ]
        cells += [f'<td class="n{" strong" if col.scorer is None else ""}">{esc(report.cell(col.kind, col.value(c)))}'
                  "</td>" for col in cols]
        rows.append("<tr>" + "".join(cells) + "</tr>")
    numeric = ' class="n"'
    ths = "".join(f'<th scope="col"{numeric if i != 1 else ""}>{wrap_words(h)}</th>' for i, h in enumerate(head))
    order = " within budget first, then" if cmp.budget else ""
    basis = ("ordering score (relative to these candidates; the combined score is each one's own)"
             if any(c.ordering is not None for c in cmp.candidates) else "combined score")
    notes = [f"<strong>{esc(label)}</strong>: {esc(meaning)}" for label, meaning in report.describe(cmp.candidates)]
    if cmp.budget:
        notes.append("A candidate over the word budget ranks after every candidate within it.")
    separated = cmp.separation
    why = f'<p class="separated"><strong>First and second.</strong> {esc(separated.text)}</p>' if separated else ""
    return (
        '<div class="scroll" role="region" aria-labelledby="ranking-cap" tabindex="0">'
        '<table class="ranking">'
        f'<caption id="ranking-cap">Candidates ranked{order} by {basis}</caption>'
        f"<thead><tr>{ths}</tr></thead><tbody>{''.join(rows)}</tbody></table></div>\n"
        f"{why}"
        f'<ul class="notes">{"".join(f"<li>{n}</li>" for n in notes)}</ul>'
    )


def _bar_classes(cols) -> dict[str, str]:
    """Each charted column's bar colour: the scorers' columns in order, then the totals."""
    parts = [c for c in cols if c.scorer is not None]
    totals = [c for c in cols if c.scorer is None]
    out = {c.key: BARS[k % len(BARS)] for k, c in enumerate(parts)}
    out.update({c.key: TOTAL_BARS[k % len(TOTAL_BARS)] for k, c in enumerate(totals)})
    return out


def _meta(c) -> str:
    """A candidate's words and every score that decides the ranking, as one line."""
    words = f"{c.words:,} words" + (f" of {c.budget:,}" if c.budget else "")
    if c.over_budget:
        words += f' <strong class="over">over budget by {c.words - c.budget:,}</strong>'
    scores = [f"{esc(col.title)} {esc(report.cell(col.kind, col.value(c)))}"
              for col in report.ranking_columns([c]) if col.value(c) is not None]
    return " · ".join([words] + scores)


def _chart(cmp: Comparison) -> str:
    """Horizontal grouped bars: one group per candidate, one bar for every score that decides the
    ranking (``report.ranking_columns``), each labelled with its name and value; a legend."""
    cols = report.ranking_columns(cmp.candidates)
    if not cols:
        return "<p>No score decides this ranking.</p>"
    colour = _bar_classes(cols)
    width, label_w, bar_w, bar_h, gap = 760, 118, 520, 16, 6
    top = 34
    group_h = 24 + len(cols) * (bar_h + gap) + 14
    height = top + group_h * len(cmp.candidates) + 4
    parts = []
    for tick in (0, 0.25, 0.5, 0.75, 1):
        x = label_w + tick * bar_w
        parts.append(f'<line class="grid" x1="{x:.1f}" y1="{top - 8}" x2="{x:.1f}" y2="{height - 4}"/>')
        parts.append(f'<text class="tick" x="{x:.1f}" y="{top - 14}" text-anchor="middle">{tick:g}</text>')
    described = []
    for g, c in enumerate(cmp.candidates):
        y = top + g * group_h
        title = f"{c.rank}. {short(c.name, 70)}" + (" (over budget)" if c.over_budget else "")
        parts.append(f'<text class="cand" x="0" y="{y + 15}">{esc(title)}</text>')
        shown = []
        for k, col in enumerate(cols):
            value = col.value(c)
            by = y + 24 + k * (bar_h + gap)
            base = by + bar_h - 3
            w = max(0.0, min(1.0, value)) * bar_w if value is not None else 0.0
            text = report.cell(col.kind, value)
            parts.append(f'<text class="metric" x="{label_w - 8}" y="{base}" text-anchor="end">{esc(col.title)}</text>')
            parts.append(f'<rect class="bar {colour[col.key]}" x="{label_w}" y="{by}" width="{w:.1f}" '
                         f'height="{bar_h}" rx="2"/>')
            parts.append(f'<text class="value" x="{label_w + w + 6:.1f}" y="{base}">{esc(text)}</text>')
            shown.append(f"{col.title} {text}")
        described.append(f"{title}: " + ", ".join(shown))
    names = ", ".join(col.title for col in cols)
    desc = "Scale 0 to 1 (shares as fractions). " + "; ".join(described) + "."
    legend = "".join(f'<li><svg class="key" viewBox="0 0 14 14" width="14" height="14" aria-hidden="true">'
                     f'<rect class="bar {colour[col.key]}" width="14" height="14" rx="2"/></svg>{esc(col.title)}'
                     f'{" (the total)" if col.scorer is None else ""}</li>' for col in cols)
    return (
        f'<ul class="chart-legend" aria-label="Bars in the chart">{legend}</ul>'
        f'<figure class="chart"><svg xmlns="http://www.w3.org/2000/svg" role="img" viewBox="0 0 {width} {height}" '
        f'width="{width}" height="{height}" aria-labelledby="chart-title chart-desc">'
        f'<title id="chart-title">{esc(names)} of each candidate</title>'
        f'<desc id="chart-desc">{esc(desc)}</desc>'
        + "".join(parts)
        + "</svg>"
        f"<figcaption>Every score that decides the ranking ({esc(names)}), on one scale from 0 to 1; the same "
        "numbers are in the ranking table, and the ranking section says which of them put the first candidate "
        "above the second.</figcaption></figure>"
    )


# --------------------------------------------------------------------------- the key-word grid


def _grid(cmp: Comparison) -> str:
    rows = cmp.grid
    if not rows:
        return "<p>No key words were chosen: the source has no content words to blank.</p>"
    present = present_states(s for r in rows for s in r.states)
    heads = "".join(
        f'<th scope="col" class="cand-col"><span class="rk">#{c.rank}</span> '
        f'<span class="nm">{breakable(middle(c.name, 30))}</span></th>'
        for c in cmp.candidates
    )
    body = []
    for r in rows:
        gap = ' class="gapword"' if r.missed_by_all else ""
        every = '<td class="allmiss">yes</td>' if r.missed_by_all else "<td></td>"
        body.append(
            f'<tr><th scope="row"{gap}>{esc(r.word)}</th><td class="n muted">{r.occurrences}</td>'
            + "".join(texts.state_cell(s) for s in r.states)
            + every
            + "</tr>"
        )
    missed = cmp.missed_by_all
    foot = []
    for state in present:
        if state == UNSCORED:
            continue
        entry = texts.state_text(state)
        counts = "".join(
            f'<td class="count">{sum(r.states[i] == state for r in rows)}</td>' for i in range(len(cmp.candidates))
        )
        last = f'<td class="count allmiss">{len(missed)}</td>' if state == "missed" else "<td></td>"
        foot.append(f'<tr><th scope="row" colspan="2">{esc(entry.label.capitalize())} ({esc(entry.mark)})</th>'
                    f"{counts}{last}</tr>")
    listing = ", ".join(esc(w) for w in missed) if missed else "none: each key word is carried by some candidate"
    return (
        "<p>Each row is a key word the coverage check blanked in the source, most salient first; each column is a "
        "candidate, by rank. A cell tells what happened to that word with that summary in front.</p>"
        + texts.legend(present, "What the grid's symbols mean")
        + '<div class="scroll" role="region" aria-labelledby="grid-cap" tabindex="0"><table class="grid">'
        '<caption id="grid-cap">Each key word in each candidate (columns by rank)</caption>'
        f'<thead><tr><th scope="col">Key word</th><th scope="col" class="n">In source</th>{heads}'
        '<th scope="col" class="every">Missed by every candidate</th></tr></thead>'
        f"<tbody>{''.join(body)}</tbody><tfoot>{''.join(foot)}</tfoot></table></div>"
        f'<p class="allmiss-list"><strong>Missed by every candidate ({len(missed)}):</strong> {listing}</p>'
    )


# --------------------------------------------------------------------------- settings


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
        "ordering": "Ordering score",
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


# --------------------------------------------------------------------------- style


def stylesheet() -> str:
    """The page's CSS: custom properties from PALETTE, then our rules (``page.css``, shipped with
    the package; no external resources)."""
    from importlib.resources import files

    props = "\n".join(f"  --{name}: {value};" for name, value in PALETTE.items())
    return ":root {\n" + props + "\n}\n" + files("summarize").joinpath("page.css").read_text(encoding="utf-8")

