"""Rendering ranked candidates: a terminal table, CSV, JSON, and the missed-key-word notes.

Library functions that return strings; the CLI only prints them.
"""

from __future__ import annotations

import csv
import io
import json

CAUTION = (
    "Scores are estimates. A summary can mislead by what it leaves out: legal, medical, "
    "financial or safety decisions need the source itself and the judgement of a qualified person."
)

COLUMNS = ("rank", "name", "words", "budget", "coverage", "fluency", "agreement", "combined")
REFERENCE_COLUMNS = ("rouge1", "rouge2", "rougeLsum", "bertscore")


def rows(candidates) -> list[dict]:
    """One flat record per candidate (the CSV's rows and the table's cells)."""
    out = []
    for c in candidates:
        row = {
            "rank": c.rank,
            "name": c.name,
            "words": c.words,
            "budget": c.budget if c.budget is not None else "",
            "over_budget": c.over_budget,
            "coverage": round(c.coverage.share, 4),
            "coverage_logprob_gain": c.coverage.logprob_gain,
            "coverage_accuracy_gain": c.coverage.accuracy_gain,
            "fluency": round(c.fluency.value, 4),
            "perplexity": c.fluency.perplexity,
            "agreement": round(c.agreement.value, 4) if c.agreement is not None else "",
            "combined": round(c.combined, 4),
            "recovered": " ".join(c.coverage.recovered),
            "missed": " ".join(c.coverage.missed),
        }
        if c.rouge is not None:
            for key in ("rouge1", "rouge2", "rougeL", "rougeLsum"):
                row[key] = round(c.rouge.f1(key), 4)
        if c.bertscore is not None:
            row["bertscore"] = round(c.bertscore.f1, 4)
        out.append(row)
    return out


def to_json(candidates, **context) -> str:
    payload = dict(context)
    payload["candidates"] = [c.to_dict() for c in candidates]
    payload["caution"] = CAUTION
    return json.dumps(payload, indent=2, ensure_ascii=False, default=str)


def to_csv(candidates) -> str:
    records = rows(candidates)
    buffer = io.StringIO()
    fields = list(records[0]) if records else list(COLUMNS)
    writer = csv.DictWriter(buffer, fieldnames=fields, lineterminator="\n")
    writer.writeheader()
    writer.writerows(records)
    return buffer.getvalue()


def _pct(value: float) -> str:
    return f"{100 * value:5.1f}%"


def table(candidates, combine=None) -> str:
    """The ranked table for a terminal, with a legend (``combine``: the CombineConfig used)."""
    from scoring.combine import CombineConfig

    records = rows(candidates)
    has_ref = any("rouge1" in r for r in records)
    has_agreement = any(c.agreement is not None for c in candidates)
    header = ["#", "candidate", "words", "coverage", "fluency"] + (["agreement"] if has_agreement else []) + ["combined"]
    if has_ref:
        header += ["R-1", "R-2", "R-Lsum", "BERTSc"]
    lines = []
    for r, c in zip(records, candidates):
        words = f"{r['words']}/{r['budget']}" if r["budget"] != "" else str(r["words"])
        if c.over_budget:
            words += " OVER"
        cells = [str(r["rank"]), _short(r["name"], 28), words, _pct(r["coverage"]), f"{r['fluency']:.2f}"]
        cells += [f"{r['agreement']:.3f}"] if has_agreement else []
        cells += [f"{r['combined']:.3f}"]
        if has_ref:
            cells += [f"{r.get(k, 0):.3f}" for k in ("rouge1", "rouge2", "rougeLsum", "bertscore")]
        lines.append(cells)
    widths = [max(len(h), *(len(line[i]) for line in lines)) if lines else len(h) for i, h in enumerate(header)]
    fmt = lambda cells: "  ".join(c.rjust(w) if i != 1 else c.ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))
    out = [fmt(header), fmt(["-" * w for w in widths])] + [fmt(line) for line in lines]
    out.append("")
    out.append("coverage: share of the model's uncertainty about the source's blanked key words that the")
    out.append("summary removes; fluency: 1 = reads as easily as the source;")
    if has_agreement:
        out.append("agreement: mean ROUGE-2 F1 against the other candidates (the typical candidate scores high);")
    out.append(f"combined: {(combine or CombineConfig()).describe(has_agreement)}.")
    return "\n".join(out)


def explanations(candidates, limit: int = 12) -> str:
    """Per candidate: key words it let the model recover, and the ones still missed."""
    out = []
    for c in candidates:
        cov = c.coverage
        out.append(f"[{c.rank}] {c.name}")
        out.append(f"  recovered with this summary ({len(cov.recovered)}): {_words(cov.recovered, limit)}")
        out.append(f"  still missed ({len(cov.missed)}): {_words(cov.missed, limit)}")
        flagged = c.fluency.flagged
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
