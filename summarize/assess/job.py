"""The batch job that scores existing summaries of one source: ``AssessJob`` (the evaluator) and
``OverlapJob`` (a model-free stand-in for tests and rehearsals).

A job gets one task per source: the source's bytes (read once, by the batch worker) and, in the
task's ``inputs``, the rows to score: ``{"rows": [{"key", "summary", "references"}, ...]}``.
All rows of a source go to the evaluator together (rows with other references in another call),
so the source-side work (key words, the filler baseline, the reference perplexity) is done once
per source however many systems summarised it. Each row comes back as a flat dict of the report's
columns (``summarize.report.rows``) plus ``signatures``.

The pool scorer (agreement: a summary against the *other* summaries of its source) is left
out, and the combined score is taken without it (the formula's own rule when agreement is
missing): here the other summaries are other systems, so a system's score would change with the
set of systems compared, and a result could not be reused when a system is added.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, replace
from typing import ClassVar

from summarize.batch.worker import JobResult
from summarize.batch.worker import job_from_spec as batch_job_from_spec

LEFT_OUT = ("agreement",)


@dataclass(frozen=True)
class AssessJob:
    """Score the given summaries of one source with every registered scorer but the pool's."""

    name: ClassVar[str] = "assess"
    verb: ClassVar[str] = "scored"

    def code(self) -> str:
        """What the scores depend on besides the settings: boildown's version and the formula."""
        from scoring.base import project_version
        from scoring.combine import CombineConfig

        return f"boildown {project_version()}; {CombineConfig().signature()}; without {', '.join(LEFT_OUT)}"

    def check(self) -> None:
        """Fail fast (one line, names the fix) when the model files are not installed."""
        from scoring import models

        models.encoder_path(), models.gguf_path()

    def prepare(self, threads: int | None) -> None:
        from scoring import models

        models.set_threads(threads)
        for load in models.LOADERS.values():  # the causal model, the encoder, spaCy (key words)
            load()

    def __call__(self, document, settings: dict, inputs: dict) -> JobResult:
        from scoring.evaluate import evaluator_for

        evaluator = evaluator_for({"coverage": {"keywords": settings.get("keywords")}})
        out = {}
        for refs, rows in _by_references(inputs["rows"]).items():
            started = time.perf_counter()
            ranked = evaluator.evaluate([(r["key"], r["summary"]) for r in rows], source=document.text,
                                        references=list(refs) or None)
            seconds = round((time.perf_counter() - started) / len(rows), 4)
            for candidate in ranked:
                out[candidate.name] = {**_row(evaluator, candidate), "seconds": seconds}
        return JobResult("", 0, source_words=document.word_count,
                         rows=tuple(out[r["key"]] for r in inputs["rows"]))


def _by_references(rows: list[dict]) -> dict[tuple, list[dict]]:
    groups: dict[tuple, list[dict]] = {}
    for row in rows:
        groups.setdefault(tuple(row.get("references") or ()), []).append(row)
    return groups


def _row(evaluator, candidate) -> dict:
    """A candidate's flat columns (the CSV's) and signatures, the pool scorer left out."""
    from summarize import report

    scores = {k: v for k, v in candidate.scores.items() if k not in LEFT_OUT}
    candidate = replace(candidate, scores=scores, combined=evaluator.combined(scores))
    flat = report.rows([candidate])[0]
    values = {k: v for k, v in flat.items() if k not in ("rank", "name", "budget", "over_budget")}
    signatures = {name: str(r.signature) for name, r in scores.items() if r is not None}
    signatures["combined"] = str(evaluator.config.combine.signature())
    return {**values, "signatures": signatures}


@dataclass(frozen=True)
class OverlapJob:
    """A model-free stand-in with the real job's shape: coverage = the share of the source's
    content words (4 letters or more) the summary contains, fluency = the share of the summary's
    words that are not repeats, combined = their mean; missed = content words left out. Used by
    tests and rehearsals (hidden ``--job overlap[:SECONDS]``); never a measure of quality."""

    delay: float = 0.0
    name: ClassVar[str] = "overlap"
    verb: ClassVar[str] = "scored"

    def check(self) -> None:
        pass

    def prepare(self, threads: int | None) -> None:
        pass

    def __call__(self, document, settings: dict, inputs: dict) -> JobResult:
        import re

        if self.delay:
            time.sleep(self.delay)
        content = sorted({w for w in re.findall(r"[a-z]{4,}", document.text.lower())})
        rows = []
        for row in inputs["rows"]:
            words = re.findall(r"[a-z']+", row["summary"].lower())
            have = set(words)
            coverage = sum(w in have for w in content) / len(content) if content else 0.0
            fluency = len(have) / len(words) if words else 0.0
            rows.append({"words": len(row["summary"].split()), "coverage": round(coverage, 4),
                         "fluency": round(fluency, 4), "combined": round((coverage + fluency) / 2, 4),
                         "missed": " ".join(w for w in content if w not in have)[:200],
                         "signatures": {"coverage": "overlap(stand-in)", "fluency": "overlap(stand-in)"}})
        return JobResult("", 0, source_words=document.word_count, rows=tuple(rows))


def job_from_spec(spec: str):
    """``assess`` or ``overlap[:SECONDS]`` (the hidden ``--job`` option)."""
    return batch_job_from_spec(spec, real=AssessJob, stand_in=OverlapJob)
