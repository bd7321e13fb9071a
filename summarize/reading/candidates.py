"""Candidate summaries to score: files of any readable format, "-" for standard input, or
JSON-lines files with one candidate a line; and the warnings worth printing before scoring them.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from pathlib import Path

from scoring.text import count_words
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


def candidate_warnings(source_text: str, candidates: Sequence[tuple[str, str]]) -> list[str]:
    """Warnings worth printing before scoring: empty candidates, candidates longer than the source."""
    source_words = count_words(source_text)
    out = []
    for name, body in candidates:
        if not body.strip():
            out.append(f"warning: candidate '{name}' is empty; it scores 0")
        elif count_words(body) > source_words:
            words = count_words(body)
            out.append(f"warning: candidate '{name}' ({words} words) is longer than its source ({source_words})")
    return out
