"""Batch runs: summarize every document under a folder, in parallel, resumable, nothing lost.

``run_batch(input_dir, out_dir, words=150)`` finds the documents under ``input_dir``
(recursively), summarizes each one in a pool of worker processes (or on a Dask cluster) and
writes, under ``out_dir``:

* one summary file per document, mirroring its relative path
  (``sub/report.pdf`` -> ``sub/report.summary.txt``);
* ``manifest.jsonl``, an append-only log with one JSON record per document and run: path,
  SHA-256 of the content, settings, summary, scores, signatures and timings, or the error with
  its reason;
* ``manifest.csv``, the latest record per path, rebuilt from the manifest at the end of a run.

Crash safety, by construction:

* only this (parent) process writes: workers return results, never touch ``out_dir``;
* a summary file is written to a temporary file in its folder, fsynced, then ``os.replace``d;
* a manifest record is one complete line, appended with one ``write`` and fsynced; Ctrl-C
  and SIGTERM stop a run between two records; a torn last line (a run killed mid-write) is
  cut away when the next run opens the manifest, and leftover temporary files are removed;
* a document whose (content hash, settings) already has a success record is skipped (its
  summary file restored from the record when missing); the settings hold the job's ``code()``
  where it has one (the real job's version and combined formula), so records made by other
  code are not reused; the parent checks the manifest before every append, so a success is
  never recorded twice for the same (path, content, settings) unless ``force`` asks for a
  fresh one (the newer record supersedes the older);
* ``out_dir/.boildown.lock`` (created with O_CREAT|O_EXCL, held with ``flock``, holding the
  PID) keeps two runs from writing the same folder; a lock left by a dead process is taken
  over with a message.

The worker reads the very bytes that the parent hashed (they travel with the task, and are
parsed in memory, never written to a file), so the recorded hash always describes the content
that was summarized, and a Dask worker needs no shared file system.

Modules: ``config`` (BatchConfig, the settings key), ``discovery`` (finding the documents,
naming their summaries, reading their bytes), ``lock``, ``manifest`` (Record, Manifest),
``worker`` (process_task and the jobs), ``engines`` (the Engine contract in ``engines.base``,
``local``, ``dask``), ``stop`` (Ctrl-C and SIGTERM), ``loop`` (dispatch, retries and the
progress bar, shared with assess runs), ``run`` (run_batch, BatchResult, the tally), ``errors``.
"""

from __future__ import annotations

from summarize.batch.config import BatchConfig, settings_key
from summarize.batch.discovery import DEFAULT_INCLUDE, SUMMARY_SUFFIX, Found, discover, read_bytes
from summarize.batch.engines import (DASK_INSTALL, ENGINES, MAX_DEFAULT_WORKERS, DaskEngine, Engine, LocalEngine,
                                     WorkerLost, cpu_count, default_workers)
from summarize.batch.errors import BatchError
from summarize.batch.lock import LOCK_NAME, OutputLock
from summarize.batch.manifest import (CSV_COLUMNS, CSV_NAME, MANIFEST_NAME, Manifest, Record, latest_records,
                                      read_manifest)
from summarize.batch.run import BatchInterrupted, BatchResult, run_batch, tally_text
from summarize.batch.worker import JobResult, LeadJob, Outcome, SummarizeJob, Task, job_from_spec, process_task
from summarize.files import TMP_SUFFIX

__all__ = [
    "BatchConfig", "BatchError", "BatchInterrupted", "BatchResult", "CSV_COLUMNS", "CSV_NAME", "DASK_INSTALL",
    "DEFAULT_INCLUDE", "DaskEngine", "ENGINES", "Engine", "Found", "JobResult", "LOCK_NAME", "LeadJob", "LocalEngine",
    "MANIFEST_NAME", "MAX_DEFAULT_WORKERS", "Manifest", "Outcome", "OutputLock", "Record", "SUMMARY_SUFFIX",
    "SummarizeJob", "TMP_SUFFIX", "Task", "WorkerLost", "cpu_count", "default_workers", "discover", "job_from_spec",
    "latest_records", "process_task", "read_bytes", "read_manifest", "run_batch", "settings_key", "tally_text",
]
