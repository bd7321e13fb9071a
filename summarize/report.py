"""Rendering ranked candidates: a terminal table, CSV, JSON, and the missed-key-word notes.

Library functions that return strings; the CLI only prints them.
"""

from __future__ import annotations

import csv
import io
import json

from scoring import registry
from scoring.base import Column
from scoring.combine import CombineConfig, OrderConfig

CAUTION = (
    "Scores are estimates. A summary can mislead by what it leaves out: legal, medical, "
    "financial or safety decisions need the source itself and the judgement of a qualified person."
)

IDENTITY = ("rank", "name", "words", "budget", "over_budget")
UNIT_KINDS = ("pct", "num2", "num3", "num4")  # kinds whose values lie on the 0-1 scale
COMBINED = Column("combined", lambda c: c.combined, "num3", "combined", "Combined")
# pool-relative, not on the 0-1 scale (kind "signed2"): the chart of ranking scores leaves it out
ORDERING = Column("ordering", lambda c: c.ordering, "signed2", "ordering", "Ordering")


def columns(candidates) -> list[Column]:
    """The score columns of these candidates' rows, in order: each scorer's columns (registry
    order) for the scorers that ran, the combined score after the scorers that read the source
    or the pool, then those that read references. The one list the CSV, the terminal table and
    the page are rendered from."""
    ran = [name for name in registry.names() if any(name in c.scores for c in candidates)]
    before = [name for name in ran if registry.scorer_class(name).needs != "references"]
    after = [name for name in ran if name not in before]
    out = [(name, col) for name in before for col in registry.scorer_class(name).columns]
    out.append((None, COMBINED))
    out.append((None, ORDERING))
    out += [(name, col) for name in after for col in registry.scorer_class(name).columns]
    return [_Bound(name, col) for name, col in out]


def ranking_columns(candidates) -> list["_Bound"]:
    """The shown columns that decide the ranking, in table order: those of every scorer that reads
    the source or the pool, and the candidate's own totals (the combined score). All lie on the
    0-1 scale (the page's chart draws them); scores against references only inform."""
    return [col for col in columns(candidates) if col.shown(candidates) and col.kind in UNIT_KINDS
            and (col.scorer is None or registry.scorer_class(col.scorer).needs != "references")]


class _Bound:
    """A column together with the scorer whose result it reads (None: the candidate itself)."""

    def __init__(self, scorer: str | None, column: Column):
        self.scorer, self.column = scorer, column
        self.key, self.kind, self.header, self.title = column.key, column.kind, column.header, column.title

    def value(self, candidate):
        """The raw value, or None where the scorer had nothing to say for this candidate."""
        if self.scorer is None:
            return self.column.get(candidate)
        result = candidate.scores.get(self.scorer)
        return self.column.get(result) if result is not None else None

    def shown(self, candidates) -> bool:
        """Whether a table shows it: it has a heading and some candidate has a value."""
        return bool(self.header) and any(self.value(c) is not None for c in candidates)


def cell(kind: str, value) -> str:
    """A value as the tables and the page print it."""
    if value is None:
        return "\u2013"
    if kind == "pct":
        return f"{100 * value:5.1f}%".strip()
    if kind in ("num2", "num3", "num4"):
        return f"{value:.{kind[-1]}f}"
    if kind == "signed2":
        return f"{value:+.2f}"
    if kind == "words":
        return ", ".join(value) if value else "-"
    return str(value)


def rows(candidates) -> list[dict]:
    """One flat record per candidate (the CSV's rows): identity, then every score column."""
    cols = columns(candidates)
    out = []
    for c in candidates:
        row = {"rank": c.rank, "name": c.name, "words": c.words, "budget": c.budget if c.budget is not None else "",
               "over_budget": c.over_budget}
        for col in cols:
            value = col.value(c)
            if value is None:
                row[col.key] = ""
            elif col.kind == "words":
                row[col.key] = " ".join(value)
            else:
                row[col.key] = round(value, 4) if isinstance(value, float) else value
        out.append(row)
    return out


def describe(candidates, combine=None) -> list[tuple[str, str]]:
    """(label, what it means) for every score the candidates carry, then the combined score and,
    where the pool has one, the ordering score: the one wording the terminal legend, the help
    and the page use."""
    present = [name for name in registry.names() if any(c.scores.get(name) is not None for c in candidates)]
    out = [(registry.scorer_class(n).label, registry.scorer_class(n).description) for n in present]
    formula = (combine or (candidates[0].combine if candidates else CombineConfig())).describe()
    out.append(("Combined", formula + "."))
    if any(c.ordering is not None for c in candidates):
        order = next(c.order for c in candidates if c.ordering is not None)
        out.append(("Ordering", order.describe() + "; the candidates are ranked by it."))
    elif candidates:
        out.append(("Ordering", "none: it needs 3 or more candidates; ranked by the combined score."))
    return out


def legend(width: int = 76) -> str:
    """The scores a ranking uses, for ``--help``: each scorer that reads the source or the pool,
    then the combined score, one wrapped paragraph each (the same words as the tables)."""
    import textwrap

    items = [(n, registry.scorer_class(n).description) for n in registry.names()
             if registry.scorer_class(n).needs != "references"]
    items.append(("combined", CombineConfig().describe() + "; the number to compare across runs."))
    items.append(("ordering", OrderConfig().describe() + "; with 3 or more candidates it ranks them, else "
                  "the combined score does; a summary over --words ranks last."))
    pad = max(len(n) for n, _ in items) + 2
    return "\n".join(textwrap.fill(text, width, initial_indent=name.ljust(pad), subsequent_indent=" " * pad)
                     for name, text in items)


def to_json(candidates, **context) -> str:
    payload = dict(context)
    payload["candidates"] = [c.to_dict() for c in candidates]
    payload["caution"] = CAUTION
    return json.dumps(payload, indent=2, ensure_ascii=False, default=str)


def to_csv(candidates) -> str:
    records = rows(candidates)
    buffer = io.StringIO()
    fields = list(records[0]) if records else list(IDENTITY)
    writer = csv.DictWriter(buffer, fieldnames=fields, lineterminator="\n")
    writer.writeheader()
    writer.writerows(records)
    return buffer.getvalue()


def table(candidates, combine=None) -> str:
    """The ranked table for a terminal, with a legend (``combine``: the CombineConfig used)."""
    cols = [col for col in columns(candidates) if col.shown(candidates)]
    header = ["#", "candidate", "words"] + [col.header for col in cols]
    lines = []
    for c in candidates:
        words = f"{c.words}/{c.budget}" if c.budget is not None else str(c.words)
        if c.over_budget:
            words += " OVER"
        lines.append([str(c.rank), _short(c.name, 28), words] + [cell(col.kind, col.value(c)) for col in cols])
    widths = [max(len(h), *(len(line[i]) for line in lines)) if lines else len(h) for i, h in enumerate(header)]
    fmt = lambda cells: "  ".join(c.rjust(w) if i != 1 else c.ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))
    out = [fmt(header), fmt(["-" * w for w in widths])] + [fmt(line) for line in lines]
    out.append("")
    out += [f"{label.lower()}: {meaning}" for label, meaning in describe(candidates, combine)]
    return "\n".join(out)


def explanations(candidates, limit: int = 12) -> str:
    """Per candidate: key words it let the model recover, and the ones still missed."""
    out = []
    for c in candidates:
        cov = c.coverage
        out.append(f"[{c.rank}] {c.name}")
        out.append(f"  recovered with this summary ({len(cov.recovered)}): {_words(cov.recovered, limit)}")
        out.append(f"  still missed ({len(cov.missed)}): {_words(cov.missed, limit)}")
        weakest = getattr(c.fluency, "weakest", None)
        if weakest is not None:
            out.append(f"  weakest sentence ({weakest.index + 1}; {weakest.why}): {_short(weakest.text, 80)}")
        flagged = [s for s in c.fluency.flagged if weakest is None or s.text != weakest.text]
        for s in flagged[:3]:
            out.append(f"  flagged sentence ({', '.join(s.flags)}): {_short(s.text, 80)}")
        if c.over_budget:
            out.append(f"  over budget: {c.words} words for a budget of {c.budget}")
    return "\n".join(out)


def signatures(candidates) -> str:
    return "\n".join(str(s) for s in candidates[0].signatures()) if candidates else ""


def _words(words, limit: int) -> str:
    if not words:
        return "-"
    shown = ", ".join(words[:limit])
    return shown + (f", ... (+{len(words) - limit})" if len(words) > limit else "")


def _short(text: str, width: int) -> str:
    text = " ".join(text.split())
    return text if len(text) <= width else text[: width - 1] + "…"


def summary_json(result) -> str:
    """A Summary as JSON (the summarize command's --json), with the caution."""
    payload = result.to_dict()
    payload["caution"] = CAUTION
    return json.dumps(payload, indent=2, ensure_ascii=False, default=str) + "\n"
