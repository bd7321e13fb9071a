"""The engine contract: where the documents of a batch run are summarized.

An engine runs ``process_task(task, job)`` (summarize.batch.worker) for each document the run
sends it, in worker processes of its own, and hands each ``Outcome`` back to the run, which
alone writes the output folder. It knows nothing of the manifest, the lock or the files.

What an engine receives
    ``start(job, config, todo, say)`` is called once per run, only when at least one document
    must be computed: ``job`` is the picklable job (``SummarizeJob`` or a stand-in), ``config``
    the run's ``BatchConfig`` (the engine reads its own options from it, e.g. ``workers`` or
    ``scheduler``), ``todo`` the number of distinct documents to compute, ``say`` a function
    taking one line for the person running it (printed above the progress bar). Then
    ``submit(task)`` is called for each document: a frozen ``Task`` (the path relative to the
    input folder, the very bytes the run hashed, the settings, ``any_language``, ``threads``).
    The worker needs no shared file system: everything travels in the task.

What it must return
    ``submit`` returns at once a handle: any hashable object (the run keys a dict by it).
    ``wait(handles, timeout)`` returns the set of those handles that have finished, waiting at
    most ``timeout`` seconds for the first; an empty set when none has. ``outcome(handle)``
    returns the ``Outcome`` that ``process_task`` returned for a finished handle.
    ``process_task`` never raises (a document's failure is the outcome's ``error``), so an
    exception from the engine's machinery is translated, never passed through (below).
    ``workers`` (worker processes, for the tally) and ``capacity`` (tasks it runs at once) are
    set by ``start``; the run keeps at most ``max(2, 2 * capacity)`` tasks in flight.

How it reports a lost worker
    ``outcome`` raises ``WorkerLost(reason)`` when the process running the task died (killed,
    out of memory, a crash in native code) and a retry may succeed. The run then calls
    ``restart()``, submits every task that was in flight again, each alone, and records a
    document whose worker dies a second time as failed with "'<path>' was not summarized:
    <reason>". ``WorkerLost(reason, final=True)`` records the failure at once: for a death the
    engine already retried itself, or any other failure of the engine to run the task.
    ``restart()`` must leave the engine ready for new submissions (handles given out before
    are forgotten); it is a no-op for an engine that replaces lost workers on its own.

How it is stopped
    ``close(cancel=False)`` is called exactly once per started engine at the end of the run
    and must not raise. ``cancel=False``: the run is over (normally every task has finished,
    unless the run itself failed); release the workers, letting a task still running end.
    ``cancel=True`` (Ctrl-C or SIGTERM): return promptly, terminating the tasks still running;
    their outcomes are not recorded and the next run does them again. Worker processes that
    the engine starts must ignore SIGINT (Ctrl-C is the run's) and, on this machine, exit on
    their own when the run's process dies (it may be killed without a chance to close).

Thread settings
    Each worker process loads the models once and uses a share of its host's cores: the
    host's ``cpu_count()`` divided by the worker processes (or task slots) on that host, at
    least 1; ``BOILDOWN_THREADS`` in the environment, when set, wins. Before the first model is
    loaded in a worker, call ``worker.limit_threads(n)`` (sets BOILDOWN_THREADS and the
    OpenMP/MKL/OpenBLAS variables) and ``worker.prepare_once(job, n)``, which loads the models
    once per process and never raises (a failed load fails each document with its reason).
    Do it in a worker start-up hook, or pass ``threads`` in the task
    (``dataclasses.replace(task, threads=n)``): ``process_task`` calls ``prepare_once(job,
    task.threads)`` before each document, which loads only the first time.

Before the run
    ``validate(config)`` is called when a ``BatchConfig`` naming the engine is built: raise
    ``BatchError`` (one line naming the option and the fix) for options that do not fit it;
    no imports of optional libraries, no network. ``require()`` is called by ``run_batch``
    before the output folder is touched: raise ``BatchError`` with the install line when an
    optional library the engine needs is missing. Import such libraries there and in
    ``start``, never when the module is imported (``boildown --help`` must stay light).

A new engine subclasses ``Engine``, sets ``name``, and is added to
``summarize.batch.engines.ENGINE_CLASSES``; ``--engine`` then offers it.
"""

from __future__ import annotations

import os
from abc import ABC, abstractmethod
from typing import TYPE_CHECKING, Callable, ClassVar, Hashable

if TYPE_CHECKING:
    from summarize.batch.config import BatchConfig
    from summarize.batch.worker import Outcome, Task


class WorkerLost(Exception):
    """The process running a task died (killed, out of memory); ``final`` when not to retry."""

    def __init__(self, reason: str, final: bool = False):
        super().__init__(reason)
        self.final = final


def cpu_count() -> int:
    """The cores this process may use (its CPU affinity where the system tells it)."""
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not Linux
        return os.cpu_count() or 1


class Engine(ABC):
    """Runs ``process_task`` for each submitted task in worker processes; see the module docstring.

    The methods marked abstract must be written; the others have defaults that do nothing."""

    name: ClassVar[str]
    workers: int
    capacity: int

    @classmethod
    def validate(cls, config: "BatchConfig") -> None:
        """Refuse options that do not fit this engine (BatchError); by default all fit."""

    @classmethod
    def require(cls) -> None:
        """Refuse to run when a library this engine needs is missing (BatchError naming the install line)."""

    @classmethod
    @abstractmethod
    def start(cls, job, config: "BatchConfig", todo: int, say: Callable[[str], None]) -> "Engine":
        """Start the workers (or connect to them) for ``todo`` documents; BatchError when it cannot."""

    @abstractmethod
    def submit(self, task: "Task") -> Hashable:
        """Send ``task`` to a worker to run ``process_task(task, job)``; a handle, at once."""

    @abstractmethod
    def wait(self, handles: list, timeout: float) -> set:
        """The handles among ``handles`` that have finished, waiting at most ``timeout`` seconds."""

    @abstractmethod
    def outcome(self, handle) -> "Outcome":
        """The finished task's Outcome; WorkerLost when its worker died or the engine failed it."""

    def restart(self) -> None:
        """Be ready again after a WorkerLost that was not final; by default nothing to do."""

    @abstractmethod
    def close(self, cancel: bool = False) -> None:
        """Release the workers at the end of the run; ``cancel`` stops running tasks now."""
