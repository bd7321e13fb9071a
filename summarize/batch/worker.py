"""The worker side of a batch run: what one worker process does with one document.

``process_task(task, job)`` reads the document from the bytes the run sent with the task (no
file is written: ``reading.read(data, name=rel)``, so every message names the document's path
relative to the input folder), checks its language and runs the job on it. It never raises:
an error comes back as the outcome's one-line reason. The job's models are loaded once per
process (``prepare_once``), with the CPU threads the engine gives the worker.

Jobs: ``SummarizeJob`` (the real summarizer) and ``LeadJob`` (a model-free stand-in for tests
and rehearsals). A job is a picklable callable ``job(document, settings) -> JobResult`` with a
``name``, ``check()`` (fail fast in the parent) and ``prepare(threads)`` (load in the worker);
it may name its code (``code()``), which then joins the settings. A task that carries
``inputs`` (what the job reads besides the document) is run as ``job(document, settings,
inputs)``: ``summarize.assess.job.AssessJob`` scores the given summaries of one source so and
returns their results in ``JobResult.rows``; its ``verb`` ("scored") words the failures.
"""

from __future__ import annotations

import contextlib
import os
import socket
import threading
import time
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import ClassVar

from summarize import reading
from summarize.batch.errors import BatchError, one_line

READ_SECONDS = 60.0
"""Per-document limit on reading (decoding and parsing): a reader still busy after this long is
stopped and the document recorded as failed. The fuzz bench's slowest case took far less
(bench/fuzz_readers.py; docs/RESULTS.md)."""
READ_MEMORY = 2 * 1024**3
"""Per-document limit on the memory a reading may add to its worker (RLIMIT_AS raised by this
much over what the worker already maps, for the reading only): a decompression bomb fails with
a MemoryError, recorded, instead of taking the machine down."""

THREAD_VARS = ("BOILDOWN_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS", "OPENBLAS_NUM_THREADS")
_PREPARED: dict[str, str | None] = {}  # job name -> error met while loading (None: ready)


@dataclass(frozen=True)
class Task:
    """One document sent to a worker: its bytes (the very bytes the run hashed) and what to do."""

    rel: str  # the path relative to the input folder; its extension picks the format
    data: bytes
    settings: dict  # BatchConfig.settings(job)
    any_language: bool = False
    threads: int | None = None  # CPU threads for the worker's models; None: as prepared already
    inputs: dict | None = None  # what the job reads besides the document (assess: the summaries)
    format: str | None = None  # the reader to use ("txt", ...); None: the extension of ``rel`` decides


@dataclass(frozen=True)
class JobResult:
    """What a job makes of one document."""

    summary: str
    words: int
    budget: int | None = None
    source_words: int | None = None
    notice: str | None = None
    scores: dict | None = None
    signatures: dict | None = None  # score name -> its signature text
    rows: tuple | None = None  # a scoring job's results, one per summary it was given (assess)

    @classmethod
    def coerce(cls, value) -> "JobResult | None":
        """A job's return value as a JobResult (a mapping with the same keys is accepted; missing
        ``words`` are counted); None when the job returned nothing."""
        if isinstance(value, JobResult):
            return value
        if not value:
            return None
        if not isinstance(value, Mapping):
            raise TypeError(f"a job returns a JobResult, not {type(value).__name__}")
        text = str(value.get("summary", ""))
        return cls(text, value.get("words", len(text.split())), value.get("budget"), value.get("source_words"),
                   value.get("notice"), value.get("scores"), value.get("signatures"))


@dataclass(frozen=True)
class Outcome:
    """What came of one task: ``result``, or ``error`` (one line naming the document)."""

    result: JobResult | None = None
    error: str | None = None
    encoding: str | None = None
    warnings: tuple[str, ...] = ()
    worker: str | None = None  # host:pid
    timings: dict = field(default_factory=dict)  # read_s, summarize_s, worker_s (seconds)


# --------------------------------------------------------------------------------------------
# Jobs
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

    def __call__(self, document, settings: dict) -> JobResult:
        from summarize.pipeline import summarize

        summary = summarize(document, settings["words"], ratio=settings["ratio"], candidates=settings["candidates"])
        scores = signatures = None
        if summary.scores is not None:
            found = summary.to_dict(with_candidates=False)["scores"]
            scores = {k: found[k] for k in ("combined", "coverage", "fluency", "agreement", "over_budget")}
            signatures = {k: sig["text"] for k, sig in found["signatures"].items() if sig is not None}
        return JobResult(summary.text, summary.words, summary.budget, summary.source_words, summary.notice,
                         scores, signatures)


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

    def __call__(self, document, settings: dict) -> JobResult:
        from summarize.pipeline import budget_for

        tokens = document.text.split()
        budget = budget_for(len(tokens), settings["words"], settings["ratio"])
        if self.delay:
            time.sleep(self.delay)
        kept = tokens[:budget]
        return JobResult(" ".join(kept), len(kept), budget, len(tokens))


def job_from_spec(spec: str, *, real=SummarizeJob, stand_in=LeadJob):
    """``summarize`` or ``lead[:SECONDS]`` (the hidden ``--job`` option): the ``real`` job, or the
    model-free ``stand_in`` built with its delay; both are named by their ``name``. The assess
    command passes its own pair."""
    name, _, arg = (spec or real.name).partition(":")
    if name == real.name and not arg:
        return real()
    if name == stand_in.name:
        try:
            delay = float(arg) if arg else 0.0
        except ValueError:
            delay = -1.0
        if delay >= 0:
            return stand_in(delay)
    raise BatchError(f"unknown job {spec!r}; use '{real.name}' or '{stand_in.name}[:SECONDS]'")


# --------------------------------------------------------------------------------------------
# In the worker process
# --------------------------------------------------------------------------------------------


def limit_threads(threads: int) -> None:
    """Cap the CPU threads of the numeric libraries this process will load (set before loading)."""
    for var in THREAD_VARS:
        os.environ[var] = str(threads)


def prepare_once(job, threads: int | None) -> str | None:
    """Load the job's models in this process the first time it is asked; the error met while
    loading (one line), or None when ready. Never raises: a failed load is recorded per document
    instead of killing the pool."""
    if job.name not in _PREPARED:
        try:
            job.prepare(threads)
            _PREPARED[job.name] = None
        except Exception as exc:
            _PREPARED[job.name] = one_line(exc)
    return _PREPARED[job.name]


class ReadLimit(BaseException):
    """A reading passed the per-document time limit (raised from the timer's signal; a
    BaseException, so no reader's ``except Exception`` can swallow it)."""


@contextlib.contextmanager
def read_limits(rel: str, seconds: float | None = None, memory: int | None = None):
    """Read under ``READ_SECONDS`` of wall-clock time and ``READ_MEMORY`` more address space;
    either overrun comes out as a one-line ``ReadError`` naming the document and the limit.

    Signals and RLIMIT_AS are per process: they apply only when this runs in the process's main
    thread (the local engine's workers; a Dask worker runs tasks in threads, where they are not
    set and the scheduler's own memory limits govern)."""
    seconds = READ_SECONDS if seconds is None else seconds
    memory = READ_MEMORY if memory is None else memory
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    import resource
    import signal

    def expire(_signum, _frame):
        raise ReadLimit()

    old_handler = signal.signal(signal.SIGALRM, expire)
    old_limit = resource.getrlimit(resource.RLIMIT_AS)
    ceiling = _mapped_bytes() + memory
    if old_limit[1] == resource.RLIM_INFINITY or ceiling < old_limit[1]:
        resource.setrlimit(resource.RLIMIT_AS, (ceiling, old_limit[1]))
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    except ReadLimit:
        raise reading.ReadError(f"'{rel}' was still being read after {seconds:g} s (the per-document limit) "
                                "and was stopped; check the file, or convert it to plain text") from None
    except MemoryError:
        raise reading.ReadError(f"'{rel}' needed more than {memory / 1024**3:g} GiB of memory to read (the "
                                "per-document limit) and was stopped; check the file, or split it") from None
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old_handler)
        resource.setrlimit(resource.RLIMIT_AS, old_limit)


def _mapped_bytes() -> int:
    """This process's virtual memory size (VmSize), 0 where /proc is missing."""
    try:
        with open("/proc/self/statm") as fh:
            return int(fh.read().split()[0]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, IndexError):
        return 0


def process_task(task: Task, job) -> Outcome:
    """Summarize one document from its bytes; never raises (errors come back as a reason)."""
    started = time.perf_counter()
    rel = task.rel
    verb = getattr(job, "verb", "summarized")
    timings: dict = {}
    result = error = encoding = None
    warnings: list[str] = []
    try:
        problem = prepare_once(job, task.threads)
        if problem:
            error = f"'{rel}' was not {verb}: the worker could not load its models ({problem})"
        else:
            with read_limits(rel):
                document = reading.read(task.data, task.format, name=rel)
            encoding = document.encoding
            read_at = time.perf_counter()
            timings["read_s"] = round(read_at - started, 4)
            error, warnings = reading.text_problem(document, f"'{rel}'", task.any_language)
            if not error:
                made = job(document, task.settings) if task.inputs is None else job(document, task.settings, task.inputs)
                result = JobResult.coerce(made)
                timings["summarize_s"] = round(time.perf_counter() - read_at, 4)
    except reading.ReadError as exc:
        error = str(exc)
    except (Exception, SystemExit) as exc:
        error = f"'{rel}' could not be {verb} ({type(exc).__name__}: {one_line(exc)})"
    timings["worker_s"] = round(time.perf_counter() - started, 4)
    return Outcome(result, error, encoding, tuple(warnings or ()), f"{socket.gethostname()}:{os.getpid()}", timings)
