"""The engines a batch run can use, by name (``--engine``); the contract is in ``base``."""

from __future__ import annotations

from summarize.batch.engines.base import Engine, WorkerLost, cpu_count
from summarize.batch.engines.dask import DASK_INSTALL, DaskEngine
from summarize.batch.engines.local import MAX_DEFAULT_WORKERS, LocalEngine, default_workers

ENGINE_CLASSES: dict[str, type[Engine]] = {engine.name: engine for engine in (LocalEngine, DaskEngine)}
ENGINES = tuple(ENGINE_CLASSES)  # what --engine offers


def engine_class(name: str) -> type[Engine]:
    """The engine called ``name`` (a BatchConfig has checked that it is registered)."""
    return ENGINE_CLASSES[name]


__all__ = ["DASK_INSTALL", "ENGINES", "ENGINE_CLASSES", "MAX_DEFAULT_WORKERS", "DaskEngine", "Engine", "LocalEngine",
           "WorkerLost", "cpu_count", "default_workers", "engine_class"]
