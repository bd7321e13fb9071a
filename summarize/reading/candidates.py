"""Candidate summaries to score: files of any readable format, "-" for standard input, or
JSON-lines files with one candidate a line.
"""

from __future__ import annotations

import json
from pathlib import Path

from summarize.reading.document import ReadError
from summarize.reading.entry import parse_text, read_document


def read_candidates(specs, stdin_text: str | None = None) -> list[tuple[str, str]]:
    """Candidate summaries as (name, text): files of any readable format, "-" for standard
    input, or a .jsonl file with one JSON object per line holding "text" (or "summary") and
    optionally "name" (or "id"). Empty candidates are kept (they score zero)."""
    out: list[tuple[str, str]] = []
    for spec in specs:
        spec = str(spec)
        if spec == "-":
            text = stdin_text or ""
            out.append(("stdin", " ".join(text.split()) and parse_text(text).text))
            continue
        if spec.lower().endswith(".jsonl"):
            path = Path(spec)
            if not path.is_file():
                raise ReadError(f"'{spec}' does not exist; give a path to a JSON-lines file of candidates")
            for n, line in enumerate(path.read_text(encoding="utf-8", errors="replace").splitlines(), 1):
                if not line.strip():
                    continue
                try:
                    record = json.loads(line)
                    text = record.get("text", record.get("summary"))
                except (ValueError, AttributeError):
                    record, text = None, None
                if not isinstance(text, str):
                    raise ReadError(
                        f"'{spec}' line {n} is not a JSON object with a \"text\" field; "
                        'write one {"name": ..., "text": ...} per line'
                    )
                name = str(record.get("name", record.get("id", f"{path.stem}:{n}")))
                out.append((name, " ".join(text.split())))
            continue
        try:
            out.append((Path(spec).name, read_document(spec).text))
        except ReadError as exc:
            if "is empty" in str(exc):
                out.append((Path(spec).name, ""))
            else:
                raise
    return out
