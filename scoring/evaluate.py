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
from scoring.combine import Candidate, CombineConfig, OrderConfig, rank
from scoring.text import count_words


class EvalConfig:
    """Every scorer's config (a registered name's default unless given), the combined score's
    and the ordering score's.

        EvalConfig(coverage=CoverageConfig(keywords=30))
        EvalConfig().coverage.keywords   # 40, the default

    Immutable, comparable and hashable like the frozen configs it holds."""

    __slots__ = ("combine", "order", "_configs")

    def __init__(self, combine: CombineConfig | None = None, order: OrderConfig | None = None, **configs):
        for name, config in configs.items():
            expected = registry.scorer_class(name).Config  # an unknown name fails here
            if not isinstance(config, expected):
                raise ValueError(f"{name} needs a {expected.__name__}, got {type(config).__name__}")
        object.__setattr__(self, "combine", combine or CombineConfig())
        object.__setattr__(self, "order", order or OrderConfig())
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
        return isinstance(other, EvalConfig) and (self.combine, self.order, self._configs) == (
            other.combine, other.order, other._configs)

    def __hash__(self):
        return hash((self.combine, self.order, self._configs))

    def __repr__(self):
        inner = ", ".join(f"{n}={c!r}" for n, c in self._configs)
        return f"EvalConfig({inner + ', ' if inner else ''}combine={self.combine!r}, order={self.order!r})"


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
        scored: Sequence[Mapping[str, object] | None] | None = None,
    ) -> list[Candidate]:
        """Score (name, text) pairs against the source; return them ranked.

        ``scored`` (parallel to ``candidates``) gives, per candidate, results this evaluator
        already computed for it on this source, by scorer name: a result whose signature is the
        scorer's is reused, not computed again (a pool scorer always runs: the pool is new).
        When ``progress`` also has a ``step(stage, done, total)`` method, the scorers that read
        the source take one candidate at a time and report each step."""
        if not source or not source.strip():
            raise ValueError("the source is empty: there is nothing to summarise or cover")
        say = progress or (lambda _m: None)
        step = getattr(progress, "step", None)
        texts = [text for _, text in candidates]
        given = list(scored) if scored is not None else [None] * len(texts)
        if len(given) != len(texts):
            raise ValueError(f"scored lists {len(given)} candidates, not {len(texts)}")
        refs = [r for r in (references or []) if r and r.strip()]
        results: dict[str, list] = {}
        for name, scorer in self.scorers.items():
            if scorer.needs == "references" and not refs:
                continue
            if scorer.needs == "pool":
                results[name] = scorer.score_many(texts, source=source, references=refs or None)
                continue
            found = [_reusable(g, name, scorer) for g in given]
            todo = [i for i, r in enumerate(found) if r is None]
            reused = f" ({len(texts) - len(todo)} already scored)" if len(todo) < len(texts) else ""
            say(f"{name} of {len(todo)} candidate(s){reused}")
            size = 1 if step else max(1, len(todo))
            for k in range(0, len(todo), size):
                if step:
                    step(name, k, len(todo))
                chunk = todo[k : k + size]
                for i, r in zip(chunk, scorer.score_many([texts[i] for i in chunk], source=source,
                                                          references=refs or None)):
                    found[i] = r
            if step and todo:
                step(name, len(todo), len(todo))
            results[name] = found
        out = []
        for i, (name, text) in enumerate(candidates):
            scores = {key: found[i] for key, found in results.items()}
            out.append(Candidate(name=name, text=text, words=count_words(text), budget=budget, scores=scores,
                                 combined=self.combined(scores), combine=self.config.combine,
                                 order=self.config.order))
        ordering = self.ordering(out)
        if ordering is not None:
            out = [dataclasses.replace(c, ordering=o) for c, o in zip(out, ordering)]
        return rank(out)

    def combined(self, scores: Mapping[str, object]) -> float:
        """The combined score of one candidate's results."""
        return self.config.combine.value({name: r.unit if r is not None else None for name, r in scores.items()
                                          if name in dict(self.config.combine.weights)})


    def ordering(self, candidates: Sequence[Candidate]) -> list[float] | None:
        """The pool-relative ordering score of each candidate (``OrderConfig``), or None when
        the pool is too small for its pool scores."""
        pool = {name: [c.scores[name].unit if c.scores.get(name) is not None else None for c in candidates]
                for name, _ in self.config.order.pool_weights}
        return self.config.order.values(pool, [c.combined for c in candidates])


def _reusable(given: Mapping[str, object] | None, name: str, scorer):
    """A result given for scorer ``name`` that the scorer would compute again as it is (the same
    signature: settings, model and versions), or None."""
    found = (given or {}).get(name)
    if found is None or getattr(found, "signature", None) != scorer.signature():
        return None
    return found


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
