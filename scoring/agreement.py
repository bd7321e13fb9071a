"""Agreement: how close a candidate summary is to the other candidates of the same source.

Method: the other candidates serve as pseudo-references. A candidate's agreement is its mean
ROUGE-2 F1 (rouge-score, stemming on, through ``scoring.reference.RougeScorer``) against each
of the other candidates. Choosing the candidate that agrees most with the rest is minimum
Bayes-risk selection (Kumar & Byrne, 2004) with ROUGE-2 as the gain; using other systems'
summaries as references when no human one exists is the pseudo-model idea of Louis & Nenkova
(Computational Linguistics, 2013). Both are recalled from memory.

Why it is in the ordering score (``scoring.combine.OrderConfig``; never in the combined score,
since its value depends on the pool): on 30 SQuALITY train stories (bench/quality.py ranking
evidence, ``bench/results/ranking_tuning_train.json``), ordering each story's candidates by
agreement matched their order by ROUGE-2 against the human summaries at a mean Kendall tau of
0.246, against 0.118 for coverage alone (0.180 against 0.010 among boildown's own candidates
only, ``bench/ranking_fit.py``).

What it cannot see: agreement rewards the typical candidate. A point every candidate leaves
out costs none of them anything; coverage's missed key words are the place to look for that.
It needs at least ``min_candidates`` candidates (itself and two others); with fewer it is not
computed, there is no ordering score and the combined score ranks.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

from scoring.base import BaseScorer, Column, Result, Signature


@dataclass(frozen=True)
class AgreementConfig:
    measure: str = "rouge2"  # rouge1 ... rouge9: the n-gram ROUGE used between candidates
    min_candidates: int = 3

    def __post_init__(self):
        import re

        if not re.fullmatch(r"rouge[1-9]", self.measure):
            raise ValueError(f"measure must be an n-gram ROUGE type (rouge1 ... rouge9), got {self.measure!r}")
        if self.min_candidates < 3:
            raise ValueError(f"min_candidates must be at least 3 (a candidate and two others), got {self.min_candidates}")


@dataclass(frozen=True)
class AgreementScore(Result):
    value: float  # mean F1 against the other candidates, in [0, 1]
    others: int  # how many other candidates it was compared with
    closest: int  # index (in the pool) of the candidate it agrees with most
    closest_value: float
    signature: Signature = field(compare=False)



class AgreementScorer(BaseScorer, name="agreement", label="Agreement", needs="pool", config=AgreementConfig):
    """With 3 or more candidates, each one's mean ROUGE-2 F1 against the other candidates of
    the same source: the typical candidate scores high, and a point every candidate leaves out
    costs none of them."""

    columns = (Column("agreement", lambda r: r.value, "num3", "agreement", "Agreement"),)

    @functools.cached_property
    def _rouge(self):
        from scoring.reference import RougeConfig, RougeScorer

        return RougeScorer(RougeConfig(types=(self.config.measure,)))

    def signature(self) -> Signature:
        return Signature.build("agreement", {"measure": self.config.measure, "stemmed": True, "gain": "mean-f1"},
                               ("rouge-score", "nltk"))

    def score(self, summary: str, *, source=None, reference=None) -> AgreementScore:
        """Agreement of ``summary`` with ``reference``: the other candidates (at least one);
        ``closest`` indexes that list."""
        others = [reference] if isinstance(reference, str) else list(reference or [])
        if not others:
            raise ValueError("agreement compares a candidate with the other candidates: pass reference=[...]")
        return self._result([self._f1(summary, o) for o in others], list(range(len(others))))

    def score_many(self, summaries: list[str], *, source=None, references=None) -> list[AgreementScore | None]:
        """Agreement of every candidate with the rest of the pool (``closest`` indexes the pool);
        ``None`` for each when the pool is smaller than ``min_candidates``."""
        n = len(summaries)
        if n < self.config.min_candidates:
            return [None] * n
        f1 = [[0.0] * n for _ in range(n)]
        for i in range(n):
            for j in range(i + 1, n):  # F1 is symmetric: precision and recall swap
                f1[i][j] = f1[j][i] = self._f1(summaries[i], summaries[j])
        return [self._result([f1[i][j] for j in range(n) if j != i], [j for j in range(n) if j != i]) for i in range(n)]

    def _result(self, values: list[float], index: list[int]) -> AgreementScore:
        best = max(range(len(values)), key=values.__getitem__)  # the first on ties
        return AgreementScore(round(sum(values) / len(values), 6), len(values), index[best], values[best],
                              self.signature())

    def _f1(self, summary: str, other: str) -> float:
        """F1 of one candidate against another; 0 when either has no word ROUGE can count."""
        from rouge_score import tokenize

        if not tokenize.tokenize(summary or "", None) or not tokenize.tokenize(other or "", None):
            return 0.0
        return self._rouge.score(summary, reference=other).f1(self.config.measure)
