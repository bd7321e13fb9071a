"""A worker lost mid-run: one worker process is killed with SIGKILL while it holds a document,
at several points of a run, with the local engine and with the Dask engine on a local cluster.
The run must finish with every document exactly once in the manifest and the same summaries
as an undisturbed run.

The job is LeadJob with a delay (no models; every document is still read for real). The
reference is the undisturbed run of the same command over the same folder, made here. Dask's
scheduler retries a task whose worker died (distributed's ``allowed-failures``, 3 by default,
from its documentation), and the LocalCluster's nanny restarts the worker.
"""

from __future__ import annotations

import collections
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from summarize import batch

ROOT = Path(__file__).resolve().parents[1]
N_DOCS = 12
DELAY = "0.4"


def make_docs(folder: Path) -> Path:
    folder.mkdir(parents=True)
    for i in range(N_DOCS):
        (folder / f"crossing_{i:02d}.txt").write_text(
            f"Crossing log {i}: the ferry from Lantern Quay carried {40 + i} passengers on day {i + 1}. "
            "The harbour trust noted a short delay at the north slipway and no damage to the vessel. "
            f"The next inspection of pier {i % 4 + 1} is due before the spring timetable begins.\n",
            encoding="utf-8")
    return folder


def command(src: Path, out: Path, *engine: str) -> list[str]:
    return [sys.executable, "-m", "summarize", "batch", str(src), "--out", str(out), "--words", "10",
            "--job", f"lead:{DELAY}", *(engine or ("--workers", "2"))]


def lines_in(out: Path) -> int:
    try:
        return (out / batch.MANIFEST_NAME).read_bytes().count(b"\n")
    except FileNotFoundError:
        return 0


def local_workers(parent: int) -> list[int]:
    """The spawned worker processes of a local-engine run (not multiprocessing's tracker)."""
    found = []
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            ppid = int((entry / "stat").read_text().rsplit(")", 1)[1].split()[1])
            cmdline = (entry / "cmdline").read_bytes()
        except (OSError, IndexError, ValueError):
            continue
        if ppid == parent and b"spawn_main" in cmdline:
            found.append(int(entry.name))
    return found


def facts(out: Path) -> dict[str, tuple]:
    return {r["path"]: (r["sha256"], r["status"], r["summary"]) for r in batch.read_manifest(out)}


def summaries(out: Path) -> dict[str, str]:
    return {p.name: p.read_text(encoding="utf-8") for p in out.rglob("*" + batch.SUMMARY_SUFFIX)}


def check_exactly_once(out: Path, reference: Path) -> None:
    counts = collections.Counter(r["path"] for r in batch.read_manifest(out))
    assert counts == {path: 1 for path in facts(reference)}, counts  # no duplicate, no loss
    assert facts(out) == facts(reference)
    assert summaries(out) == summaries(reference)
    assert not [p for p in out.rglob("*") if p.name.endswith(batch.TMP_SUFFIX)]


@pytest.fixture(scope="module")
def undisturbed(tmp_path_factory):
    base = tmp_path_factory.mktemp("kill")
    src = make_docs(base / "in")
    done = subprocess.run(command(src, base / "reference"), cwd=ROOT, capture_output=True, text=True, timeout=180)
    assert done.returncode == 0, done.stderr
    return src, base / "reference"


@pytest.mark.parametrize("after", [0, 4, 9], ids=["first-document", "after-4", "after-9"])
def test_local_engine_survives_a_killed_worker_exactly_once(undisturbed, tmp_path, after):
    src, reference = undisturbed
    out = tmp_path / "out"
    proc = subprocess.Popen(command(src, out), cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 120
    workers = []
    while time.monotonic() < deadline and proc.poll() is None:
        workers = local_workers(proc.pid)
        if len(workers) == 2 and lines_in(out) >= after and (after or (out / batch.MANIFEST_NAME).exists()):
            break
        time.sleep(0.02)
    assert workers and proc.poll() is None, "the run ended before a worker could be killed"
    before = lines_in(out)
    os.kill(workers[0], signal.SIGKILL)
    stdout, stderr = proc.communicate(timeout=180)
    assert before < N_DOCS, "the kill came after the last document"
    assert proc.returncode == 0, stderr
    assert "a worker process died; restarting the pool and retrying its documents" in stderr
    check_exactly_once(out, reference)


def test_dask_engine_survives_a_killed_worker_exactly_once(undisturbed, tmp_path):
    distributed = pytest.importorskip("distributed", reason="Dask is optional: " + batch.DASK_INSTALL)
    src, reference = undisturbed
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                                  host="127.0.0.1") as cluster, distributed.Client(cluster) as client:
        kills = 0
        for point in (1, 5, 9):  # three runs, a worker killed at a different point in each
            out = tmp_path / f"out{point}"
            proc = subprocess.Popen(command(src, out, "--engine", "dask", "--scheduler", cluster.scheduler_address),
                                    cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
            deadline = time.monotonic() + 120
            victim = None
            while time.monotonic() < deadline and proc.poll() is None:
                if lines_in(out) >= point:
                    busy = [addr for addr, keys in client.processing().items()
                            if any(str(k).startswith("boildown-") for k in keys)]
                    if busy:
                        victim = client.run(os.getpid, workers=[busy[0]])[busy[0]]
                        break
                time.sleep(0.02)
            assert victim is not None, "no worker held a document before the run ended"
            os.kill(victim, signal.SIGKILL)
            kills += 1
            stdout, stderr = proc.communicate(timeout=180)
            assert proc.returncode == 0, stderr
            check_exactly_once(out, reference)
            assert {r["engine"] for r in batch.read_manifest(out)} == {"dask"}
            client.wait_for_workers(2, timeout=60)  # the nanny brings the killed worker back
        assert kills == 3
