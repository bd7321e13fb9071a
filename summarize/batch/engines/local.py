"""The local engine: a pool of spawned worker processes on this machine, the models loaded once
in each, the cores shared out among them."""

from __future__ import annotations

import contextlib
import dataclasses
import os
import signal
import threading
import time
from typing import Callable

from summarize.batch.engines.base import Engine, WorkerLost, cpu_count
from summarize.batch.errors import BatchError, one_line
from summarize.batch.worker import Task, limit_threads, prepare_once, process_task

MAX_DEFAULT_WORKERS = 4
"""Each worker holds its own copy of the models (about 1 GB of memory), so the default number
of workers is the number of cores, at most this many."""


def default_workers(todo: int) -> int:
    return max(1, min(cpu_count(), MAX_DEFAULT_WORKERS, todo))


def _watch_parent(parent_pid: int) -> None:
    """Exit when the parent is gone (killed): a worker alone has nothing left to do."""
    while True:
        time.sleep(0.5)
        if os.getppid() != parent_pid:
            os._exit(1)


def _init_worker(job, threads: int, parent_pid: int) -> None:
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    limit_threads(threads)
    threading.Thread(target=_watch_parent, args=(parent_pid,), daemon=True).start()
    prepare_once(job, threads)


class LocalEngine(Engine):
    """A pool of spawned worker processes on this machine, the models loaded once in each."""

    name = "local"

    @classmethod
    def validate(cls, config) -> None:
        if config.scheduler:
            raise BatchError("--scheduler is only used with --engine dask; add --engine dask")

    @classmethod
    def start(cls, job, config, todo: int, say: Callable[[str], None]) -> "LocalEngine":
        job.check()
        return cls(job, config.workers or default_workers(todo), say)

    def __init__(self, job, workers: int, say: Callable[[str], None]):
        import multiprocessing

        self.job = job
        self.workers = self.capacity = workers
        own = os.environ.get("BOILDOWN_THREADS", "")
        self.threads = int(own) if own.isdigit() and int(own) > 0 else max(1, cpu_count() // workers)
        self._context = multiprocessing.get_context("spawn")
        say(f"starting {workers} worker process(es), {self.threads} CPU thread(s) each")
        self._pool = self._start()

    def _start(self):
        from concurrent.futures import ProcessPoolExecutor

        return ProcessPoolExecutor(max_workers=self.workers, mp_context=self._context,
                                   initializer=_init_worker, initargs=(self.job, self.threads, os.getpid()))

    def submit(self, task: Task):
        return self._pool.submit(process_task, dataclasses.replace(task, threads=self.threads), self.job)

    def wait(self, handles, timeout: float) -> set:
        from concurrent.futures import FIRST_COMPLETED, wait

        return wait(handles, timeout=timeout, return_when=FIRST_COMPLETED)[0]

    def outcome(self, handle):
        from concurrent.futures.process import BrokenProcessPool

        try:
            return handle.result()
        except BrokenProcessPool:
            raise WorkerLost("a worker process died (killed, or out of memory)") from None
        except Exception as exc:
            raise WorkerLost(f"the worker failed ({type(exc).__name__}: {one_line(exc)})", final=True) from None

    def restart(self) -> None:
        self.close(cancel=True)
        self._pool = self._start()

    def close(self, cancel: bool = False) -> None:
        if cancel:  # stop now: a document in progress would otherwise run to its end
            for process in list((getattr(self._pool, "_processes", None) or {}).values()):
                with contextlib.suppress(Exception):
                    process.terminate()
        self._pool.shutdown(wait=not cancel, cancel_futures=cancel)
