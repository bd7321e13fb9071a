"""A Comparison as terminal text, JSON and CSV (the page is ``report_html``'s).

Sentence numbers count from 1 everywhere a reader or a script sees them (JSON fields named
``number`` and ``source_numbers``, the page's anchors "s-1", "s-2", ...), so a number in the
JSON is the number printed on the page.
"""

from __future__ import annotations

import csv
import io

from summarize import report
from summarize.compare import Comparison, present_states, sentence_id, state_text


def grid_text(comparison: Comparison) -> str:
    """The key-word grid for a terminal: rows key words, columns candidates by rank."""
    rows = comparison.grid
    cols = [f"#{c.rank}" for c in comparison.candidates]
    if not rows:
        return "key words: none were chosen (the source has no content words to blank)"
    width = max(len("key word"), *(len(r.word) for r in rows))
    widths = [max(3, len(h)) for h in cols]
    line = lambda first, cells: "  ".join([first.ljust(width)] + [c.center(w) for c, w in zip(cells, widths)]).rstrip()
    out = [line("key word", cols), line("-" * width, ["-" * w for w in widths])]
    for r in rows:
        out.append(line(r.word, [state_text(s).symbol for s in r.states]))
    out.append("")
    for state in present_states(s for r in rows for s in r.states):
        entry = state_text(state)
        out.append(f"{entry.symbol} {entry.label}: {entry.meaning}".rstrip(": "))
    out.append("columns are the candidates by rank, as in the table above")
    missed = comparison.missed_by_all
    out.append(f"missed by every candidate ({len(missed)}): {', '.join(missed) if missed else 'none'}")
    return "\n".join(out)


def table(comparison: Comparison) -> str:
    """The whole terminal report: ranked table, what separated the first two, key-word grid,
    notes, signatures, caution."""
    ranked = list(comparison.candidates)
    separated = comparison.separation
    parts = [
        f"source: {comparison.source_name} ({comparison.document.word_count} words)"
        + (f", budget {comparison.budget} words" if comparison.budget else ""),
        "",
        report.table(ranked),
    ]
    if separated is not None:
        parts += ["", f"first and second: {separated.text}"]
    parts += [
        "",
        grid_text(comparison),
        "",
        report.explanations(ranked),
        "",
        "\n".join(str(s) for s in comparison.signatures),
        report.CAUTION,
    ]
    return "\n".join(parts)


def sentence_records(comparison: Comparison) -> dict[str, dict]:
    """Per candidate: where its links come from and its sentences, each numbered from 1 with the
    numbers of the source sentences it draws on and the key words it names."""
    out = {}
    for links, marks in zip(comparison.links, comparison.marks):
        out[links.name] = {
            "origin": links.origin,
            "sentences": [
                {"number": k + 1, "text": text, "source_numbers": [i + 1 for i in sources],
                 "keywords": [{"word": m.word, "state": m.state} for m in _distinct(found)]}
                for k, (text, sources, found) in enumerate(zip(links.sentences, links.sources, marks))
            ],
        }
    return out


def _distinct(marks):
    """The first mark of each key word, in order."""
    first = {}
    for m in marks:
        first.setdefault(m.word, m)
    return list(first.values())


def to_json(comparison: Comparison) -> str:
    """Everything as JSON: report.to_json's candidates plus key words, grid, sentence links, what
    separated the first two and the drafts' differences."""
    names = [c.name for c in comparison.candidates]
    separated = comparison.separation
    return report.to_json(
        list(comparison.candidates),
        source=comparison.source_name,
        source_words=comparison.document.word_count,
        budget=comparison.budget,
        settings=comparison.settings,
        signatures=[s.to_dict() for s in comparison.signatures],
        separated=separated.to_dict() if separated else None,
        keywords=[
            {"word": r.word, "salience": r.salience, "occurrences": r.occurrences, "states": dict(zip(names, r.states))}
            for r in comparison.grid
        ],
        missed_by_every_candidate=list(comparison.missed_by_all),
        source_sentences=[
            {"number": s.index + 1, "id": sentence_id(s.index), "text": s.text, "block": s.block,
             "section": s.section, "linkable": ok}
            for s, ok in zip(comparison.source_sentences, comparison.linkable or [True] * len(comparison.source_sentences))
        ],
        links=sentence_records(comparison),
        drafts=[pair.to_dict(names) for pair in comparison.drafts],
    )


CSV_KEYWORD_FIELDS = ("keyword", "salience", "occurrences", "state")


def to_csv(comparison: Comparison) -> str:
    """One CSV in two sections (the first column, ``section``): "ranking" rows are the ranked
    table (``report.rows``: the same columns as ``score --csv``), "keywords" rows are the grid in
    long form, one row per key word and candidate (rank, name, key word, its salience and
    occurrences in the source, the state). A spreadsheet's filter or pivot gives either back."""
    ranked = list(comparison.candidates)
    ranking = report.rows(ranked)
    fields = ["section"] + (list(ranking[0]) if ranking else list(report.IDENTITY)) + list(CSV_KEYWORD_FIELDS)
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=fields, lineterminator="\n", restval="")
    writer.writeheader()
    writer.writerows({"section": "ranking", **row} for row in ranking)
    for r in comparison.grid:
        for c, state in zip(ranked, r.states):
            writer.writerow({"section": "keywords", "rank": c.rank, "name": c.name, "keyword": r.word,
                             "salience": r.salience, "occurrences": r.occurrences, "state": state})
    return buffer.getvalue()

