"""``results.jsonl``: the append-only log of an assess output folder, one JSON record per row
and run (its scores, or the one-line reason it failed), and ``results.csv``, the latest record
of each row of the current input.

Only the parent process writes it: one complete line per ``write``, fsynced; a torn last line
(a run killed mid-write) is cut when the next run opens the log. A row is keyed by what its
scores depend on (its id, system, summary, references and the source's content hash) and by the
settings key: a record with both keys and status "scored" is reused by the next run.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import os
from pathlib import Path

from summarize.batch.manifest import open_log
from summarize.files import write_atomic

LOG_NAME, CSV_NAME = "results.jsonl", "results.csv"
IDENTITY = ("id", "system", "status", "words", "where")


def row_key(row, source_sha: str | None) -> str:
    """What a row's scores depend on besides the settings, as a short digest."""
    facts = [row.id, row.system, row.summary, list(row.references), source_sha, row.problem]
    return hashlib.sha256(json.dumps(facts, ensure_ascii=False).encode()).hexdigest()[:20]


class ResultsLog:
    """The log, read and repaired on open, appended by this process only."""

    def __init__(self, out_dir: Path):
        self.out_dir = Path(out_dir)
        self.path = self.out_dir / LOG_NAME
        self.csv_path = self.out_dir / CSV_NAME
        self.latest: dict[tuple[str, str], dict] = {}  # (key, settings_key) -> latest record
        self._fd: int | None = None

    def open(self) -> list[str]:
        """Cut a torn last line, load the records, open for appending; return notices."""
        self._fd, notices = open_log(self.path, self._take, redo="that row will be scored again",
                                     unreadable=(ValueError, KeyError, TypeError))
        return notices

    def _take(self, line: str) -> None:
        record = json.loads(line)
        self.latest[(record["key"], record["settings_key"])] = record

    def close(self) -> None:
        if self._fd is not None:
            os.close(self._fd)
            self._fd = None

    def scored(self, key: str, settings_key: str) -> dict | None:
        record = self.latest.get((key, settings_key))
        return record if record is not None and record["status"] == "scored" else None

    def append(self, record: dict) -> bool:
        """Append one line; False (nothing written) when the same failure is already the latest."""
        previous = self.latest.get((record["key"], record["settings_key"]))
        if (previous is not None and record["status"] == "failed" and previous["status"] == "failed"
                and previous.get("error") == record.get("error")):
            return False
        view = memoryview((json.dumps(record, ensure_ascii=False) + "\n").encode("utf-8"))
        while view:
            view = view[os.write(self._fd, view):]
        os.fsync(self._fd)
        self.latest[(record["key"], record["settings_key"])] = record
        return True


def write_csv(path: Path, records: list[dict]) -> Path:
    """The rows' latest records as CSV: identity, every value column met, the error, the signatures."""
    columns: list[str] = []
    for record in records:
        for name in record.get("values") or {}:
            if name not in columns and name != "words":
                columns.append(name)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow([*IDENTITY, *columns, "error", "signatures"])
    for r in records:
        values = r.get("values") or {}
        signatures = " | ".join(f"{k}: {v}" for k, v in (r.get("signatures") or {}).items())
        writer.writerow([r["id"], r["system"], r["status"], values.get("words", ""), r["where"],
                         *(values.get(c, "") for c in columns), r.get("error") or "", signatures])
    return write_atomic(path, buffer.getvalue(), what="the results CSV")
