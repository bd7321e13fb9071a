"""A batch run's settings: ``BatchConfig`` (frozen, validated when built) and the settings key,
the digest that, with a document's content hash, decides whether an earlier record is reused."""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass

from summarize.batch.discovery import DEFAULT_INCLUDE
from summarize.batch.engines import ENGINE_CLASSES
from summarize.batch.errors import BatchError


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
        engine = ENGINE_CLASSES.get(self.engine)
        if engine is None:
            raise BatchError(f"unknown engine {self.engine!r}; use one of {', '.join(ENGINE_CLASSES)}")
        engine.validate(self)
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


def config_from(config_class, config, options: dict):
    """``config``, or a ``config_class`` built from keyword ``options``; both at once is a
    TypeError. ``run_batch`` and ``run_assess`` take their settings so."""
    if config is None:
        return config_class(**options)
    if options:
        name = config_class.__name__
        raise TypeError(f"give {'an' if name[0] in 'AEIOU' else 'a'} {name} or keyword options, not both")
    return config
