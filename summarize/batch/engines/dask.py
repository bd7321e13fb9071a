"""The Dask engine: the same per-document task on a Dask distributed cluster (``--engine dask
--scheduler tcp://HOST:PORT``). Dask is optional and imported only when this engine is chosen."""

from __future__ import annotations

import contextlib
import os
import time
from typing import Callable

from summarize.batch.engines.base import Engine, WorkerLost, cpu_count
from summarize.batch.errors import BatchError, one_line
from summarize.batch.worker import Task, limit_threads, prepare_once, process_task

DASK_INSTALL = 'pip install "dask[distributed]==2026.8.0" "distributed==2026.8.0"'


def import_distributed():
    try:
        import distributed
    except ImportError:
        raise BatchError(f"--engine dask needs Dask's distributed scheduler, which is not installed; "
                         f"install it with: {DASK_INSTALL}") from None
    return distributed


def _prepare_worker(job, threads_by_address: dict, dask_worker=None) -> str | None:
    """Run on every Dask worker at the start: split its host's cores, load the models once."""
    threads = None
    if os.environ.get("BOILDOWN_THREADS"):
        threads = int(os.environ["BOILDOWN_THREADS"])
    elif dask_worker is not None:
        threads = threads_by_address.get(dask_worker.address)
    if threads:
        limit_threads(threads)
    return prepare_once(job, threads)


class DaskEngine(Engine):
    """The same per-document task on a Dask distributed cluster; results come back here."""

    name = "dask"

    @classmethod
    def validate(cls, config) -> None:
        if not config.scheduler:
            raise BatchError(
                "--engine dask needs --scheduler tcp://HOST:PORT, the address `dask scheduler` prints"
            )
        if config.workers is not None:
            raise BatchError("--workers sets the local engine's processes; with --engine dask the cluster's "
                             "workers decide (`dask worker ... --nthreads N`)")

    @classmethod
    def require(cls) -> None:
        import_distributed()

    @classmethod
    def start(cls, job, config, todo: int, say: Callable[[str], None]) -> "DaskEngine":
        return cls(job, config.scheduler, say)

    def __init__(self, job, address: str, say: Callable[[str], None]):
        distributed = import_distributed()
        self.job = job
        self._distributed = distributed
        try:
            self.client = distributed.Client(address, timeout="15s", set_as_default=False)
        except (OSError, TimeoutError) as exc:
            raise BatchError(f"could not reach the Dask scheduler at {address} ({one_line(exc)}); check the "
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
        self.capacity = sum(info["nthreads"] for info in workers.values())
        self.workers = len(workers)
        say(f"preparing {self.workers} Dask worker(s) ({self.capacity} task slot(s)) at {address}")
        errors = {e for e in self.client.run(_prepare_worker, self.job, threads).values() if e}
        if errors:
            say(f"warning: a Dask worker could not load its models: {sorted(errors)[0]}")

    def submit(self, task: Task):
        return self.client.submit(process_task, task, self.job, pure=False,
                                  key=f"boildown-{task.rel[-60:]}-{os.urandom(4).hex()}")

    def wait(self, handles, timeout: float) -> set:
        deadline = time.monotonic() + timeout
        while True:  # distributed.wait needs a default client, which this run does not install
            done = {f for f in handles if f.done()}
            if done or time.monotonic() > deadline:
                return done
            time.sleep(0.05)

    def outcome(self, handle):
        try:
            return handle.result()
        except self._distributed.KilledWorker:
            raise WorkerLost("Dask workers died each time they ran this document (out of memory?)",
                             final=True) from None
        except Exception as exc:
            raise WorkerLost(f"the Dask task failed ({type(exc).__name__}: {one_line(exc)})", final=True) from None

    def restart(self) -> None:
        pass  # the scheduler replaces lost workers and retries their tasks itself

    def close(self, cancel: bool = False) -> None:
        with contextlib.suppress(Exception):
            self.client.close()
