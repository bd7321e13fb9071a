"""Assess a whole system's outputs: score existing summaries of many documents by many systems,
then give each system a mean with a bootstrap interval, paired tests between systems, and a chart.

``run_assess(rows.jsonl or folder, out_dir)`` reads the rows (``inputs``: JSON lines or the
folder layout), scores the rows not scored yet on the batch engines, one task per source
(``job.AssessJob``: the evaluator, source-side work once per source), records each row in
``results.jsonl`` (``log``), and writes ``results.csv``, the per-system table (``table``:
systems.txt/.csv/.json) and the chart (``chart``: systems.svg/.png). ``stats`` holds the
statistics and the Kendall tau helpers the validity benches share. See docs/ASSESS.md.
"""

from __future__ import annotations

from summarize.assess.config import AssessConfig
from summarize.assess.inputs import InputError, Row, load
from summarize.assess.job import AssessJob, OverlapJob, job_from_spec
from summarize.assess.run import AssessInterrupted, AssessResult, run_assess, tally_text

__all__ = ["AssessConfig", "AssessInterrupted", "AssessJob", "AssessResult", "InputError", "OverlapJob", "Row",
           "job_from_spec", "load", "run_assess", "tally_text"]
