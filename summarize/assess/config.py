"""``AssessConfig``: how ``assess`` scores and schedules, and how it summarises by system
(frozen, validated when built). The engines read ``workers`` and ``scheduler`` from it as they
read them from a batch run's ``BatchConfig``."""

from __future__ import annotations

from dataclasses import dataclass

from summarize.assess import stats
from summarize.batch.engines import ENGINE_CLASSES
from summarize.batch.errors import BatchError

METRICS = ("combined", "coverage", "fluency")
"""The values a system table can lead with (the scores every row has, references or not)."""


@dataclass(frozen=True)
class AssessConfig:
    """Scoring settings (they decide whether an earlier result is reused), scheduling, statistics."""

    keywords: int | None = None  # coverage's key words (None: the scorer's default)
    workers: int | None = None
    engine: str = "local"
    scheduler: str | None = None
    force: bool = False
    any_language: bool = False
    samples: int = stats.DEFAULT_SAMPLES  # bootstrap resamples and randomisation shuffles
    confidence: float = stats.DEFAULT_CONFIDENCE
    seed: int = 0
    test: str = "paired-bootstrap"
    metric: str = "combined"  # the value the systems are ranked and compared by

    def __post_init__(self):
        if self.keywords is not None and (not isinstance(self.keywords, int) or self.keywords < 1):
            raise BatchError(f"--keywords must be a whole number of at least 1, got {self.keywords!r}")
        if self.workers is not None and (not isinstance(self.workers, int) or self.workers < 1):
            raise BatchError(f"workers must be at least 1, got {self.workers!r}")
        if not isinstance(self.samples, int) or self.samples < 1:
            raise BatchError(f"--samples must be a whole number of at least 1, got {self.samples!r}")
        if not 0 < self.confidence < 1:
            raise BatchError(f"--confidence must lie between 0 and 1, e.g. 0.95; got {self.confidence!r}")
        if self.test not in stats.TESTS:
            raise BatchError(f"unknown --test {self.test!r}; use one of {', '.join(stats.TESTS)}")
        if self.metric not in METRICS:
            raise BatchError(f"unknown --metric {self.metric!r}; use one of {', '.join(METRICS)}")
        engine = ENGINE_CLASSES.get(self.engine)
        if engine is None:
            raise BatchError(f"unknown engine {self.engine!r}; use one of {', '.join(ENGINE_CLASSES)}")
        engine.validate(self)

    def settings(self, job) -> dict:
        """What a row's scores depend on besides its texts; a result is reused only under the same."""
        out = {"job": job.name, "keywords": self.keywords}
        if hasattr(job, "code"):
            out["code"] = job.code()
        return out

    def statistics(self) -> dict:
        """The statistics' settings, as the table records them."""
        return {"samples": self.samples, "confidence": self.confidence, "seed": self.seed, "test": self.test,
                "test_source": stats.TEST_SOURCES[self.test], "metric": self.metric}
