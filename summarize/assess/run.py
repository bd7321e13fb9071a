"""One assess run: read the rows, score those not scored yet (one batch task per source, on the
batch engines), record each row once, then write the per-row results, the per-system table and
the chart.

Borrowed from the batch package, not copied: the output folder's lock (``OutputLock``), the
run's loop (``Loop``: the dispatch and its retries after a worker process dies, Ctrl-C and
SIGTERM, the progress bar), the engines (``local`` worker processes, ``dask``) and their worker
(``process_task``, which reads the source from its bytes and runs the job), the atomic file
writer. Crash safety is the batch run's: only this process writes the folder; a
row's record is one fsynced line, appended once its source's task has come back; a re-run
skips every row already scored under the same settings and texts.
"""

from __future__ import annotations

import hashlib
import os
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, ClassVar

from summarize import reading
from summarize.assess import inputs as _inputs
from summarize.assess.config import AssessConfig
from summarize.assess.log import ResultsLog, row_key, write_csv
from summarize.batch.config import config_from, settings_key
from summarize.batch.discovery import read_bytes
from summarize.batch.engines import engine_class
from summarize.batch.errors import BatchError
from summarize.batch.lock import OutputLock
from summarize.batch.loop import Loop, RunInterrupted, Tally
from summarize.batch.worker import Outcome, Task


@dataclass(frozen=True)
class AssessResult(Tally):
    """The tally of one run and where its files are. ``scored`` counts rows scored in this run,
    ``skipped`` rows reused from an earlier one, ``failed`` rows with a problem (``failures``:
    (where, one-line reason)); ``per_minute``, the rows scored per minute of this run."""

    made: ClassVar[str] = "scored"
    timed: ClassVar[str] = "scored"
    noun: ClassVar[str] = "row"
    skipped_note: ClassVar[str] = " (scored before)"

    scored: int
    skipped: int
    failed: int
    failures: tuple[tuple[str, str], ...]
    seconds: float
    engine: str
    workers: int
    files: dict
    notices: tuple[str, ...] = ()
    table: object = None  # summarize.assess.table.Table, None when no row was scored

    def to_dict(self) -> dict:
        return {"scored": self.scored, "skipped": self.skipped, "failed": self.failed, "total": self.total,
                "seconds": round(self.seconds, 3), "rows_per_minute": self.rounded_rate(),
                "engine": self.engine, "workers": self.workers, "files": {k: str(v) for k, v in self.files.items()},
                "failures": [{"where": w, "error": e} for w, e in self.failures], "notices": list(self.notices)}


class AssessInterrupted(RunInterrupted):
    """The run was stopped (Ctrl-C or SIGTERM); ``result`` holds the tally so far (an ``AssessResult``)."""


def tally_text(result: AssessResult) -> str:
    lines = result.counts_text()
    lines += [f"{what}: {path}" for what, path in result.files.items()]
    return "\n".join(lines)


def run_assess(source, out_dir, config: AssessConfig | None = None, *, job=None,
               progress: Callable[[str], None] | None = None, bar: bool = False, **options) -> AssessResult:
    """Score the rows of ``source`` (a JSON-lines file or a folder layout, see ``inputs``) into
    ``out_dir``: results.jsonl, results.csv, systems.txt/.csv/.json and systems.svg/.png.

    ``config`` or keyword options give an AssessConfig; ``job`` replaces the scorer (``OverlapJob``
    for tests); ``progress`` takes one-line messages; ``bar`` draws a progress bar on stderr.
    Raises BatchError (one line) when the run cannot start and AssessInterrupted on Ctrl-C or
    SIGTERM after recording every row finished so far."""
    from summarize.assess.job import AssessJob

    config = config_from(AssessConfig, config, options)
    started = time.perf_counter()
    job = job or AssessJob()
    say = progress or (lambda _m: None)
    out_dir = Path(out_dir)
    if out_dir.exists() and not out_dir.is_dir():
        raise BatchError(f"--out '{out_dir}' is a file; give a folder for the results")
    try:
        rows = _inputs.load(source)
    except _inputs.InputError as exc:
        raise BatchError(str(exc)) from None
    engine_class(config.engine).require()
    out_dir.mkdir(parents=True, exist_ok=True)
    lock = OutputLock(out_dir)
    notices: list[str] = []
    stale = lock.acquire()
    try:
        if stale:
            notices.append(stale)
            say(stale)
        log = ResultsLog(out_dir)
        for message in log.open():
            notices.append(message)
            say(message)
        try:
            return _Run(rows, out_dir, config, job, log, say, bar, notices, started).execute()
        finally:
            log.close()
    finally:
        lock.release()


class _Run(Loop):
    """One run's bookkeeping on the batch run's loop: plan the sources, dispatch, record each row once."""

    unit, desc, retried = "row", "boildown assess", "sources"

    def __init__(self, rows, out_dir, config, job, log, say, bar, notices, started):
        super().__init__(say, bar)
        self.rows, self.out_dir, self.config, self.job, self.log = rows, out_dir, config, job, log
        self.notices, self.started = notices, started
        self.settings = config.settings(job)
        self.key = settings_key(self.settings)
        self.run_id = time.strftime("%Y%m%dT%H%M%S") + f"-{os.getpid()}"
        self.keys: list[str | None] = [None] * len(rows)
        self.scored = self.skipped = 0
        self.failures: list[tuple[str, str]] = []

    def execute(self) -> AssessResult:
        self.guarded(self._plan_and_dispatch, lambda: AssessInterrupted(self._result({})))
        return self._finish()

    def _plan_and_dispatch(self) -> None:
        groups = self._plan()
        if groups:
            self.dispatch(self.job, self.config, groups, payload=lambda group, _queue: self._task(group),
                          record=self._record, lost=lambda group, why: f"'{group.name}' was not scored: {why}",
                          isolate=False, charge_in_flight=True)

    # ---------------------------------------------------------------- plan

    def _plan(self) -> list[_inputs.Group]:
        sources: dict[str, tuple] = {}  # id -> (data, sha, format) or (None, None, error)
        groups: dict[str, _inputs.Group] = {}
        pending = []
        for n, row in enumerate(self.rows):
            self.stop.check()
            if row.problem:
                self.keys[n] = row_key(row, None)
                pending.append((n, None, row.problem))
                continue
            if row.id not in sources:
                sources[row.id] = self._source(row)
            data, sha, fmt = sources[row.id]
            self.keys[n] = row_key(row, sha)
            if data is None:
                pending.append((n, None, f"{row.where}: {fmt}"))
                continue
            if not self.config.force and self.log.scored(self.keys[n], self.key):
                self.skipped += 1
                continue
            group = groups.setdefault(row.id, _inputs.Group(row.id, row.source_name, data, fmt))
            group.rows.append((n, row))
        todo = len(pending) + sum(len(g.rows) for g in groups.values())
        self.say(f"{len(self.rows)} row(s), {len(groups)} source(s) to read: {todo} row(s) to do, "
                 f"{self.skipped} already scored")
        self.open_bar(todo)
        for n, _none, error in pending:
            self._write(n, "failed", error=error)
        return list(groups.values())

    def _source(self, row) -> tuple:
        if row.source is not None:
            data = row.source.encode("utf-8")
            return data, hashlib.sha256(data).hexdigest(), "txt"
        if not row.source_path.exists():
            return None, None, f"the source path '{row.source_path}' does not exist; check \"source_path\""
        try:
            data = read_bytes(row.source_path, str(row.source_path))
        except reading.ReadError as exc:
            return None, None, str(exc)
        return data, hashlib.sha256(data).hexdigest(), None

    # ---------------------------------------------------------------- dispatch

    def _task(self, group: _inputs.Group) -> Task:
        rows = [{"key": self.keys[n], "summary": row.summary, "references": list(row.references)}
                for n, row in group.rows]
        return Task(group.name, group.data, self.settings, self.config.any_language, inputs={"rows": rows},
                    format=group.format)

    def _record(self, group: _inputs.Group, outcome: Outcome) -> None:
        result = outcome.result
        found = list(result.rows) if result is not None and result.rows is not None else None
        if outcome.error or found is None or len(found) != len(group.rows):
            error = outcome.error or f"'{group.name}' was not scored: the job returned no rows"
            for n, row in group.rows:
                self._write(n, "failed", error=f"{row.where}: {error}", outcome=outcome)
            return
        for (n, _row), values in zip(group.rows, found):
            values = dict(values)
            signatures = values.pop("signatures", None)
            seconds = values.pop("seconds", None)
            self._write(n, "scored", values=values, signatures=signatures, outcome=outcome,
                        timings={**outcome.timings, "row_s": seconds})
            self.scored += 1

    def _write(self, n: int, status: str, *, values=None, signatures=None, error=None, outcome=None,
               timings=None) -> None:
        from scoring.base import project_version

        row = self.rows[n]
        record = {"key": self.keys[n], "settings_key": self.key, "id": row.id, "system": row.system,
                  "where": row.where, "status": status, "values": values, "signatures": signatures, "error": error,
                  "settings": self.settings, "warnings": list(outcome.warnings) if outcome else [],
                  "engine": self.config.engine, "worker": outcome.worker if outcome else None,
                  "timings": timings or {}, "run": self.run_id, "finished": time.strftime("%Y-%m-%dT%H:%M:%S%z"),
                  "version": project_version()}
        self.log.append(record)
        if status == "failed":
            self.failures.append((row.where, error))
        self.tick(len(self.failures))

    # ---------------------------------------------------------------- finish

    def _finish(self) -> AssessResult:
        from summarize.assess import chart, table

        records = [self.log.latest.get((k, self.key)) for k in self.keys]
        records = [r for r in records if r is not None]
        files = {"results": self.log.path, "results CSV": write_csv(self.log.csv_path, records)}
        built = None
        if any(r["status"] == "scored" for r in records):
            built = table.build(records, self.config)
            files.update(table.write(built, self.out_dir))
            files.update(chart.draw(built, self.out_dir, self.above_bar))
        return self._result(files, built)

    def _result(self, files: dict, built=None) -> AssessResult:
        engine = self.engine.name if self.engine is not None else self.config.engine
        return AssessResult(self.scored, self.skipped, len(self.failures), tuple(self.failures),
                            time.perf_counter() - self.started, engine, self.workers, files, tuple(self.notices),
                            built)
