"""The manifest of an output folder: ``manifest.jsonl`` (an append-only log, one JSON record per
document and run) and ``manifest.csv`` (the latest record per path, rebuilt at the end of a run).

A record is a ``Record``; its line is ``Record.to_json()``, keys in the order of the fields (the
format manifests already on disk use, so they still resume). Only the run's own process
appends: one complete line per record, one ``write``, fsynced. A torn last line (a run killed
mid-write) is cut away when the next run opens the manifest. That repair and the reading is
``open_log``, which the assess results log (``summarize.assess.log``) uses too.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import os
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, fields
from pathlib import Path

from summarize.files import fsync_dir, write_atomic

MANIFEST_NAME = "manifest.jsonl"
CSV_NAME = "manifest.csv"
CSV_COLUMNS = ("path", "status", "words", "budget", "source_words", "combined", "coverage", "fluency", "agreement",
               "summary_file", "sha256", "settings_key", "error", "finished", "summary")
_CSV_SCORES = ("combined", "coverage", "fluency", "agreement")


@dataclass(frozen=True)
class Record:
    """One document in one run: done (``summary`` and its facts) or failed (``error``).

    The fields are the keys of its manifest line, in this order; ``reused_from`` (the path whose
    record a copy with the same content reused) is written only when set. ``settings``,
    ``scores``, ``signatures`` and ``timings`` are JSON objects, to be treated as read-only.
    """

    path: str
    sha256: str | None = None
    bytes: int | None = None  # the content's size
    settings: dict | None = None
    settings_key: str | None = None
    status: str | None = None  # "done" or "failed"
    summary_file: str | None = None  # relative to the output folder
    summary: str | None = None
    words: int | None = None
    budget: int | None = None
    source_words: int | None = None
    notice: str | None = None
    scores: dict | None = None
    signatures: dict | None = None
    encoding: str | None = None
    warnings: tuple[str, ...] | None = ()
    error: str | None = None
    timings: dict = field(default_factory=dict)
    worker: str | None = None  # host:pid of the process that summarized it
    reused_from: str | None = None
    engine: str | None = None
    run: str | None = None
    finished: str | None = None
    version: str | None = None

    @property
    def done(self) -> bool:
        return self.status == "done"

    def to_json(self) -> str:
        """The record's manifest line, without its newline."""
        data = {f.name: getattr(self, f.name) for f in fields(self)}
        if self.reused_from is None:
            del data["reused_from"]
        return json.dumps(data, ensure_ascii=False)

    @classmethod
    def from_json(cls, line: str | Mapping) -> "Record":
        """A record from its manifest line (or the line's parsed object); keys it does not know
        are left out and missing ones take their defaults. Raises ValueError for a line that is
        not a JSON object with a "path"."""
        data = json.loads(line) if isinstance(line, str) else line
        if not isinstance(data, Mapping) or "path" not in data:
            raise ValueError("a manifest record is a JSON object with a \"path\"")
        values = {f.name: data[f.name] for f in fields(cls) if f.name in data}
        if isinstance(values.get("warnings"), list):
            values["warnings"] = tuple(values["warnings"])
        return cls(**values)


class Manifest:
    """``manifest.jsonl``: read and repaired on open, appended by this process only."""

    def __init__(self, out_dir: Path):
        self.out_dir = Path(out_dir)
        self.path = self.out_dir / MANIFEST_NAME
        self.csv_path = self.out_dir / CSV_NAME
        self.records: list[Record] = []
        self._latest: dict[tuple, Record] = {}  # (path, sha256, settings_key) -> its latest record
        self._by_content: dict[tuple, Record] = {}  # (sha256, settings_key) -> latest success
        self._fd: int | None = None

    def open(self) -> list[str]:
        """Cut a torn last line, load the records, open for appending; return notices."""
        self._fd, notices = open_log(self.path, lambda line: self._index(Record.from_json(line)),
                                     redo="that document will be done again")
        return notices

    def close(self) -> None:
        if self._fd is not None:
            os.close(self._fd)
            self._fd = None

    def _index(self, record: Record) -> None:
        self.records.append(record)
        self._latest[(record.path, record.sha256, record.settings_key)] = record
        if record.done and record.sha256:
            self._by_content[(record.sha256, record.settings_key)] = record

    def done(self, path: str, sha256: str, key: str) -> Record | None:
        """The latest success record for exactly this path, content and settings."""
        record = self._latest.get((path, sha256, key))
        return record if record is not None and record.done else None

    def done_elsewhere(self, sha256: str, key: str) -> Record | None:
        """A success record for the same content and settings, under any path."""
        return self._by_content.get((sha256, key))

    def latest(self, path: str, sha256: str | None, key: str) -> Record | None:
        return self._latest.get((path, sha256, key))

    def append(self, record: Record | Mapping, *, supersede: bool = False) -> bool:
        """Append one complete line (one write, fsync); False when the manifest already holds
        this fact: a success for the same (path, content, settings) without ``supersede``, or
        the same failure again. ``record`` is a Record or its JSON object (as read_manifest
        returns it)."""
        if not isinstance(record, Record):
            record = Record.from_json(record)
        previous = self.latest(record.path, record.sha256, record.settings_key)
        if previous is not None and not supersede:
            if previous.done:
                return False
            if record.status == "failed" and previous.error == record.error:
                return False
        view = memoryview((record.to_json() + "\n").encode("utf-8"))
        end = os.lseek(self._fd, 0, os.SEEK_END)
        try:
            while view:  # one write for a regular file; a short write (disk full) goes on
                written = os.write(self._fd, view)
                view = view[written:]
            os.fsync(self._fd)
        except OSError as exc:  # disk full or gone: take the partial line back, so no record is torn
            with contextlib.suppress(OSError):
                os.ftruncate(self._fd, end)
                os.fsync(self._fd)
            raise OSError(exc.errno, f"cannot append to the manifest '{self.path}': {exc.strerror or exc}") from exc
        self._index(record)
        return True

    def write_csv(self) -> Path:
        """Rebuild ``manifest.csv``: the latest record per path, sorted by path."""
        latest = {record.path: record for record in self.records}
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        writer.writerow(CSV_COLUMNS)
        for path in sorted(latest):
            writer.writerow(["" if value is None else value for value in _csv_row(latest[path])])
        write_atomic(self.csv_path, buffer.getvalue())
        return self.csv_path


def open_log(path: Path, take: Callable[[str], object], *, redo: str,
             unreadable: tuple[type[Exception], ...] = (ValueError,)) -> tuple[int, list[str]]:
    """Repair and read the JSON-lines log at ``path``, then open it for appending.

    A torn last line (a run killed mid-write) is cut away and the cut fsynced, with a notice
    ending in ``redo`` (what the next run will do again). ``take`` gets every complete line that
    is not blank; a line it refuses with one of ``unreadable`` is counted in a notice. The file is
    opened append-only (created when missing) and its folder fsynced. Returns the descriptor and
    the notices. Used by the batch manifest and by the assess results log."""
    notices = []
    if path.exists():
        data = path.read_bytes()
        if data and not data.endswith(b"\n"):
            keep = data.rfind(b"\n") + 1
            with open(path, "r+b") as fh:
                fh.truncate(keep)
                fh.flush()
                os.fsync(fh.fileno())
            data = data[:keep]
            notices.append(f"cut an incomplete last line from {path} (a run was stopped while writing it); {redo}")
        refused = 0
        for line in data.decode("utf-8", "replace").splitlines():
            if not line.strip():
                continue
            try:
                take(line)
            except unreadable:
                refused += 1
        if refused:
            notices.append(f"ignored {refused} unreadable line(s) in {path}")
    fd = os.open(path, os.O_WRONLY | os.O_APPEND | os.O_CREAT, 0o644)
    fsync_dir(path.parent)
    return fd, notices


def _csv_row(record: Record) -> list:
    scores = record.scores or {}
    return [scores.get(column) if column in _CSV_SCORES else getattr(record, column) for column in CSV_COLUMNS]


def read_manifest(out_dir) -> list[dict]:
    """Every complete record of ``out_dir/manifest.jsonl`` as its JSON object, in order (a torn
    last line is left out)."""
    path = Path(out_dir) / MANIFEST_NAME
    if not path.exists():
        return []
    records = []
    for line in path.read_text(encoding="utf-8", errors="replace").splitlines(keepends=True):
        if line.endswith("\n") and line.strip():
            with contextlib.suppress(ValueError):
                records.append(json.loads(line))
    return records


def latest_records(out_dir) -> dict[str, dict]:
    """The latest record per path (what ``manifest.csv`` shows)."""
    latest: dict[str, dict] = {}
    for record in read_manifest(out_dir):
        latest[record["path"]] = record
    return latest
