"""What a batch run and an assess run share around the engine: ``Loop``, the base of each run's
bookkeeping. It owns the engine, Ctrl-C and SIGTERM (``StopSignals``), the dispatch loop (a
window of tasks in flight; a task whose worker process died is retried, the pool restarted) and
the progress bar. ``summarize.batch.run`` and ``summarize.assess.run`` build their runs on it.
"""

from __future__ import annotations

from collections import deque
from typing import Callable, ClassVar

from summarize.batch.engines import WorkerLost, engine_class
from summarize.batch.stop import Stopped, StopSignals
from summarize.batch.worker import Outcome

RETRIES_AFTER_WORKER_DEATH = 1


class Tally:
    """What a run's tally (a frozen dataclass with ``skipped``, ``failed``, ``failures`` and
    ``seconds``) works out from its counts: ``made`` names the count of what the run finished
    itself (and heads the text), ``timed`` the count its speed is taken over, ``noun`` what is
    counted, ``skipped_note`` what follows the skipped count."""

    made: ClassVar[str] = "done"
    timed: ClassVar[str] = "computed"
    noun: ClassVar[str] = "document"
    skipped_note: ClassVar[str] = ""

    @property
    def total(self) -> int:
        return getattr(self, self.made) + self.skipped + self.failed

    @property
    def per_minute(self) -> float | None:
        """Per minute of this run (None when nothing was timed)."""
        count = getattr(self, self.timed)
        return 60.0 * count / self.seconds if count and self.seconds > 0 else None

    def rounded_rate(self) -> float | None:
        """``per_minute`` to two decimals, as the JSON tally shows it."""
        rate = self.per_minute
        return None if rate is None else round(rate, 2)

    def counts_text(self) -> list[str]:
        """The tally's text for people, up to where its files are: the counts, the time and the
        speed on one line, then each failure's reason."""
        speed = f"; {self.per_minute:.1f} {self.noun}s per minute" if self.per_minute else ""
        head = (f"{self.made} {getattr(self, self.made)}, skipped {self.skipped}{self.skipped_note}, "
                f"failed {self.failed} ({self.total} {self.noun}(s)) in {self.seconds:.1f} s{speed}")
        return [head] + [f"failed: {error}" for _where, error in self.failures]


class RunInterrupted(KeyboardInterrupt):
    """The run was stopped (Ctrl-C or SIGTERM); ``result`` holds the tally so far."""

    def __init__(self, result):
        super().__init__("interrupted")
        self.result = result


class Loop:
    """The engine, the stop signals and the progress bar of one run. A subclass names what its
    bar counts (``unit``, ``desc``) and what a restart retries (``retried``), plans its tasks
    (anything with an ``attempts`` count) and records their outcomes."""

    unit = "doc"
    desc = "boildown batch"
    retried = "documents"

    def __init__(self, say: Callable[[str], None], show_bar: bool):
        self.say, self.show_bar = say, show_bar
        self.engine = None
        self.workers = 0
        self.bar = None
        self.stop = StopSignals()

    def guarded(self, body: Callable[[], object], interrupted: Callable[[], BaseException]):
        """``body()`` under the stop signals. On Ctrl-C or SIGTERM the engine is cancelled and the
        bar closed, then ``interrupted()`` (the exception that carries the tally so far) is
        raised; otherwise the engine is closed when ``body`` ends."""
        with self.stop:
            try:
                return body()
            except (KeyboardInterrupt, Stopped):
                self.cancel()
                self.close_bar()
                raise interrupted() from None
            finally:
                if self.engine is not None:
                    self.engine.close()
                self.close_bar()

    def cancel(self) -> None:
        """Close the engine without waiting for the tasks in flight (they are not recorded)."""
        if self.engine is not None:
            self.engine.close(cancel=True)
            self.engine = None

    # ---------------------------------------------------------------- dispatch

    def dispatch(self, job, config, tasks: list, *, payload: Callable, record: Callable[[object, Outcome], None],
                 lost: Callable[[object, WorkerLost], str], isolate: bool = True,
                 charge_in_flight: bool = False) -> None:
        """Run ``tasks`` on a new engine of ``config.engine``, at most twice its capacity in flight.

        ``payload(task, queue)`` gives the ``Task`` to submit (None: nothing to submit, the task
        was recorded); ``record(task, outcome)`` takes each outcome once. A task whose worker
        process died is tried again ``RETRIES_AFTER_WORKER_DEATH`` time(s), then recorded with
        the error ``lost(task, why)``. After a death the pool restarts and the tasks that were
        in flight go back to the front of the queue: with ``isolate`` each task tried before
        runs alone, so a second death names the task that causes it, not its neighbours; with
        ``charge_in_flight`` the restart counts as an attempt for those tasks too."""
        self.engine = engine_class(config.engine).start(job, config, len(tasks), self.above_bar)
        self.workers = self.engine.workers
        queue = deque(tasks)
        inflight: dict = {}
        window = max(2, 2 * self.engine.capacity)
        while queue or inflight:
            self.stop.check()
            while queue and len(inflight) < window:
                if isolate and inflight and (queue[0].attempts or any(t.attempts for t in inflight.values())):
                    break
                task = queue.popleft()
                sent = payload(task, queue)
                if sent is None:
                    continue
                inflight[self.engine.submit(sent)] = task
            if not inflight:
                continue
            broken = False
            for handle in self.engine.wait(list(inflight), timeout=0.5):
                task = inflight.pop(handle)
                try:
                    outcome = self.engine.outcome(handle)
                except WorkerLost as why:
                    task.attempts += 1
                    if why.final or task.attempts > RETRIES_AFTER_WORKER_DEATH:
                        record(task, Outcome(error=lost(task, why)))
                    else:
                        queue.appendleft(task)
                    broken = broken or not why.final
                    continue
                record(task, outcome)
            if broken:
                if charge_in_flight:
                    for task in inflight.values():
                        task.attempts += 1
                queue.extendleft(inflight.values())
                inflight.clear()
                self.above_bar(f"a worker process died; restarting the pool and retrying its {self.retried}")
                self.engine.restart()

    # ---------------------------------------------------------------- progress

    def open_bar(self, total: int) -> None:
        if self.show_bar and total:
            import sys

            from tqdm import tqdm

            self.bar = tqdm(total=total, unit=self.unit, file=sys.stderr, dynamic_ncols=True, mininterval=0.5,
                            desc=self.desc)

    def tick(self, failed: int) -> None:
        """One more recorded; the bar shows how many failed so far."""
        if self.bar is not None:
            self.bar.update(1)
            self.bar.set_postfix(failed=failed, refresh=False)

    def close_bar(self) -> None:
        if self.bar is not None:
            self.bar.close()
            self.bar = None

    def above_bar(self, message: str) -> None:
        """``say(message)``, printed above the bar when there is one."""
        if self.bar is None:
            self.say(message)
            return
        from tqdm import tqdm

        with tqdm.external_write_mode():
            self.say(message)
