"""Statistics over documents: means with bootstrap intervals, paired tests between two systems,
and the Kendall tau helpers that ``assess`` and the validity benches share (one code path).

Every resampling draws from a local ``numpy.random.default_rng(seed)``; the seed is an argument
and is recorded by the caller. Published methods:

* percentile bootstrap interval of a mean, resampling documents (Efron & Tibshirani 1993, ch. 13);
* paired bootstrap resampling (Koehn 2004, "Statistical significance tests for machine
  translation evaluation"): resample documents with replacement; the p-value is the share of
  resamples in which the system ahead on the full set is not ahead;
* approximate randomisation (Riezler & Maxwell 2005, "On some pitfalls in automatic evaluation
  and significance testing for MT"; Noreen 1989): swap each document's pair of scores with
  probability 1/2; the p-value is the share of shuffles whose absolute mean difference is at
  least the observed one. Both p-values count the observed set itself, (c + 1) / (R + 1),
  so neither is ever 0 (Noreen 1989's correction, also used by sacrebleu).
* Kendall tau-b (scipy.stats.kendalltau); summary level = mean over documents of the tau across
  that document's summaries (documents where either side is constant are left out), system
  level = the tau of the per-system means (SummEval's and REALSumm's conventions).
"""

from __future__ import annotations

import math
import warnings
from collections import defaultdict
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

DEFAULT_SAMPLES = 1000
DEFAULT_CONFIDENCE = 0.95
TESTS = ("paired-bootstrap", "randomisation")
TEST_SOURCES = {"paired-bootstrap": "paired bootstrap resampling (Koehn 2004)",
                "randomisation": "approximate randomisation (Riezler & Maxwell 2005)"}


# --------------------------------------------------------------------------------------------
# Kendall tau, shared with the validity benches
# --------------------------------------------------------------------------------------------


def kendall(a: Sequence[float], b: Sequence[float]) -> float:
    """Kendall tau-b (scipy.stats.kendalltau), NaN when either side is constant or too short."""
    from scipy.stats import kendalltau

    if len(a) != len(b):
        raise ValueError(f"kendall needs two lists of the same length, got {len(a)} and {len(b)}")
    if len(a) < 2:
        return math.nan
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # scipy warns on a constant input; NaN says it
        return float(kendalltau(a, b).statistic)


def system_means(rows: Iterable[tuple[str, float]]) -> dict[str, float]:
    """The mean value per system of (system, value) pairs (None values left out), by system name."""
    found: dict[str, list[float]] = defaultdict(list)
    for system, value in rows:
        if value is not None:
            found[system].append(float(value))
    return {system: sum(v) / len(v) for system, v in found.items() if v}


def tau_of_means(first: Mapping[str, float], second: Mapping[str, float]) -> float:
    """Kendall tau between two sets of per-system means, over the systems both have (sorted by name)."""
    systems = sorted(set(first) & set(second))
    return kendall([first[s] for s in systems], [second[s] for s in systems])


def system_level_tau(rows: Iterable[tuple[str, str, float, float]]) -> float:
    """System-level tau of (document, system, human, metric) rows: the per-system means of each
    side (``system_means``), then their tau (``tau_of_means``)."""
    rows = list(rows)
    return tau_of_means(system_means((s, h) for _, s, h, _ in rows), system_means((s, m) for _, s, _, m in rows))


def summary_level_tau(rows: Iterable[tuple[str, str, float, float]]) -> float:
    """Summary-level tau of (document, system, human, metric) rows: per document the tau across
    its summaries, then the mean over documents (NaN documents, e.g. constant ratings, left out;
    NaN when none is left)."""
    by_document: dict[str, list[tuple[float, float]]] = defaultdict(list)
    for document, _system, human, metric in rows:
        by_document[document].append((human, metric))
    taus = [kendall([h for h, _ in pairs], [m for _, m in pairs]) for pairs in by_document.values()]
    taus = [t for t in taus if not math.isnan(t)]
    return sum(taus) / len(taus) if taus else math.nan


# --------------------------------------------------------------------------------------------
# Intervals and paired tests
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Interval:
    """A mean over documents with its percentile bootstrap interval."""

    mean: float
    low: float
    high: float
    documents: int
    samples: int
    confidence: float
    seed: int

    def to_dict(self) -> dict:
        return {"mean": self.mean, "low": self.low, "high": self.high, "documents": self.documents,
                "samples": self.samples, "confidence": self.confidence, "seed": self.seed,
                "method": "percentile bootstrap over documents"}


def _check(samples: int, confidence: float | None = None) -> None:
    if not isinstance(samples, int) or isinstance(samples, bool) or samples < 1:
        raise ValueError(f"the number of resamples must be a whole number of at least 1, got {samples!r}")
    if confidence is not None and not 0 < confidence < 1:
        raise ValueError(f"the confidence level must lie between 0 and 1, e.g. 0.95; got {confidence!r}")


def bootstrap_interval(values: Sequence[float], *, samples: int = DEFAULT_SAMPLES,
                       confidence: float = DEFAULT_CONFIDENCE, seed: int = 0) -> Interval:
    """The mean of ``values`` (one per document) and its percentile bootstrap interval: resample
    the documents with replacement ``samples`` times, take each resample's mean, and cut the
    (1 - confidence) / 2 tails (numpy's linear percentile, as scipy.stats.bootstrap does)."""
    import numpy as np

    _check(samples, confidence)
    data = np.asarray(values, dtype=float)
    if data.size == 0:
        raise ValueError("no values to average: every row of this system failed or was left out")
    rng = np.random.default_rng(seed)
    means = data[rng.integers(0, data.size, size=(samples, data.size))].mean(axis=1)
    tail = 100 * (1 - confidence) / 2
    low, high = np.percentile(means, [tail, 100 - tail])
    return Interval(float(data.mean()), float(low), float(high), int(data.size), samples, confidence, seed)


@dataclass(frozen=True)
class PairedTest:
    """The outcome of one paired test of system ``a`` against system ``b`` over shared documents."""

    a: str
    b: str
    difference: float  # mean of a minus mean of b over the documents both have
    p_value: float
    documents: int
    method: str
    samples: int
    seed: int

    @property
    def source(self) -> str:
        return TEST_SOURCES[self.method]

    def to_dict(self) -> dict:
        return {"a": self.a, "b": self.b, "difference": self.difference, "p_value": self.p_value,
                "documents": self.documents, "method": self.method, "source": self.source,
                "samples": self.samples, "seed": self.seed}


def paired_bootstrap(a: Sequence[float], b: Sequence[float], *, samples: int = DEFAULT_SAMPLES,
                     seed: int = 0) -> float:
    """Koehn (2004) paired bootstrap p-value for "the system ahead on these documents is ahead":
    resample document indices with replacement, the same indices for both systems; p = (number
    of resamples where the leader's mean is not above the other's + 1) / (samples + 1). Two
    identical systems give 1."""
    import numpy as np

    _check(samples)
    diff = _differences(a, b)
    leader = 1.0 if diff.mean() >= 0 else -1.0
    rng = np.random.default_rng(seed)
    means = diff[rng.integers(0, diff.size, size=(samples, diff.size))].mean(axis=1) * leader
    return float((np.count_nonzero(means <= 0) + 1) / (samples + 1))


def approximate_randomisation(a: Sequence[float], b: Sequence[float], *, samples: int = DEFAULT_SAMPLES,
                              seed: int = 0) -> float:
    """Riezler & Maxwell (2005) approximate randomisation p-value (two-sided): each shuffle
    swaps each document's two scores with probability 1/2 (a sign flip of its difference);
    p = (number of shuffles with |mean difference| >= the observed |mean difference| + 1) /
    (samples + 1)."""
    import numpy as np

    _check(samples)
    diff = _differences(a, b)
    observed = abs(diff.mean())
    rng = np.random.default_rng(seed)
    signs = rng.integers(0, 2, size=(samples, diff.size)) * 2 - 1
    shuffled = np.abs((signs * diff).mean(axis=1))
    tolerance = 1e-12 * max(1.0, observed)  # float sums of the same numbers in another order
    return float((np.count_nonzero(shuffled >= observed - tolerance) + 1) / (samples + 1))


def paired_test(a_name: str, a: Mapping[str, float], b_name: str, b: Mapping[str, float], *,
                method: str = "paired-bootstrap", samples: int = DEFAULT_SAMPLES, seed: int = 0) -> PairedTest | None:
    """The paired test of two systems' values by document, over the documents both have; None
    when they share fewer than two documents."""
    if method not in TESTS:
        raise ValueError(f"unknown paired test {method!r}; use one of {', '.join(TESTS)}")
    shared = sorted(set(a) & set(b))
    if len(shared) < 2:
        return None
    xs, ys = [a[d] for d in shared], [b[d] for d in shared]
    test = paired_bootstrap if method == "paired-bootstrap" else approximate_randomisation
    p = test(xs, ys, samples=samples, seed=seed)
    difference = sum(xs) / len(xs) - sum(ys) / len(ys)
    return PairedTest(a_name, b_name, difference, p, len(shared), method, samples, seed)


def _differences(a: Sequence[float], b: Sequence[float]):
    import numpy as np

    x, y = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
    if x.shape != y.shape:
        raise ValueError(f"a paired test needs one value per document for both systems, got {x.size} and {y.size}")
    if x.size == 0:
        raise ValueError("a paired test needs at least one document both systems have")
    return x - y
