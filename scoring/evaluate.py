"""Run every registered scorer over a set of candidate summaries of one source, and rank them.

One ``Evaluator`` per process holds the scorers, so a source's key words, its coverage
baseline and its reference perplexity are computed once and reused by every candidate (the
``score`` and ``compare`` commands, the summarizer's candidate search and batch all come here).
The scorers are the registry's (``scoring.registry``): one that reads the source or the pool
always runs, one that reads references runs when references are given.
"""

from __future__ import annotations

import dataclasses
import functools
from collections.abc import Callable, Mapping, Sequence

from scoring import registry
from scoring.combine import Candidate, CombineConfig, rank
from scoring.text import count_words


class EvalConfig:
    """Every scorer's config (a registered name's default unless given) and the combined score's.

        EvalConfig(coverage=CoverageConfig(keywords=30))
        EvalConfig().coverage.keywords   # 40, the default

    Immutable, comparable and hashable like the frozen configs it holds."""

    __slots__ = ("combine", "_configs")

    def __init__(self, combine: CombineConfig | None = None, **configs):
        for name, config in configs.items():
            expected = registry.scorer_class(name).Config  # an unknown name fails here
            if not isinstance(config, expected):
                raise ValueError(f"{name} needs a {expected.__name__}, got {type(config).__name__}")
        object.__setattr__(self, "combine", combine or CombineConfig())
        object.__setattr__(self, "_configs", tuple(sorted(configs.items())))

    def of(self, name: str):
        """The config of scorer ``name``."""
        return dict(self._configs).get(name) or registry.scorer_class(name).Config()

    def __getattr__(self, name: str):
        if name in registry.SCORERS:
            return self.of(name)
        raise AttributeError(name)

    def __setattr__(self, name, value):
        raise AttributeError("EvalConfig is immutable; build a new one")

    def __eq__(self, other):
        return isinstance(other, EvalConfig) and (self.combine, self._configs) == (other.combine, other._configs)

    def __hash__(self):
        return hash((self.combine, self._configs))

    def __repr__(self):
        inner = ", ".join(f"{n}={c!r}" for n, c in self._configs)
        return f"EvalConfig({inner + ', ' if inner else ''}combine={self.combine!r})"


class Evaluator:
    """Scores and ranks candidates with every registered scorer (``evaluator.coverage`` etc. are
    the scorer objects)."""

    def __init__(self, config: EvalConfig | None = None):
        self.config = config or EvalConfig()
        self.scorers = {name: registry.build(name, self.config.of(name)) for name in registry.names()}

    def __getattr__(self, name: str):
        scorers = self.__dict__.get("scorers", {})
        if name in scorers:
            return scorers[name]
        raise AttributeError(name)

    def evaluate(
        self,
        candidates: Sequence[tuple[str, str]],
        *,
        source: str,
        references: Sequence[str] | None = None,
        budget: int | None = None,
        progress: Callable[[str], None] | None = None,
    ) -> list[Candidate]:
        """Score (name, text) pairs against the source; return them ranked."""
        if not source or not source.strip():
            raise ValueError("the source is empty: there is nothing to summarise or cover")
        say = progress or (lambda _m: None)
        texts = [text for _, text in candidates]
        refs = [r for r in (references or []) if r and r.strip()]
        results: dict[str, list] = {}
        for name, scorer in self.scorers.items():
            if scorer.needs == "references" and not refs:
                continue
            if scorer.needs != "pool":
                say(f"{name} of {len(texts)} candidate(s)")
            results[name] = scorer.score_many(texts, source=source, references=refs or None)
        out = []
        for i, (name, text) in enumerate(candidates):
            scores = {key: found[i] for key, found in results.items()}
            out.append(Candidate(name=name, text=text, words=count_words(text), budget=budget, scores=scores,
                                 combined=self.combined(scores), combine=self.config.combine))
        return rank(out)

    def combined(self, scores: Mapping[str, object]) -> float:
        """The combined score of one candidate's results."""
        return self.config.combine.value({name: r.unit if r is not None else None for name, r in scores.items()
                                          if name in dict(self.config.combine.weights)})


@functools.cache
def default_evaluator(config: EvalConfig | None = None) -> Evaluator:
    """The process-wide evaluator for a configuration, default settings unless one is given (its
    caches are shared by every caller with the same configuration)."""
    return Evaluator(config)


def evaluator_for(options: Mapping[str, Mapping[str, object]] | None = None) -> Evaluator:
    """The shared evaluator for settings given by scorer and field, e.g. ``{"coverage":
    {"keywords": 30}}`` (what the command line's options set; a field given as None keeps its
    default). The command line and batch both build their evaluator here."""
    configs = {}
    for name, changes in (options or {}).items():
        given = {field: value for field, value in changes.items() if value is not None}
        if given:
            configs[name] = dataclasses.replace(registry.scorer_class(name).Config(), **given)
    config = EvalConfig(**configs)
    return default_evaluator(None if config == EvalConfig() else config)
