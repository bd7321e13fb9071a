"""One batch run: ``run_batch`` and its bookkeeping (plan, dispatch to an engine on the shared
``loop.Loop``, record each outcome once), the tally it returns (``BatchResult``) and the tally's
text.

Crash safety, by construction: only this (parent) process writes the output folder; a summary
file is written atomically (``summarize.files.write_atomic``) before its manifest line; the
manifest is checked before every append, so a success is never recorded twice for the same
(path, content, settings) unless ``force`` asks for a fresh one; Ctrl-C and SIGTERM stop the
run between two records; leftover temporary files are removed when the next run starts.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

from summarize import reading
from summarize.batch.config import BatchConfig, config_from, settings_key
from summarize.batch.discovery import Found, discover, read_bytes
from summarize.batch.engines import engine_class
from summarize.batch.errors import BatchError
from summarize.batch.lock import OutputLock
from summarize.batch.loop import Loop, RunInterrupted, Tally
from summarize.batch.manifest import Manifest, Record
from summarize.batch.worker import Outcome, SummarizeJob, Task
from summarize.files import TMP_SUFFIX, write_atomic

_TALLY_KEYS = ("done", "skipped", "failed", "total", "computed", "seconds", "per_minute", "engine", "workers",
               "manifest", "csv", "failures", "notices")


@dataclass(frozen=True)
class BatchResult(Tally):
    """The tally of one run. ``done`` counts documents summarized (or reused from an identical
    copy) in this run, ``skipped`` those already done by an earlier run; ``per_minute``, the
    documents summarized per minute of this run (None when none were computed)."""

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

    def to_dict(self) -> dict:
        """The tally as JSON values (what ``boildown batch --json`` prints)."""
        shown = {"total": self.total, "seconds": round(self.seconds, 3),
                 "per_minute": self.rounded_rate(), "manifest": str(self.manifest),
                 "csv": str(self.csv), "failures": [{"path": p, "error": e} for p, e in self.failures],
                 "notices": list(self.notices)}
        return {key: shown[key] if key in shown else getattr(self, key) for key in _TALLY_KEYS}


class BatchInterrupted(RunInterrupted):
    """The run was stopped (Ctrl-C or SIGTERM); ``result`` holds the tally so far (a ``BatchResult``)."""


def tally_text(result: BatchResult) -> str:
    """The final tally for people: counts, speed, each failure's reason, where the files are."""
    lines = result.counts_text()
    lines.append(f"manifest: {result.manifest} (latest per document: {result.csv})")
    return "\n".join(lines)


def run_batch(input_dir, out_dir, config: BatchConfig | None = None, *, job=None,
              progress: Callable[[str], None] | None = None, bar: bool = False, **options) -> BatchResult:
    """Summarize every document under ``input_dir`` into ``out_dir``; see the package docstring.

    ``config`` or keyword options (``words=150``, ``candidates=3``, ...) give a BatchConfig;
    ``job`` replaces the summarizer (a picklable callable ``job(document, settings) ->
    JobResult`` taking a reading.Document, with ``name``, ``check()`` and ``prepare(threads)``,
    e.g. ``LeadJob``); ``progress`` receives one-line messages; ``bar`` shows a progress bar
    on stderr. Raises BatchError when the run cannot start (bad folders, the lock held, Dask
    missing) and BatchInterrupted on Ctrl-C or SIGTERM, after recording everything finished
    so far.
    """
    config = config_from(BatchConfig, config, options)
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
    engine_class(config.engine).require()
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
        except OSError as exc:  # the output folder failed (disk full): stop, keeping what is recorded
            raise BatchError(f"stopped: {exc.strerror or exc}; every document recorded so far is kept: free space "
                             "(or fix the folder) and run the same command again to do the rest") from exc
        finally:
            try:
                manifest.write_csv()
            except OSError:
                pass  # rebuilt from manifest.jsonl by the next run
            manifest.close()
    finally:
        lock.release()


def _remove_temp_files(out_dir: Path) -> int:
    removed = 0
    for folder, _dirs, files in os.walk(out_dir):
        for name in files:
            if name.endswith(TMP_SUFFIX):
                with contextlib.suppress(OSError):
                    os.unlink(os.path.join(folder, name))
                    removed += 1
    return removed


def _run_signature(job, settings: dict) -> str:
    from scoring.base import Signature

    fields = {k: v for k, v in settings.items() if k not in ("job", "code") and v is not None}  # v: carries the version
    return str(Signature.build(job.name, fields))


@dataclass
class _Pending:
    """A document to compute, and the identical copies that will reuse its record."""

    found: Found
    sha256: str
    size: int
    attempts: int = 0
    submitted: float = 0.0
    followers: list = field(default_factory=list)


class _Run(Loop):
    """One run's bookkeeping: decide what to do, dispatch, record each outcome once."""

    def __init__(self, input_dir, out_dir, config, job, manifest, say, bar, notices, started):
        super().__init__(say, bar)
        self.input_dir, self.out_dir, self.config, self.job = input_dir, out_dir, config, job
        self.manifest, self.notices = manifest, notices
        self.settings = config.settings(job)
        self.key = settings_key(self.settings)
        self.signature = _run_signature(job, self.settings)
        self.run_id = time.strftime("%Y%m%dT%H%M%S") + f"-{os.getpid()}"
        self.done = self.skipped = self.computed = 0
        self.failures: list[tuple[str, str]] = []
        self.started = started

    # ---------------------------------------------------------------- plan

    def execute(self) -> BatchResult:
        return self.guarded(self._execute, lambda: BatchInterrupted(self._result()))

    def _execute(self) -> BatchResult:
        try:
            return self._plan_and_dispatch()
        except OSError:
            self.cancel()  # writing failed: the documents in flight cannot be kept
            raise

    def _plan_and_dispatch(self) -> BatchResult:
        found = discover(self.input_dir, self.out_dir, self.config.include, self.config.exclude)
        tasks: list[_Pending] = []
        leaders: dict[str, _Pending] = {}
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
            task = _Pending(item, sha, size)
            leaders[sha] = task
            tasks.append(task)
        pending = len(to_write) + sum(1 + len(t.followers) for t in tasks)
        self.say(f"{len(found)} document(s) under '{self.input_dir}': {pending} to do, {self.skipped} already done")
        self.open_bar(pending)
        for item, sha, size, what in to_write:
            self.stop.check()
            if isinstance(what, Record):
                self._write(self._reused(item, sha, size, what), item)
            else:
                self._write(self._failure(item, sha, size, what, {}), item)
        if tasks:
            self.dispatch(self.job, self.config, tasks, payload=self._payload, record=self._record,
                          lost=lambda task, why: f"'{task.found.rel}' was not summarized: {why}")
        return self._result()

    def _result(self) -> BatchResult:
        engine = self.engine.name if self.engine is not None else self.config.engine
        return BatchResult(self.done, self.skipped, len(self.failures), tuple(self.failures),
                           self.manifest.path, self.manifest.csv_path, time.perf_counter() - self.started,
                           engine, self.workers, self.computed, tuple(self.notices))

    # ---------------------------------------------------------------- dispatch

    def _payload(self, task: _Pending, queue) -> Task | None:
        """Read the bytes again at submission; a file changed since planning gets its new hash
        (and the copies that shared its old content go back in the queue on their own)."""
        item = task.found
        try:
            data = read_bytes(item.path, item.rel)
        except reading.ReadError as exc:
            queue.extend(_Pending(f, task.sha256, task.size) for f in task.followers)
            task.followers = []
            self._record(task, Outcome(error=str(exc)))
            return None
        sha = hashlib.sha256(data).hexdigest()
        if sha != task.sha256:
            queue.extend(_Pending(f, task.sha256, task.size) for f in task.followers)
            task.followers = []
        task.sha256, task.size = sha, len(data)
        task.submitted = time.perf_counter()
        return Task(item.rel, data, self.settings, self.config.any_language)

    # ---------------------------------------------------------------- records

    def _record(self, task: _Pending, outcome: Outcome) -> None:
        item = task.found
        wall = round(time.perf_counter() - task.submitted, 4) if task.submitted else None
        timings = {**outcome.timings, "wall_s": wall}
        if outcome.error or outcome.result is None:
            error = outcome.error or f"'{item.rel}' was not summarized: the job returned nothing"
            record = self._failure(item, task.sha256, task.size, error, timings, outcome)
        else:
            self.computed += 1
            record = self._success(item, task.sha256, task.size, outcome, timings)
        self._write(record, item)
        for follower in task.followers:
            if record.done:
                self._write(self._reused(follower, task.sha256, task.size, record), follower)
            else:
                error = record.error.replace(f"'{item.rel}'", f"'{follower.rel}'")
                self._write(self._failure(follower, task.sha256, task.size, error, {}, outcome), follower)

    def _new(self, item: Found, sha: str | None, size: int | None, status: str, **facts) -> Record:
        """A record of this run: what every record holds, and ``facts``."""
        from scoring.base import project_version

        return Record(path=item.rel, sha256=sha, bytes=size, settings=self.settings, settings_key=self.key,
                      status=status, engine=self.config.engine, run=self.run_id,
                      finished=time.strftime("%Y-%m-%dT%H:%M:%S%z"), version=project_version(), **facts)

    def _success(self, item: Found, sha: str, size: int, outcome: Outcome, timings: dict) -> Record:
        result = outcome.result
        return self._new(item, sha, size, "done", summary_file=item.summary_rel, summary=result.summary,
                         words=result.words, budget=result.budget, source_words=result.source_words,
                         notice=result.notice, scores=result.scores,
                         signatures={"summary": self.signature, **(result.signatures or {})},
                         encoding=outcome.encoding, warnings=outcome.warnings, timings=timings,
                         worker=outcome.worker)

    def _reused(self, item: Found, sha: str, size: int, source: Record) -> Record:
        return self._new(item, sha, size, "done", summary_file=item.summary_rel, summary=source.summary,
                         words=source.words, budget=source.budget, source_words=source.source_words,
                         notice=source.notice, scores=source.scores, signatures=source.signatures,
                         encoding=source.encoding, warnings=source.warnings, reused_from=source.path)

    def _failure(self, item: Found, sha, size: int | None, error: str, timings: dict,
                 outcome: Outcome | None = None) -> Record:
        outcome = outcome or Outcome()
        return self._new(item, sha, size, "failed", signatures={"summary": self.signature},
                         encoding=outcome.encoding, warnings=outcome.warnings, error=error or "unknown error",
                         timings=timings, worker=outcome.worker)

    def _write(self, record: Record, item: Found) -> None:
        """The summary file first (atomically), then its manifest line."""
        if record.done:
            write_atomic(self.out_dir / item.summary_rel, record.summary + "\n")
            self.manifest.append(record, supersede=self.config.force)
            self.done += 1
        else:
            self.manifest.append(record, supersede=self.config.force)
            self.failures.append((item.rel, record.error))
        self.tick(len(self.failures))

    def _restore(self, item: Found, prior: Record) -> None:
        """A skipped document whose summary file went missing gets it back from its record."""
        target = self.out_dir / (prior.summary_file or item.summary_rel)
        if not target.exists() and prior.summary is not None:
            write_atomic(target, prior.summary + "\n")
