"""Batch runs: summarize every document under a folder, in parallel, resumable, nothing lost.

``run_batch(input_dir, out_dir, words=150)`` finds the documents under ``input_dir``
(recursively), summarizes each one in a pool of worker processes (or on a Dask cluster) and
writes, under ``out_dir``:

* one summary file per document, mirroring its relative path
  (``sub/report.pdf`` -> ``sub/report.summary.txt``);
* ``manifest.jsonl``, an append-only log with one JSON record per document and run: path,
  SHA-256 of the content, settings, summary, scores, signatures and timings, or the error with
  its reason;
* ``manifest.csv``, the latest record per path, rebuilt from the manifest at the end of a run.

Crash safety, by construction:

* only this (parent) process writes: workers return results, never touch ``out_dir``;
* a summary file is written to a temporary file in its folder, fsynced, then ``os.replace``d;
* a manifest record is one complete line, appended with one ``write`` and fsynced; Ctrl-C
  and SIGTERM stop a run between two records; a torn last line (a run killed mid-write) is
  cut away when the next run opens the manifest, and leftover temporary files are removed;
* a document whose (content hash, settings) already has a success record is skipped (its
  summary file restored from the record when missing); the settings hold the job's ``code()``
  where it has one (the real job's version and combined formula), so records made by other
  code are not reused; the parent checks the manifest
  before every append, so a success is never recorded twice for the same (path, content,
  settings) unless ``force`` asks for a fresh one (the newer record supersedes the older);
* ``out_dir/.boildown.lock`` (created with O_CREAT|O_EXCL, held with ``flock``, holding the
  PID) keeps two runs from writing the same folder; a lock left by a dead process is taken
  over with a message.

The worker reads the very bytes that the parent hashed (they travel with the task), so the
recorded hash always describes the content that was summarized, and a Dask worker needs no
shared file system.
"""

from __future__ import annotations

import contextlib
import csv
import errno
import fcntl
import fnmatch
import hashlib
import io
import json
import os
import signal
import socket
import stat
import tempfile
import threading
import time
from collections import deque
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, ClassVar

from summarize import reading
from summarize.files import TMP_SUFFIX, fsync_dir, write_atomic

MANIFEST_NAME = "manifest.jsonl"
CSV_NAME = "manifest.csv"
LOCK_NAME = ".boildown.lock"
SUMMARY_SUFFIX = ".summary.txt"
ENGINES = ("local", "dask")
MAX_DEFAULT_WORKERS = 4
"""Each worker holds its own copy of the models (about 1 GB of memory), so the default number
of workers is the number of cores, at most this many."""
DASK_INSTALL = 'pip install "dask[distributed]==2026.8.0" "distributed==2026.8.0"'
DEFAULT_INCLUDE = tuple(f"*{suffix}" for suffix in reading.EXTENSIONS if suffix)
"""The file types ``read_document`` reads (files without an extension are left out here, so
a folder's README or LICENSE is not summarized; add ``--include`` patterns to take them)."""

_RETRIES_AFTER_WORKER_DEATH = 1


class BatchError(ValueError):
    """A one-line, user-facing reason a batch run cannot start."""


class BatchInterrupted(KeyboardInterrupt):
    """The run was stopped (Ctrl-C or SIGTERM); ``result`` holds the tally so far."""

    def __init__(self, result: "BatchResult"):
        super().__init__("interrupted")
        self.result = result


# --------------------------------------------------------------------------------------------
# Settings and results
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class BatchConfig:
    """How a batch run summarizes and schedules; validated when built."""

    words: int | None = None
    ratio: float | None = None
    candidates: int = 3  # fewer than `summarize`'s 8: a batch trades a little quality for speed
    include: tuple[str, ...] = DEFAULT_INCLUDE
    exclude: tuple[str, ...] = ()
    workers: int | None = None
    force: bool = False
    engine: str = "local"
    scheduler: str | None = None
    any_language: bool = False

    def __post_init__(self):
        object.__setattr__(self, "include", tuple(self.include) or DEFAULT_INCLUDE)
        object.__setattr__(self, "exclude", tuple(self.exclude))
        if self.words is None and self.ratio is None:
            raise BatchError("give a word budget (--words N) or a ratio of each document (--ratio R)")
        if self.words is not None and self.ratio is not None:
            raise BatchError("give a word budget (--words) or a ratio (--ratio), not both")
        whole = isinstance(self.words, int) and not isinstance(self.words, bool)
        if self.words is not None and (not whole or self.words < 1):
            raise BatchError(f"the word budget must be a whole number of at least 1, got {self.words!r}")
        if self.ratio is not None and not 0 < self.ratio < 1:
            raise BatchError(f"the ratio must lie between 0 and 1 (a fraction of each document), got {self.ratio}")
        from summarize.recipes import RECIPES

        if not isinstance(self.candidates, int) or not 1 <= self.candidates <= len(RECIPES):
            raise BatchError(f"--candidates must lie between 1 and {len(RECIPES)} (one per recipe), "
                             f"got {self.candidates!r}")
        if self.workers is not None and (not isinstance(self.workers, int) or self.workers < 1):
            raise BatchError(f"workers must be at least 1, got {self.workers!r}")
        if self.engine not in ENGINES:
            raise BatchError(f"unknown engine {self.engine!r}; use one of {', '.join(ENGINES)}")
        if self.engine == "dask" and not self.scheduler:
            raise BatchError(
                "--engine dask needs --scheduler tcp://HOST:PORT, the address `dask scheduler` prints"
            )
        if self.engine == "dask" and self.workers is not None:
            raise BatchError("--workers sets the local engine's processes; with --engine dask the cluster's "
                             "workers decide (`dask worker ... --nthreads N`)")
        if self.engine != "dask" and self.scheduler:
            raise BatchError("--scheduler is only used with --engine dask; add --engine dask")
        for pattern in self.include + self.exclude:
            if not isinstance(pattern, str) or not pattern.strip():
                raise BatchError(f"an --include/--exclude pattern must be a non-empty glob, got {pattern!r}")

    def settings(self, job) -> dict:
        """What a summary depends on; a record is reused only under identical settings. A job that
        names its code (``job.code()``: version and formula) adds it, so an upgrade recomputes."""
        out = {"job": job.name, "words": self.words, "ratio": self.ratio, "candidates": self.candidates}
        if hasattr(job, "code"):
            out["code"] = job.code()
        return out


def settings_key(settings: dict) -> str:
    """A short, stable digest of the settings (the manifest's resume key, with the hash)."""
    canonical = json.dumps(settings, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(canonical.encode()).hexdigest()[:16]


@dataclass(frozen=True)
class BatchResult:
    """The tally of one run. ``done`` counts documents summarized (or reused from an identical
    copy) in this run, ``skipped`` those already done by an earlier run."""

    done: int
    skipped: int
    failed: int
    failures: tuple[tuple[str, str], ...]
    manifest: Path
    csv: Path
    seconds: float
    engine: str
    workers: int
    computed: int = 0
    notices: tuple[str, ...] = ()

    @property
    def total(self) -> int:
        return self.done + self.skipped + self.failed

    @property
    def per_minute(self) -> float | None:
        """Documents summarized per minute of this run (None when none were computed)."""
        return 60.0 * self.computed / self.seconds if self.computed and self.seconds > 0 else None

    def to_dict(self) -> dict:
        return {
            "done": self.done,
            "skipped": self.skipped,
            "failed": self.failed,
            "total": self.total,
            "computed": self.computed,
            "seconds": round(self.seconds, 3),
            "per_minute": None if self.per_minute is None else round(self.per_minute, 2),
            "engine": self.engine,
            "workers": self.workers,
            "manifest": str(self.manifest),
            "csv": str(self.csv),
            "failures": [{"path": p, "error": e} for p, e in self.failures],
            "notices": list(self.notices),
        }


# --------------------------------------------------------------------------------------------
# Jobs: what a worker does with one document
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SummarizeJob:
    """The real job: ``summarize.pipeline.summarize`` with the run's settings."""

    name: ClassVar[str] = "summarize"

    def code(self) -> str:
        """What produced the summary besides the settings: boildown's version and the combined
        score that picks among the candidates (a record made under another is not reused)."""
        from scoring.base import project_version
        from scoring.combine import CombineConfig

        return f"boildown {project_version()}; {CombineConfig().signature()}"

    def check(self) -> None:
        """Fail fast (one line, names the fix) when the model files are not installed."""
        from scoring import models

        models.encoder_path(), models.gguf_path(), models.spacy_path()

    def prepare(self, threads: int | None) -> None:
        """Load every model once in this process, with this many CPU threads."""
        from scoring import models
        from scoring.evaluate import default_evaluator

        models.set_threads(threads)
        for load in models.LOADERS.values():
            load()
        default_evaluator()

    def __call__(self, document, settings: dict) -> dict:
        from summarize.pipeline import summarize

        summary = summarize(document, settings["words"], ratio=settings["ratio"], candidates=settings["candidates"])
        scores = signatures = None
        if summary.scores is not None:
            found = summary.to_dict(with_candidates=False)["scores"]
            scores = {k: found[k] for k in ("combined", "coverage", "fluency", "agreement", "over_budget")}
            signatures = {k: sig["text"] for k, sig in found["signatures"].items() if sig is not None}
        return {
            "summary": summary.text,
            "words": summary.words,
            "budget": summary.budget,
            "source_words": summary.source_words,
            "notice": summary.notice,
            "scores": scores,
            "signatures": signatures,
        }


@dataclass(frozen=True)
class LeadJob:
    """A model-free stand-in: the document's opening words up to the budget, after an optional
    delay per document. It reads documents exactly as the real job does, so every reading
    failure is real; tests and rehearsals of a large folder use it (hidden ``--job lead:0.2``)."""

    delay: float = 0.0
    name: ClassVar[str] = "lead"

    def check(self) -> None:
        pass

    def prepare(self, threads: int | None) -> None:
        pass

    def __call__(self, document, settings: dict) -> dict:
        from summarize.pipeline import budget_for

        tokens = document.text.split()
        budget = budget_for(len(tokens), settings["words"], settings["ratio"])
        if self.delay:
            time.sleep(self.delay)
        kept = tokens[:budget]
        return {"summary": " ".join(kept), "words": len(kept), "budget": budget, "source_words": len(tokens),
                "notice": None, "scores": None, "signatures": None}


def job_from_spec(spec: str):
    """``summarize`` or ``lead[:SECONDS]`` (the hidden ``--job`` option)."""
    name, _, arg = (spec or "summarize").partition(":")
    if name == "summarize" and not arg:
        return SummarizeJob()
    if name == "lead":
        try:
            delay = float(arg) if arg else 0.0
        except ValueError:
            delay = -1.0
        if delay >= 0:
            return LeadJob(delay)
    raise BatchError(f"unknown job {spec!r}; use 'summarize' or 'lead[:SECONDS]'")


# --------------------------------------------------------------------------------------------
# The lock on the output folder
# --------------------------------------------------------------------------------------------


class OutputLock:
    """``out_dir/.boildown.lock``: O_CREAT|O_EXCL plus ``flock``, holding the owner's PID.

    The kernel drops a ``flock`` when its process dies, so a lock file whose ``flock`` can be
    taken is stale, whatever PID it names; it is taken over with a message."""

    def __init__(self, out_dir: Path):
        self.out_dir = Path(out_dir)
        self.path = self.out_dir / LOCK_NAME
        self._fd: int | None = None

    def acquire(self) -> str | None:
        """Take the lock; return a notice when a stale lock was taken over. Raises BatchError."""
        for _ in range(20):
            created = True
            try:
                fd = os.open(self.path, os.O_RDWR | os.O_CREAT | os.O_EXCL, 0o644)
            except FileExistsError:
                created = False
                try:
                    fd = os.open(self.path, os.O_RDWR)
                except FileNotFoundError:
                    continue  # released in between: try again
                except PermissionError:
                    raise BatchError(f"cannot open the lock '{self.path}' (permission denied); another user's "
                                     "run may own this folder: choose another --out folder") from None
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError as exc:
                holder = _read_pid(fd)
                os.close(fd)
                if exc.errno in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
                    who = f"PID {holder}" if holder else "another process"
                    raise BatchError(
                        f"'{self.out_dir}' is in use by another boildown batch run ({who}, lock "
                        f"{self.path}); wait for it to finish or choose another --out folder"
                    ) from None
                raise BatchError(f"cannot lock '{self.path}' ({exc.strerror}); check the folder") from None
            try:
                same = os.fstat(fd).st_ino == os.stat(self.path).st_ino
            except FileNotFoundError:
                same = False
            if not same:  # the file was released and replaced while we waited: start over
                os.close(fd)
                continue
            stale = None if created else _read_pid(fd)
            os.ftruncate(fd, 0)
            os.pwrite(fd, f"{os.getpid()}\n".encode(), 0)
            os.fsync(fd)
            self._fd = fd
            if created:
                return None
            state = "no longer running" if stale is None or not _alive(stale) else "holding no lock"
            return f"took over a stale lock in '{self.out_dir}' left by PID {stale or '?'} ({state})"
        raise BatchError(f"could not take the lock '{self.path}'; another run keeps replacing it")

    def release(self) -> None:
        if self._fd is None:
            return
        with contextlib.suppress(OSError):
            if os.fstat(self._fd).st_ino == os.stat(self.path).st_ino:
                os.unlink(self.path)
        os.close(self._fd)
        self._fd = None


def _read_pid(fd: int) -> int | None:
    try:
        text = os.pread(fd, 64, 0).decode("ascii", "replace").strip()
        return int(text) if text.isdigit() else None
    except OSError:
        return None


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


# --------------------------------------------------------------------------------------------
# The manifest
# --------------------------------------------------------------------------------------------

CSV_COLUMNS = ("path", "status", "words", "budget", "source_words", "combined", "coverage", "fluency", "agreement",
               "summary_file", "sha256", "settings_key", "error", "finished", "summary")


class Manifest:
    """``manifest.jsonl``: read and repaired on open, appended by this process only."""

    def __init__(self, out_dir: Path):
        self.out_dir = Path(out_dir)
        self.path = self.out_dir / MANIFEST_NAME
        self.csv_path = self.out_dir / CSV_NAME
        self.records: list[dict] = []
        self._latest: dict[tuple, dict] = {}  # (path, sha256, settings_key) -> its latest record
        self._by_content: dict[tuple, dict] = {}  # (sha256, settings_key) -> latest success
        self._fd: int | None = None

    def open(self) -> list[str]:
        """Cut a torn last line, load the records, open for appending; return notices."""
        notices = []
        if self.path.exists():
            data = self.path.read_bytes()
            if data and not data.endswith(b"\n"):
                keep = data.rfind(b"\n") + 1
                with open(self.path, "r+b") as fh:
                    fh.truncate(keep)
                    fh.flush()
                    os.fsync(fh.fileno())
                data = data[:keep]
                notices.append(f"cut an incomplete last line from {self.path} (a run was stopped while "
                               "writing it); that document will be done again")
            unreadable = 0
            for line in data.decode("utf-8", "replace").splitlines():
                if not line.strip():
                    continue
                try:
                    record = json.loads(line)
                except ValueError:
                    record = None
                if not isinstance(record, dict) or "path" not in record:
                    unreadable += 1
                    continue
                self._index(record)
            if unreadable:
                notices.append(f"ignored {unreadable} unreadable line(s) in {self.path}")
        self._fd = os.open(self.path, os.O_WRONLY | os.O_APPEND | os.O_CREAT, 0o644)
        fsync_dir(self.out_dir)
        return notices

    def close(self) -> None:
        if self._fd is not None:
            os.close(self._fd)
            self._fd = None

    def _index(self, record: dict) -> None:
        self.records.append(record)
        key = (record.get("path"), record.get("sha256"), record.get("settings_key"))
        self._latest[key] = record
        if record.get("status") == "done" and record.get("sha256"):
            self._by_content[(record["sha256"], record.get("settings_key"))] = record

    def done(self, path: str, sha256: str, key: str) -> dict | None:
        """The latest success record for exactly this path, content and settings."""
        record = self._latest.get((path, sha256, key))
        return record if record is not None and record.get("status") == "done" else None

    def done_elsewhere(self, sha256: str, key: str) -> dict | None:
        """A success record for the same content and settings, under any path."""
        return self._by_content.get((sha256, key))

    def latest(self, path: str, sha256: str | None, key: str) -> dict | None:
        return self._latest.get((path, sha256, key))

    def append(self, record: dict, *, supersede: bool = False) -> bool:
        """Append one complete line (one write, fsync); False when the manifest already holds
        this fact: a success for the same (path, content, settings) without ``supersede``, or
        the same failure again."""
        previous = self.latest(record["path"], record.get("sha256"), record["settings_key"])
        if previous is not None and not supersede:
            if previous.get("status") == "done":
                return False
            if record["status"] == "failed" and previous.get("error") == record.get("error"):
                return False
        view = memoryview((json.dumps(record, ensure_ascii=False) + "\n").encode("utf-8"))
        while view:  # one write for a regular file; a short write (disk full) goes on
            written = os.write(self._fd, view)
            view = view[written:]
        os.fsync(self._fd)
        self._index(record)
        return True

    def write_csv(self) -> Path:
        """Rebuild ``manifest.csv``: the latest record per path, sorted by path."""
        latest: dict[str, dict] = {}
        for record in self.records:
            latest[record["path"]] = record
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        writer.writerow(CSV_COLUMNS)
        for path in sorted(latest):
            record = latest[path]
            scores = record.get("scores") or {}
            row = {**record, **{k: scores.get(k) for k in ("combined", "coverage", "fluency", "agreement")}}
            writer.writerow(["" if row.get(c) is None else row.get(c) for c in CSV_COLUMNS])
        write_atomic(self.csv_path, buffer.getvalue())
        return self.csv_path


# --------------------------------------------------------------------------------------------
# Files: discovery, reading, atomic writes
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Found:
    """One document candidate under the input folder; ``problem`` when it cannot be a document."""

    rel: str
    path: Path
    summary_rel: str = ""
    problem: str | None = None


def _matches(rel: str, name: str, patterns) -> str | None:
    for pattern in patterns:
        target = rel if "/" in pattern else name
        if fnmatch.fnmatchcase(target.lower(), pattern.lower()):
            return pattern
    return None


def discover(input_dir, out_dir=None, include=DEFAULT_INCLUDE, exclude=()) -> list[Found]:
    """Documents under ``input_dir`` (recursively, sorted by relative path).

    Names starting with "." are skipped, and so is ``out_dir`` when it lies inside. Patterns
    match the file name, or the relative path when they contain "/", ignoring case. Symbolic
    links to files are read; links to folders are not followed (so no link can loop). A link
    that loops or leads nowhere, and a folder whose name matches an include pattern, come back
    with a ``problem`` saying so (the folder's contents are still read).
    """
    root = Path(input_dir)
    skip = Path(out_dir).resolve() if out_dir is not None else None
    found: list[Found] = []

    def walk(folder: Path, prefix: str) -> None:
        try:
            entries = sorted(os.scandir(folder), key=lambda e: e.name)
        except OSError as exc:
            found.append(Found(prefix.rstrip("/") or ".", folder,
                               problem=f"the folder '{prefix.rstrip('/') or '.'}' cannot be listed "
                                       f"({exc.strerror or exc}); check its permissions"))
            return
        for entry in entries:
            if entry.name.startswith("."):
                continue
            rel = prefix + entry.name
            if _matches(rel, entry.name, exclude):
                continue
            path = Path(entry.path)
            wanted = _matches(rel, entry.name, include)
            if entry.is_symlink():
                try:
                    mode = os.stat(path).st_mode
                except OSError as exc:
                    if wanted and exc.errno == errno.ELOOP:
                        found.append(Found(rel, path, problem=f"'{rel}' is a symbolic link loop (too many levels "
                                                              "of symbolic links); fix or remove the link"))
                    elif wanted and exc.errno == errno.ENOENT:
                        found.append(Found(rel, path, problem=f"'{rel}' is a symbolic link to a missing file "
                                                              f"('{os.readlink(path)}'); fix or remove the link"))
                    elif wanted:
                        found.append(Found(rel, path, problem=f"'{rel}' cannot be followed ({exc.strerror}); "
                                                              "fix or remove the link"))
                    continue
                if stat.S_ISDIR(mode):
                    continue  # links to folders are not followed
                if wanted:
                    found.append(Found(rel, path))
                continue
            if entry.is_dir(follow_symlinks=False):
                if skip is not None and path.resolve() == skip:
                    continue
                if wanted:
                    found.append(Found(rel, path, problem=(
                        f"'{rel}' is a folder, not a document, though its name matches '{wanted}'; "
                        "its contents are read as usual; rename it or --exclude it")))
                walk(path, rel + "/")
                continue
            if wanted:
                found.append(Found(rel, path))

    walk(root, "")
    found.sort(key=lambda f: f.rel)
    return _name_summaries(found)


def _name_summaries(found: list[Found]) -> list[Found]:
    """``sub/report.pdf`` -> ``sub/report.summary.txt``; documents sharing a folder and a stem
    (report.pdf, report.txt) keep their whole name (``report.pdf.summary.txt``)."""
    stems: dict[tuple[str, str], int] = {}  # case-folded: Report.txt and report.md clash on some disks
    for f in found:
        p = Path(f.rel)
        key = (str(p.parent), p.stem.lower())
        stems[key] = stems.get(key, 0) + 1
    out = []
    for f in found:
        p = Path(f.rel)
        base = p.stem if stems[(str(p.parent), p.stem.lower())] == 1 else p.name
        out.append(Found(f.rel, f.path, (p.parent / (base + SUMMARY_SUFFIX)).as_posix(), f.problem))
    return out


def _open_bytes(path: Path):
    """Open a document for reading (one place, so tests run as root can refuse permission)."""
    return open(path, "rb")


def read_bytes(path: Path, rel: str) -> bytes:
    """The document's bytes, checked as ``read_document`` checks them; ReadError names ``rel``."""
    name = f"'{rel}'"
    try:
        st = os.stat(path)
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            raise reading.ReadError(f"{name} is a symbolic link loop; fix or remove the link") from None
        if exc.errno == errno.ENOENT:
            raise reading.ReadError(f"{name} disappeared during the run; run again to pick up the change") from None
        raise reading.ReadError(f"{name} cannot be read ({exc.strerror or exc}); check the path and the disk") from None
    if stat.S_ISDIR(st.st_mode):
        raise reading.ReadError(f"{name} is a folder, not a document")
    if not stat.S_ISREG(st.st_mode):
        raise reading.ReadError(f"{name} is not a regular file (a pipe, socket or device); only saved documents "
                                "are read")
    limit = reading.MAX_BYTES
    if st.st_size > limit:
        raise reading.ReadError(f"{name} is too large ({reading.format_size(st.st_size)}, limit "
                                f"{reading.format_size(limit)}); split it or trim it first")
    try:
        with _open_bytes(path) as fh:
            data = fh.read(limit + 1)
    except PermissionError:
        raise reading.ReadError(f"{name} cannot be opened: permission denied; check the file's permissions") from None
    except OSError as exc:
        raise reading.ReadError(f"{name} cannot be read ({exc.strerror or exc}); check the path and the disk") from None
    if len(data) > limit:
        raise reading.ReadError(f"{name} is too large (over {reading.format_size(limit)}); split it or trim it first")
    return data


def _remove_temp_files(out_dir: Path) -> int:
    removed = 0
    for folder, _dirs, files in os.walk(out_dir):
        for name in files:
            if name.endswith(TMP_SUFFIX):
                with contextlib.suppress(OSError):
                    os.unlink(os.path.join(folder, name))
                    removed += 1
    return removed


class _StopSignals:
    """While a run is on, SIGINT (Ctrl-C) and SIGTERM only ask it to stop; the run stops
    between two records, so no write is cut short. A second Ctrl-C stops at once (a torn
    line is then cut away by the next run)."""

    def __init__(self):
        self.requested = False
        self._previous: dict = {}

    def __enter__(self):
        if threading.current_thread() is threading.main_thread():
            for sig in (signal.SIGINT, signal.SIGTERM):
                self._previous[sig] = signal.signal(sig, self._handle)
        return self

    def __exit__(self, *exc):
        for sig, handler in self._previous.items():
            signal.signal(sig, handler)
        self._previous.clear()

    def _handle(self, signum, _frame):
        if self.requested and signum == signal.SIGINT:
            raise KeyboardInterrupt
        self.requested = True

    def check(self) -> None:
        if self.requested:
            raise _Stopped()


class _Stopped(Exception):
    pass


# --------------------------------------------------------------------------------------------
# The worker side (both engines run process_task)
# --------------------------------------------------------------------------------------------

_PREPARED: dict[str, str | None] = {}  # job name -> error met while loading (None: ready)
_THREAD_VARS = ("BOILDOWN_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS", "OPENBLAS_NUM_THREADS")


def _limit_threads(threads: int) -> None:
    for var in _THREAD_VARS:
        os.environ[var] = str(threads)


def _ensure_prepared(job, threads: int | None) -> str | None:
    if job.name not in _PREPARED:
        try:
            job.prepare(threads)
            _PREPARED[job.name] = None
        except Exception as exc:  # recorded per document, never a dead pool
            _PREPARED[job.name] = _one_line(exc)
    return _PREPARED[job.name]


def _watch_parent(parent_pid: int) -> None:
    """Exit when the parent is gone (killed): a worker alone has nothing left to do."""
    while True:
        time.sleep(0.5)
        if os.getppid() != parent_pid:
            os._exit(1)


def _init_local_worker(job, threads: int, parent_pid: int) -> None:
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    _limit_threads(threads)
    threading.Thread(target=_watch_parent, args=(parent_pid,), daemon=True).start()
    _ensure_prepared(job, threads)


def _prepare_dask_worker(job, threads_by_address: dict, dask_worker=None) -> str | None:
    """Run on every Dask worker at the start: split its host's cores, load the models once."""
    threads = None
    if os.environ.get("BOILDOWN_THREADS"):
        threads = int(os.environ["BOILDOWN_THREADS"])
    elif dask_worker is not None:
        threads = threads_by_address.get(dask_worker.address)
    if threads:
        _limit_threads(threads)
    return _ensure_prepared(job, threads)


def _one_line(exc: BaseException) -> str:
    text = " ".join(str(exc).split())
    return text or type(exc).__name__


def process_task(task: dict, job) -> dict:
    """Summarize one document from its bytes; never raises (errors come back as a reason)."""
    started = time.perf_counter()
    outcome = {"result": None, "error": None, "encoding": None, "warnings": [],
               "worker": f"{socket.gethostname()}:{os.getpid()}", "timings": {}}
    rel = task["rel"]
    tmp_name = None
    try:
        problem = _ensure_prepared(job, task.get("threads"))
        if problem:
            outcome["error"] = f"'{rel}' was not summarized: the worker could not load its models ({problem})"
            return outcome
        with tempfile.TemporaryDirectory(prefix="boildown-batch-") as tmp:
            path = Path(tmp) / task["name"]
            tmp_name = str(path)
            path.write_bytes(task["data"])
            document = reading.read_document(path)
            outcome["encoding"] = document.encoding
            read_at = time.perf_counter()
            outcome["timings"]["read_s"] = round(read_at - started, 4)
            problem, outcome["warnings"] = reading.text_problem(document, f"'{rel}'", task["any_language"])
            if problem:
                outcome["error"] = problem
                return outcome
            outcome["result"] = job(document, task["settings"])
            outcome["timings"]["summarize_s"] = round(time.perf_counter() - read_at, 4)
    except reading.ReadError as exc:
        message = str(exc)
        if tmp_name:
            message = message.replace(tmp_name, rel)
        outcome["error"] = message
    except (Exception, SystemExit) as exc:
        message = _one_line(exc)
        if tmp_name:
            message = message.replace(tmp_name, rel)
        outcome["error"] = f"'{rel}' could not be summarized ({type(exc).__name__}: {message})"
    finally:
        outcome["timings"]["worker_s"] = round(time.perf_counter() - started, 4)
    return outcome


# --------------------------------------------------------------------------------------------
# Engines: where process_task runs
# --------------------------------------------------------------------------------------------


class WorkerLost(Exception):
    """The process running a task died (killed, out of memory); ``final`` when not to retry."""

    def __init__(self, reason: str, final: bool = False):
        super().__init__(reason)
        self.final = final


def cpu_count() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not Linux
        return os.cpu_count() or 1


class LocalEngine:
    """A pool of spawned worker processes on this machine, the models loaded once in each."""

    name = "local"

    def __init__(self, job, workers: int, say: Callable[[str], None]):
        import multiprocessing

        self.job = job
        self.workers = workers
        own = os.environ.get("BOILDOWN_THREADS", "")
        self.threads = int(own) if own.isdigit() and int(own) > 0 else max(1, cpu_count() // workers)
        self._context = multiprocessing.get_context("spawn")
        say(f"starting {workers} worker process(es), {self.threads} CPU thread(s) each")
        self._pool = self._start()

    @property
    def capacity(self) -> int:
        return self.workers

    def _start(self):
        from concurrent.futures import ProcessPoolExecutor

        return ProcessPoolExecutor(max_workers=self.workers, mp_context=self._context,
                                   initializer=_init_local_worker, initargs=(self.job, self.threads, os.getpid()))

    def submit(self, payload: dict):
        return self._pool.submit(process_task, {**payload, "threads": self.threads}, self.job)

    def wait(self, futures, timeout: float) -> set:
        from concurrent.futures import FIRST_COMPLETED, wait

        return wait(futures, timeout=timeout, return_when=FIRST_COMPLETED)[0]

    def outcome(self, future) -> dict:
        from concurrent.futures.process import BrokenProcessPool

        try:
            return future.result()
        except BrokenProcessPool:
            raise WorkerLost("a worker process died (killed, or out of memory)") from None
        except Exception as exc:
            raise WorkerLost(f"the worker failed ({type(exc).__name__}: {_one_line(exc)})", final=True) from None

    def restart(self) -> None:
        self.close(cancel=True)
        self._pool = self._start()

    def close(self, cancel: bool = False) -> None:
        if cancel:  # stop now: a document in progress would otherwise run to its end
            for process in list((getattr(self._pool, "_processes", None) or {}).values()):
                with contextlib.suppress(Exception):
                    process.terminate()
        self._pool.shutdown(wait=not cancel, cancel_futures=cancel)


class DaskEngine:
    """The same per-document task on a Dask distributed cluster; results come back here."""

    name = "dask"

    def __init__(self, job, address: str, say: Callable[[str], None]):
        distributed = _import_distributed()
        self.job = job
        self._distributed = distributed
        try:
            self.client = distributed.Client(address, timeout="15s", set_as_default=False)
        except (OSError, TimeoutError) as exc:
            raise BatchError(f"could not reach the Dask scheduler at {address} ({_one_line(exc)}); check the "
                             "address and that `dask scheduler` is running") from None
        try:
            self.client.wait_for_workers(1, timeout=60)
        except (TimeoutError, OSError):
            self.client.close()
            raise BatchError(f"the Dask scheduler at {address} has no workers; start one with "
                             f"`dask worker {address} --nthreads 1`") from None
        workers = self.client.scheduler_info(n_workers=-1)["workers"]
        cores = self.client.run(cpu_count)
        per_host: dict[str, int] = {}
        for info in workers.values():
            per_host[info["host"]] = per_host.get(info["host"], 0) + info["nthreads"]
        threads = {addr: max(1, cores.get(addr, 1) // per_host[info["host"]]) for addr, info in workers.items()}
        self._slots = sum(info["nthreads"] for info in workers.values())
        self.workers = len(workers)
        say(f"preparing {self.workers} Dask worker(s) ({self._slots} task slot(s)) at {address}")
        errors = {e for e in self.client.run(_prepare_dask_worker, self.job, threads).values() if e}
        if errors:
            say(f"warning: a Dask worker could not load its models: {sorted(errors)[0]}")

    @property
    def capacity(self) -> int:
        return self._slots

    def submit(self, payload: dict):
        return self.client.submit(process_task, {**payload, "threads": None}, self.job, pure=False,
                                  key=f"boildown-{payload['rel'][-60:]}-{os.urandom(4).hex()}")

    def wait(self, futures, timeout: float) -> set:
        deadline = time.monotonic() + timeout
        while True:  # distributed.wait needs a default client, which this run does not install
            done = {f for f in futures if f.done()}
            if done or time.monotonic() > deadline:
                return done
            time.sleep(0.05)

    def outcome(self, future) -> dict:
        try:
            return future.result()
        except self._distributed.KilledWorker:
            raise WorkerLost("Dask workers died each time they ran this document (out of memory?)",
                             final=True) from None
        except Exception as exc:
            raise WorkerLost(f"the Dask task failed ({type(exc).__name__}: {_one_line(exc)})", final=True) from None

    def restart(self) -> None:
        pass  # the scheduler replaces lost workers and retries their tasks itself

    def close(self, cancel: bool = False) -> None:
        with contextlib.suppress(Exception):
            self.client.close()


def _import_distributed():
    try:
        import distributed
    except ImportError:
        raise BatchError(f"--engine dask needs Dask's distributed scheduler, which is not installed; "
                         f"install it with: {DASK_INSTALL}") from None
    return distributed


# --------------------------------------------------------------------------------------------
# The run
# --------------------------------------------------------------------------------------------


@dataclass
class _Task:
    found: Found
    sha256: str
    size: int
    attempts: int = 0
    submitted: float = 0.0
    followers: list = field(default_factory=list)


def default_workers(todo: int) -> int:
    return max(1, min(cpu_count(), MAX_DEFAULT_WORKERS, todo))


def run_batch(input_dir, out_dir, config: BatchConfig | None = None, *, job=None,
              progress: Callable[[str], None] | None = None, bar: bool = False, **options) -> BatchResult:
    """Summarize every document under ``input_dir`` into ``out_dir``; see the module docstring.

    ``config`` or keyword options (``words=150``, ``candidates=3``, ...) give a BatchConfig;
    ``job`` replaces the summarizer (a picklable callable ``job(document, settings) -> dict``
    taking a reading.Document, with ``name``, ``check()`` and ``prepare(threads)``, e.g.
    ``LeadJob``); ``progress`` receives
    one-line messages; ``bar`` shows a progress bar on stderr. Raises BatchError when the run
    cannot start (bad folders, the lock held, Dask missing) and BatchInterrupted on Ctrl-C or
    SIGTERM, after recording everything finished so far.
    """
    if config is None:
        config = BatchConfig(**options)
    elif options:
        raise TypeError("give a BatchConfig or keyword options, not both")
    started = time.perf_counter()
    job = job or SummarizeJob()
    say = progress or (lambda _m: None)
    input_dir, out_dir = Path(input_dir), Path(out_dir)
    if not input_dir.is_dir():
        raise BatchError(f"'{input_dir}' is not a folder; give the folder that holds the documents")
    if out_dir.exists() and not out_dir.is_dir():
        raise BatchError(f"--out '{out_dir}' is a file; give a folder for the summaries")
    if out_dir.resolve() == input_dir.resolve():
        raise BatchError("the output folder must differ from the input folder; give another --out folder")
    if config.engine == "dask":
        _import_distributed()
    out_dir.mkdir(parents=True, exist_ok=True)
    lock = OutputLock(out_dir)
    notices: list[str] = []

    def note(message: str) -> None:
        notices.append(message)
        say(message)

    stale = lock.acquire()
    try:
        if stale:
            note(stale)
        removed = _remove_temp_files(out_dir)
        if removed:
            note(f"removed {removed} temporary file(s) left by an interrupted run")
        manifest = Manifest(out_dir)
        for message in manifest.open():
            note(message)
        try:
            return _Run(input_dir, out_dir, config, job, manifest, say, bar, notices, started).execute()
        finally:
            manifest.write_csv()
            manifest.close()
    finally:
        lock.release()


class _Run:
    """One run's bookkeeping: decide what to do, dispatch, record each outcome once."""

    def __init__(self, input_dir, out_dir, config, job, manifest, say, bar, notices, started):
        self.input_dir, self.out_dir, self.config, self.job = input_dir, out_dir, config, job
        self.manifest, self.say, self.show_bar, self.notices = manifest, say, bar, notices
        self.settings = config.settings(job)
        self.key = settings_key(self.settings)
        self.signature = _run_signature(job, self.settings)
        self.run_id = time.strftime("%Y%m%dT%H%M%S") + f"-{os.getpid()}"
        self.done = self.skipped = self.computed = 0
        self.failures: list[tuple[str, str]] = []
        self.engine = None
        self.stop = _StopSignals()
        self._workers = 0
        self.bar = None
        self.started = started

    # ---------------------------------------------------------------- plan

    def execute(self) -> BatchResult:
        with self.stop:
            try:
                return self._execute()
            except (KeyboardInterrupt, _Stopped):
                if self.engine is not None:
                    self.engine.close(cancel=True)
                    self.engine = None
                self._close_bar()
                raise BatchInterrupted(self._result()) from None
            finally:
                if self.engine is not None:
                    self.engine.close()
                self._close_bar()

    def _execute(self) -> BatchResult:
        found = discover(self.input_dir, self.out_dir, self.config.include, self.config.exclude)
        tasks: list[_Task] = []
        leaders: dict[str, _Task] = {}
        to_write = []
        for item in found:
            self.stop.check()
            if item.problem:
                to_write.append((item, None, None, item.problem))
                continue
            try:
                data = read_bytes(item.path, item.rel)
            except reading.ReadError as exc:
                to_write.append((item, None, None, str(exc)))
                continue
            sha, size = hashlib.sha256(data).hexdigest(), len(data)
            del data
            if not self.config.force:
                prior = self.manifest.done(item.rel, sha, self.key)
                if prior is not None:
                    self._restore(item, prior)
                    self.skipped += 1
                    continue
                elsewhere = self.manifest.done_elsewhere(sha, self.key)
                if elsewhere is not None:
                    to_write.append((item, sha, size, elsewhere))
                    continue
            if sha in leaders:
                leaders[sha].followers.append(item)
                continue
            task = _Task(item, sha, size)
            leaders[sha] = task
            tasks.append(task)
        pending = len(to_write) + sum(1 + len(t.followers) for t in tasks)
        self.say(f"{len(found)} document(s) under '{self.input_dir}': {pending} to do, {self.skipped} already done")
        self._open_bar(pending)
        for item, sha, size, what in to_write:
            self.stop.check()
            if isinstance(what, dict):
                self._write(self._reused(item, sha, size, what), item)
            else:
                self._write(self._failure(item, sha, size, what, {}), item)
        if tasks:
            self._dispatch(tasks)
        return self._result()

    def _result(self) -> BatchResult:
        engine = self.engine.name if self.engine is not None else self.config.engine
        return BatchResult(self.done, self.skipped, len(self.failures), tuple(self.failures),
                           self.manifest.path, self.manifest.csv_path, time.perf_counter() - self.started,
                           engine, self._workers, self.computed, tuple(self.notices))

    # ---------------------------------------------------------------- dispatch

    def _dispatch(self, tasks: list[_Task]) -> None:
        if self.config.engine == "dask":
            self.engine = DaskEngine(self.job, self.config.scheduler, self._say_above_bar)
        else:
            self.job.check()
            workers = self.config.workers or default_workers(len(tasks))
            self.engine = LocalEngine(self.job, workers, self._say_above_bar)
        self._workers = self.engine.workers
        queue = deque(tasks)
        inflight: dict = {}
        window = max(2, 2 * self.engine.capacity)
        while queue or inflight:
            self.stop.check()
            while queue and len(inflight) < window:
                # after a worker died, each document that was in flight runs alone once, so a
                # second death names the document that causes it, not its neighbours
                if inflight and (queue[0].attempts or any(t.attempts for t in inflight.values())):
                    break
                task = queue.popleft()
                payload = self._payload(task, queue)
                if payload is None:
                    continue
                task.submitted = time.perf_counter()
                inflight[self.engine.submit(payload)] = task
            if not inflight:
                continue
            broken = False
            for future in self.engine.wait(list(inflight), timeout=0.5):
                task = inflight.pop(future)
                try:
                    outcome = self.engine.outcome(future)
                except WorkerLost as lost:
                    task.attempts += 1
                    if lost.final or task.attempts > _RETRIES_AFTER_WORKER_DEATH:
                        self._record(task, {"error": f"'{task.found.rel}' was not summarized: {lost}",
                                            "timings": {}})
                    else:
                        queue.appendleft(task)
                    broken = broken or not lost.final
                    continue
                self._record(task, outcome)
            if broken:
                queue.extendleft(inflight.values())
                inflight.clear()
                self._say_above_bar("a worker process died; restarting the pool and retrying its documents")
                self.engine.restart()

    def _payload(self, task: _Task, queue: deque) -> dict | None:
        """Read the bytes again at submission; a file changed since planning gets its new hash
        (and the copies that shared its old content go back in the queue on their own)."""
        item = task.found
        try:
            data = read_bytes(item.path, item.rel)
        except reading.ReadError as exc:
            queue.extend(_Task(f, task.sha256, task.size) for f in task.followers)
            task.followers = []
            self._record(task, {"error": str(exc), "timings": {}})
            return None
        sha = hashlib.sha256(data).hexdigest()
        if sha != task.sha256:
            queue.extend(_Task(f, task.sha256, task.size) for f in task.followers)
            task.followers = []
        task.sha256, task.size = sha, len(data)
        return {"rel": item.rel, "name": item.path.name, "data": data, "settings": self.settings,
                "any_language": self.config.any_language}

    # ---------------------------------------------------------------- records

    def _record(self, task: _Task, outcome: dict) -> None:
        item = task.found
        wall = round(time.perf_counter() - task.submitted, 4) if task.submitted else None
        timings = {**outcome.get("timings", {}), "wall_s": wall}
        if outcome.get("error") or not outcome.get("result"):
            error = outcome.get("error") or f"'{item.rel}' was not summarized: the job returned nothing"
            record = self._failure(item, task.sha256, task.size, error, timings, outcome)
        else:
            self.computed += 1
            record = self._success(item, task.sha256, task.size, outcome, timings)
        self._write(record, item)
        for follower in task.followers:
            if record["status"] == "done":
                self._write(self._reused(follower, task.sha256, task.size, record), follower)
            else:
                error = record["error"].replace(f"'{item.rel}'", f"'{follower.rel}'")
                self._write(self._failure(follower, task.sha256, task.size, error, {}, outcome), follower)

    def _base(self, item: Found, sha: str | None, size: int | None) -> dict:
        return {"path": item.rel, "sha256": sha, "bytes": size, "settings": self.settings,
                "settings_key": self.key}

    def _success(self, item: Found, sha: str, size: int, outcome: dict, timings: dict) -> dict:
        result = outcome["result"]
        text = str(result.get("summary", ""))
        signatures = {"summary": self.signature, **(result.get("signatures") or {})}
        return {**self._base(item, sha, size), "status": "done", "summary_file": item.summary_rel,
                "summary": text, "words": result.get("words", len(text.split())), "budget": result.get("budget"),
                "source_words": result.get("source_words"), "notice": result.get("notice"),
                "scores": result.get("scores"), "signatures": signatures, "encoding": outcome.get("encoding"),
                "warnings": outcome.get("warnings") or [], "error": None, "timings": timings,
                "worker": outcome.get("worker"), **self._stamp()}

    def _reused(self, item: Found, sha: str, size: int, source: dict) -> dict:
        keep = ("summary", "words", "budget", "source_words", "notice", "scores", "signatures", "encoding", "warnings")
        return {**self._base(item, sha, size), "status": "done", "summary_file": item.summary_rel,
                **{k: source.get(k) for k in keep}, "error": None, "timings": {}, "worker": None,
                "reused_from": source["path"], **self._stamp()}

    def _failure(self, item: Found, sha, size: int | None, error: str, timings: dict,
                 outcome: dict | None = None) -> dict:
        outcome = outcome or {}
        return {**self._base(item, sha, size), "status": "failed", "summary_file": None, "summary": None,
                "words": None, "budget": None, "source_words": None, "notice": None, "scores": None,
                "signatures": {"summary": self.signature}, "encoding": outcome.get("encoding"),
                "warnings": outcome.get("warnings") or [], "error": error or "unknown error",
                "timings": timings, "worker": outcome.get("worker"), **self._stamp()}

    def _stamp(self) -> dict:
        from scoring.base import project_version

        return {"engine": self.config.engine, "run": self.run_id,
                "finished": time.strftime("%Y-%m-%dT%H:%M:%S%z"), "version": project_version()}

    def _write(self, record: dict, item: Found) -> None:
        """The summary file first (atomically), then its manifest line."""
        if record["status"] == "done":
            write_atomic(self.out_dir / item.summary_rel, record["summary"] + "\n")
            self.manifest.append(record, supersede=self.config.force)
            self.done += 1
        else:
            self.manifest.append(record, supersede=self.config.force)
            self.failures.append((item.rel, record["error"]))
        if self.bar is not None:
            self.bar.update(1)
            self.bar.set_postfix(failed=len(self.failures), refresh=False)

    def _restore(self, item: Found, prior: dict) -> None:
        """A skipped document whose summary file went missing gets it back from its record."""
        target = self.out_dir / (prior.get("summary_file") or item.summary_rel)
        if not target.exists() and prior.get("summary") is not None:
            write_atomic(target, prior["summary"] + "\n")

    # ---------------------------------------------------------------- progress

    def _open_bar(self, total: int) -> None:
        if self.show_bar and total:
            import sys

            from tqdm import tqdm

            self.bar = tqdm(total=total, unit="doc", file=sys.stderr, dynamic_ncols=True, mininterval=0.5,
                            desc="boildown batch")

    def _close_bar(self) -> None:
        if self.bar is not None:
            self.bar.close()
            self.bar = None

    def _say_above_bar(self, message: str) -> None:
        if self.bar is None:
            self.say(message)
            return
        from tqdm import tqdm

        with tqdm.external_write_mode():
            self.say(message)


def _run_signature(job, settings: dict) -> str:
    from scoring.base import Signature

    fields = {k: v for k, v in settings.items() if k not in ("job", "code") and v is not None}  # v: carries the version
    return str(Signature.build(job.name, fields))


def read_manifest(out_dir) -> list[dict]:
    """Every complete record of ``out_dir/manifest.jsonl``, in order (a torn last line is left out)."""
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


def tally_text(result: BatchResult) -> str:
    """The final tally for people: counts, speed, each failure's reason, where the files are."""
    speed = f"; {result.per_minute:.1f} documents per minute" if result.per_minute else ""
    lines = [f"done {result.done}, skipped {result.skipped}, failed {result.failed} "
             f"({result.total} document(s)) in {result.seconds:.1f} s{speed}"]
    lines += [f"failed: {error}" for _path, error in result.failures]
    lines.append(f"manifest: {result.manifest} (latest per document: {result.csv})")
    return "\n".join(lines)
