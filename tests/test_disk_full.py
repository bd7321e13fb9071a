"""A full disk: a batch run whose output folder is a size-limited tmpfs runs until writes fail.
It must stop with one clear line, leave the manifest valid JSON lines with no partial record and
no half-written summary file, and a re-run after space is freed must complete the rest, each
document exactly once, the same as a run on a roomy disk.

Needs the right to mount (root, or CAP_SYS_ADMIN); skipped with the reason otherwise. ENOSPC on
a full tmpfs is the kernel's documented behaviour (tmpfs(5): "size ... writes beyond it fail
with ENOSPC").
"""

from __future__ import annotations

import collections
import json
import subprocess
import sys
from pathlib import Path

import pytest

from summarize import batch

ROOT = Path(__file__).resolve().parents[1]
N_DOCS = 60


@pytest.fixture
def small_disk(tmp_path):
    mount = tmp_path / "small"
    mount.mkdir()
    done = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=192k", "tmpfs", str(mount)], capture_output=True,
                          text=True)
    if done.returncode != 0:
        pytest.skip(f"cannot mount a size-limited tmpfs here ({done.stderr.strip() or 'mount failed'}); "
                    "needs root or CAP_SYS_ADMIN")
    try:
        yield mount
    finally:
        subprocess.run(["umount", "-l", str(mount)], capture_output=True)


def make_docs(folder: Path) -> Path:
    folder.mkdir()
    for i in range(N_DOCS):
        text = " ".join(f"On day {j} the ferry from Lantern Quay carried {i + j} passengers to the island and "
                        "returned before the evening tide." for j in range(12))
        (folder / f"log_{i:02d}.txt").write_text(f"Ferry log {i}. {text}\n", encoding="utf-8")
    return folder


def batch_run(src: Path, out: Path) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "summarize", "batch", str(src), "--out", str(out), "--words", "150",
                           "--workers", "1", "--job", "lead", "-q"], cwd=ROOT, capture_output=True, text=True,
                          timeout=300)


def test_a_full_disk_stops_cleanly_and_a_rerun_completes(tmp_path, small_disk):
    src = make_docs(tmp_path / "in")
    reference = tmp_path / "reference"
    assert batch_run(src, reference).returncode == 0
    expected = {r["path"]: r["summary"] for r in batch.read_manifest(reference)}
    out = small_disk / "out"

    full = batch_run(src, out)
    assert full.returncode == 1
    lines = full.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("boildown: error: stopped: "), full.stderr
    assert "No space left on device" in lines[0] and "run the same command again to do the rest" in lines[0]

    raw = (out / batch.MANIFEST_NAME).read_bytes()
    assert raw == b"" or raw.endswith(b"\n")  # no partial record
    records = [json.loads(line) for line in raw.decode("utf-8").splitlines()]  # every line valid JSON
    assert 0 < len(records) < N_DOCS, "the disk should fill part-way through the run"
    for record in records:
        assert record["status"] == "done" and record["summary"] == expected[record["path"]]
    for summary in out.rglob("*" + batch.SUMMARY_SUFFIX):  # a summary file is whole or absent
        rel = summary.relative_to(out).as_posix().replace(batch.SUMMARY_SUFFIX, ".txt")
        assert summary.read_text(encoding="utf-8") == expected[rel] + "\n"

    subprocess.run(["mount", "-o", "remount,size=8m", str(small_disk)], check=True)  # space freed
    again = batch_run(src, out)
    assert again.returncode == 0, again.stderr
    counts = collections.Counter(r["path"] for r in batch.read_manifest(out))
    assert counts == {path: 1 for path in expected}
    assert {r["path"]: r["summary"] for r in batch.read_manifest(out)} == expected
    assert not [p for p in out.rglob("*") if p.name.endswith(batch.TMP_SUFFIX) or p.name.startswith(".")]
