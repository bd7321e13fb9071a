"""The scorers boildown offers, by name: the one list that the evaluator (and through it the
combined score, `score`, `compare`, `summarize` and `batch`) and the reports read.

Adding a scorer is one module holding a class of the ``scoring.base.Scorer`` shape, one line
here, and its tests. Modules are imported only when a scorer is first asked for, so reading
the list costs nothing.
"""

from __future__ import annotations

import functools
import importlib

SCORERS: dict[str, str] = {
    "coverage": "scoring.coverage:CoverageScorer",
    "fluency": "scoring.fluency:FluencyScorer",
    "agreement": "scoring.agreement:AgreementScorer",
    "rouge": "scoring.reference:RougeScorer",
    "bertscore": "scoring.reference:BertScoreScorer",
}


def names() -> tuple[str, ...]:
    """Every registered scorer, in report order."""
    return tuple(SCORERS)


@functools.cache
def scorer_class(name: str) -> type:
    """The class registered under ``name`` (imported on first use)."""
    if name not in SCORERS:
        raise ValueError(f"unknown scorer {name!r}; registered: {', '.join(SCORERS)}")
    module, _, attribute = SCORERS[name].partition(":")
    return getattr(importlib.import_module(module), attribute)


def build(name: str, config=None):
    """A scorer by name, with its default config unless one is given."""
    cls = scorer_class(name)
    return cls(config if config is not None else cls.Config())
