"""The comparison page's text views, and the escaping every piece of document text goes through.

* Side by side: the candidates in columns (all of them up to ``SIDE_COLUMNS``; with more, the
  first two, and check boxes choose which are shown: CSS ``:has()``, no script), each sentence
  with the key words it names marked in the grid's states and the source sentences it draws on.
* Drafts word by word: for candidates that are drafts of one another (``summarize.drafts``),
  the words only the first has (struck through) and only the second has (underlined).
* The source: its headings, paragraphs and lists, key words marked, every sentence numbered
  and anchored ("s-1", "s-2", ...) for the candidates' links.

Every text from a document goes through ``esc`` (``html.escape`` with quotes), the only way
text reaches the page; ``report_html`` builds the rest of the page from these parts.
"""

from __future__ import annotations

import bisect
import html
import re

from summarize.compare import Comparison, present_states, sentence_id, state_text

SIDE_COLUMNS = 4  # up to this many candidates are all shown in columns; with more, the first two


def esc(text) -> str:
    """Escape any text for element content and quoted attribute values."""
    return html.escape(str(text), quote=True)


def breakable(name: str) -> str:
    """An escaped name that may wrap after _ . - / : or a shortening's … (file names have few
    spaces), never inside the runs between them."""
    return re.sub(r"([_./:…-])(?=.)", r"\1<wbr>", esc(name))  # no entity contains any of these


def wrap_words(label: str) -> str:
    """A label that may wrap between words but never inside one ("ROUGE-1 / F1")."""
    return " ".join(f'<span class="nw">{esc(w)}</span>' for w in label.split())


def middle(text: str, width: int) -> str:
    """Shorten long names in the middle, where file names differ least ("annual_wa…t_good.txt")."""
    text = " ".join(str(text).split())
    if len(text) <= width:
        return text
    tail = (width - 1) // 2 + 3
    return text[: width - 1 - tail] + "…" + text[-tail:]


def short(text: str, width: int) -> str:
    text = " ".join(str(text).split())
    return text if len(text) <= width else text[: width - 1] + "…"


def legend(states, label: str) -> str:
    """The legend of the key-word states that occur (only those), in legend order."""
    items = []
    for state in present_states(states):
        entry = state_text(state)
        meaning = f": {esc(entry.meaning)}" if entry.meaning else ""
        items.append(f'<li><span class="st {esc(state)} swatch" aria-hidden="true">{esc(entry.mark)}</span>'
                     f"<span><strong>{esc(entry.label)}</strong>{meaning}</span></li>")
    return f'<ul class="legend" aria-label="{esc(label)}">{"".join(items)}</ul>'


def state_cell(state: str) -> str:
    entry = state_text(state)
    return (f'<td class="st {esc(state)}"><span aria-hidden="true">{esc(entry.mark)}</span>'
            f'<span class="vh">{esc(entry.label)}</span></td>')


# --------------------------------------------------------------------------- side by side


def shown_at_first(n: int) -> int:
    """How many columns the side-by-side view shows before the reader chooses."""
    return n if n <= SIDE_COLUMNS else 2


def side_rules(cmp: Comparison) -> str:
    """The rules that hide a column whose box is unchecked (a column a link points at shows)."""
    if len(cmp.candidates) <= 2:
        return ""
    return "\n".join(f"#side:has(#show-{c.rank}:not(:checked)) #c-{c.rank}:not(:target) {{ display: none; }}"
                     for c in cmp.candidates)


def side_by_side(cmp: Comparison, meta) -> str:
    """The candidates in columns. ``meta(candidate)`` gives each column's line of scores."""
    n = len(cmp.candidates)
    states = {m.state for per in cmp.marks for sentence in per for m in sentence}
    out = [
        "<p>Each column is a candidate, best ranked first. Key words the candidate names are marked with what the "
        "coverage check found for them with this candidate in front (the states of the key-word grid); the "
        "numbers after each sentence are the source sentences it draws on.</p>"
    ]
    if states:
        out.append(legend(states, "What the marks on key words mean"))
    if n > 2:
        first = shown_at_first(n)
        boxes = "".join(
            f'<label><input type="checkbox" id="show-{c.rank}"{" checked" if k < first else ""}> '
            f'#{c.rank} {esc(middle(c.name, 40))}</label>'
            for k, c in enumerate(cmp.candidates)
        )
        out.append(f'<fieldset class="pick"><legend>Columns shown (tick two to compare them)</legend>{boxes}</fieldset>')
    columns = [_column(cmp, i, meta) for i in range(n)]
    out.append(f'<div class="cols" role="region" aria-label="Candidates in columns" tabindex="0">{"".join(columns)}</div>')
    if not cmp.drafts and n > 1:
        out.append('<p class="note">No two candidates are drafts of one another (sharing at least half their words '
                   "in order), so there is no word-by-word view.</p>")
    return "".join(out)


def _column(cmp: Comparison, i: int, meta) -> str:
    c, links, marks = cmp.candidates[i], cmp.links[i], cmp.marks[i]
    flags = {s.text: s.flags for s in getattr(c.fluency, "sentences", ())}
    items = []
    for text, sources, found in zip(links.sentences, links.sources, marks):
        if sources:
            refs = ", ".join(  # in reading order (the record keeps the closest first)
                f'<a href="#{sentence_id(k)}" aria-label="source sentence {k + 1}">{k + 1}</a>' for k in sorted(sources)
            )
            where = f'<span class="from">source {refs}</span>'
        else:
            where = '<span class="from">no matching source sentence</span>'
        flag = "".join(f' <span class="flag">{esc(f)}</span>' for f in flags.get(text, ()))
        items.append(f'<li><span class="ct">{_marked_sentence(text, found)}</span>{flag} {where}</li>')
    how = ("recorded by the summarizer" if links.origin == "provenance"
           else "found by word overlap (tf-idf): pointers, not proof")
    listing = f'<ol class="sents">{"".join(items)}</ol>' if items else "<p>This candidate is empty.</p>"
    only = cmp.named_only_by(i) if len(cmp.candidates) > 1 else ()
    extra = []
    if only:
        extra.append(f'<p class="only"><strong>Names key words no other candidate names:</strong> '
                     f'{esc(", ".join(only))}</p>')
    weakest = _weakest(c, links)
    if weakest:
        extra.append(f'<p class="weak"><strong>Weakest sentence (fluency):</strong> {esc(weakest)}</p>')
    return (
        f'<article class="col" id="c-{c.rank}" aria-labelledby="c-{c.rank}-h">'
        f'<h3 id="c-{c.rank}-h"><span class="rk">#{c.rank}</span> {breakable(c.name)}</h3>'
        f'<p class="meta">{meta(c)} · links {how}</p>{listing}{"".join(extra)}</article>'
    )


def _weakest(candidate, links) -> str | None:
    """The fluency result's weakest sentence, when it names one (text, an object with .text, or
    a sentence index)."""
    weakest = getattr(candidate.fluency, "weakest", None)
    if weakest is None:
        return None
    if isinstance(weakest, int) and not isinstance(weakest, bool):
        return links.sentences[weakest] if 0 <= weakest < len(links.sentences) else None
    return str(getattr(weakest, "text", weakest)) or None


def _marked_sentence(text: str, marks) -> str:
    """A candidate sentence, escaped, its key words marked with their state (by symbol and words
    as well as colour)."""
    out, pos = [], 0
    for m in marks:
        if m.start < pos:
            continue
        entry = state_text(m.state)
        out.append(esc(text[pos : m.start]))
        out.append(f'<mark class="kc {esc(m.state)}" title="key word {esc(m.word)}: {esc(entry.label)}">'
                   f'{esc(text[m.start : m.end])}<span class="sy" aria-hidden="true">{esc(entry.mark)}</span>'
                   f'<span class="vh"> (key word, {esc(entry.label)})</span></mark>')
        pos = m.end
    out.append(esc(text[pos:]))
    return "".join(out)


# --------------------------------------------------------------------------- drafts word by word


def drafts_view(cmp: Comparison) -> str:
    """The word-level difference of each pair of drafts."""
    out = [
        "<p>These candidates share at least half their words in order, so they are drafts of one another. "
        "Words only the first has are <del>struck through</del>; words only the second has are "
        "<ins>underlined</ins>; the rest they share.</p>"
    ]
    for pair in cmp.drafts:
        a, b = cmp.candidates[pair.first], cmp.candidates[pair.second]
        runs = []
        for op, text in pair.runs:
            if op == "same":
                runs.append(esc(text))
            elif op == "only_first":
                runs.append(f'<del><span class="vh">only in #{a.rank}: </span>{esc(text)}</del>')
            else:
                runs.append(f'<ins><span class="vh">only in #{b.rank}: </span>{esc(text)}</ins>')
        gone, added = pair.changed_words
        out.append(
            f'<article class="diff"><h3><span class="rk">#{a.rank}</span> {breakable(a.name)} and '
            f'<span class="rk">#{b.rank}</span> {breakable(b.name)}</h3>'
            f'<p class="meta">{100 * pair.ratio:.0f}% of their words in common; {gone:,} only in #{a.rank}, '
            f"{added:,} only in #{b.rank}</p>"
            f'<p class="difftext">{" ".join(runs)}</p></article>'
        )
    return "".join(out)


# --------------------------------------------------------------------------- the source


def source_view(cmp: Comparison) -> str:
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
            b = bisect.bisect_right(starts, s) - 1
            if b >= 0 and e <= starts[b] + len(doc.blocks[b].text):
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
            h = min(6, 3 + levels.index(block.level), last_h + 1)
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
        out.append(
            f'<span class="sent" id="{sentence_id(sent.index)}"><sup class="sn" aria-hidden="true">{sent.index + 1}'
            f"</sup>{_marked(text, start, end, marks, gap_words)}</span>"
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

