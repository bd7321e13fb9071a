"""The output folder's lock (summarize/batch/lock.py): two runs at once, and stale locks.

What is checked, and against what:
- mutual exclusion under a race: many processes released at the same instant on one folder;
  exactly one holds the lock, every other gets the "in use" line, and none reports a stale
  takeover (a lock file seen before its PID was written used to be mistaken for a stale one);
- a lock left by a process killed with SIGKILL is taken over with a message naming its PID: the
  kernel drops a dead process's flock (flock(2), Linux man-pages: "the lock is released ... when
  all file descriptors ... have been closed"), which is what "stale" means here;
- a second `boildown batch` on a folder in use exits 1 with the one "locked" line, and the first
  run's manifest is whole.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from summarize import batch
from summarize.batch import BatchError, OutputLock

ROOT = Path(__file__).resolve().parents[1]

RACER = r"""
import sys, time
from pathlib import Path
from summarize.batch import BatchError, OutputLock
out, start, hold = Path(sys.argv[1]), float(sys.argv[2]), float(sys.argv[3])
while time.time() < start:
    pass
lock = OutputLock(out)
try:
    notice = lock.acquire()
except BatchError as exc:
    print("refused", exc)
else:
    print("held", notice)
    time.sleep(hold)
    lock.release()
"""


def race(out: Path, n: int) -> list[str]:
    start = time.time() + 1.5  # every racer is imported and spinning by then
    procs = [subprocess.Popen([sys.executable, "-c", RACER, str(out), str(start), "1.0"], cwd=ROOT, text=True,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, env={**os.environ, "PYTHONPATH": str(ROOT)})
             for _ in range(n)]
    lines = []
    for proc in procs:
        stdout, stderr = proc.communicate(timeout=60)
        assert proc.returncode == 0, stderr
        lines.append(stdout.strip())
    return lines


@pytest.mark.parametrize("round_", range(3))
def test_racers_at_the_same_instant_one_holds_none_takes_over(tmp_path, round_):
    out = tmp_path / "out"
    out.mkdir()
    lines = race(out, 6)
    held = [line for line in lines if line.startswith("held")]
    assert len(held) == 1, lines
    assert held[0] == "held None", lines  # a fresh lock: no takeover notice
    refused = [line for line in lines if line.startswith("refused")]
    assert len(refused) == 5 and all("is in use by another boildown batch run (PID " in line for line in refused)
    assert not any("stale" in line for line in lines)
    assert sorted(p.name for p in out.iterdir()) == []  # released, and no half-made lock left


def test_a_lock_file_always_has_its_pid_when_it_has_its_name(tmp_path):
    lock = OutputLock(tmp_path)
    assert lock.acquire() is None
    try:
        assert (tmp_path / batch.LOCK_NAME).read_text() == f"{os.getpid()}\n"
        assert [p.name for p in tmp_path.iterdir()] == [batch.LOCK_NAME]
        with pytest.raises(BatchError, match=rf"in use by another boildown batch run \(PID {os.getpid()},"):
            OutputLock(tmp_path).acquire()  # a second holder in the same process is refused too
    finally:
        lock.release()
    assert list(tmp_path.iterdir()) == []


def test_a_lock_left_by_a_killed_holder_is_taken_over(tmp_path):
    holder = subprocess.Popen([sys.executable, "-c", RACER, str(tmp_path), "0", "120"], cwd=ROOT, text=True,
                              stdout=subprocess.PIPE, env={**os.environ, "PYTHONPATH": str(ROOT)})
    deadline = time.monotonic() + 30
    while not (tmp_path / batch.LOCK_NAME).exists() and time.monotonic() < deadline:
        time.sleep(0.01)
    with pytest.raises(BatchError, match="in use"):
        OutputLock(tmp_path).acquire()  # alive: refused
    holder.send_signal(signal.SIGKILL)
    holder.communicate(timeout=30)
    assert (tmp_path / batch.LOCK_NAME).read_text() == f"{holder.pid}\n"  # left behind
    lock = OutputLock(tmp_path)
    notice = lock.acquire()
    try:
        assert notice == f"took over a stale lock in '{tmp_path}' left by PID {holder.pid} (no longer running)"
        assert (tmp_path / batch.LOCK_NAME).read_text() == f"{os.getpid()}\n"
    finally:
        lock.release()


@pytest.mark.parametrize("content", [b"", b"not a pid\n"], ids=["empty", "garbage"])
def test_an_unreadable_stale_lock_is_taken_over_naming_no_pid(tmp_path, content):
    (tmp_path / batch.LOCK_NAME).write_bytes(content)
    lock = OutputLock(tmp_path)
    try:
        assert lock.acquire() == f"took over a stale lock in '{tmp_path}' left by PID ? (no longer running)"
    finally:
        lock.release()


def test_a_second_batch_on_a_folder_in_use_gets_the_locked_line(tmp_path):
    src = tmp_path / "in"
    src.mkdir()
    for i in range(4):
        (src / f"note_{i}.txt").write_text(f"Note {i}: the ferry timetable changes in spring. " * 8, encoding="utf-8")
    out = tmp_path / "out"

    def command(delay):
        return [sys.executable, "-m", "summarize", "batch", str(src), "--out", str(out), "--words", "9",
                "--workers", "1", "--job", f"lead:{delay}", "-q"]

    first = subprocess.Popen(command(0.5), cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while not (out / "manifest.jsonl").exists() and time.monotonic() < deadline:
        time.sleep(0.02)
    second = subprocess.run(command(0), cwd=ROOT, capture_output=True, text=True, timeout=60)
    first.communicate(timeout=120)
    assert first.returncode == 0
    assert second.returncode == 1
    assert second.stderr.strip().splitlines() == [
        f"boildown: error: '{out}' is in use by another boildown batch run (PID {first.pid}, lock "
        f"{out / batch.LOCK_NAME}); wait for it to finish or choose another --out folder"]
    assert len(batch.read_manifest(out)) == 4


def test_the_name_appears_only_on_a_whole_held_lock(tmp_path, monkeypatch):
    """At the instant the lock gets its name (the hard link), its file already holds the PID and
    the flock: a racer opening it then sees a live lock, never an empty file it could take over."""
    import fcntl

    seen = []
    real_link = os.link

    def watching_link(src, dst, *args, **kwargs):
        fd = os.open(src, os.O_RDONLY)
        try:
            with pytest.raises(BlockingIOError):
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)  # already held by the creator
            seen.append(os.pread(fd, 64, 0))
        finally:
            os.close(fd)
        return real_link(src, dst, *args, **kwargs)

    monkeypatch.setattr(os, "link", watching_link)
    lock = OutputLock(tmp_path)
    assert lock.acquire() is None
    lock.release()
    assert seen == [f"{os.getpid()}\n".encode()]
