"""No network, ever: each command runs in a subprocess whose Python (and every process it spawns,
through PYTHONPATH) loads a ``sitecustomize`` that refuses to create Internet sockets
(AF_INET, AF_INET6) and to resolve names, via an audit hook (PEP 578; the events
"socket.__new__", "socket.getaddrinfo", "socket.gethostbyname" are listed in Python's audit
events table). Every attempt is also written to a log, so an attempt that the code caught and
ignored still fails the test (one exception, refused but not logged: urllib3's import-time
probe for IPv6 on the loopback address). Local sockets (AF_UNIX, used by multiprocessing) are allowed.

The Dask engine's connections are logged instead of refused: every one must go to the scheduler
address given on the command line.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "tests" / "data" / "compare"

HOOK = r'''
import os, socket, sys

_LOG = os.environ.get("BOILDOWN_NET_LOG")
_MODE = os.environ.get("BOILDOWN_NET_MODE", "block")
_INET = {int(socket.AF_INET), int(socket.AF_INET6)}


def _note(line):
    if _LOG:
        with open(_LOG, "a") as fh:
            fh.write(line + "\n")


def _ipv6_probe():
    # urllib3 asks at import time whether this machine has IPv6 by binding a socket to the
    # loopback address ::1 (urllib3/util/connection.py, _has_ipv6); it is refused like every
    # other Internet socket, and urllib3 reads the refusal as "no IPv6". It is not logged as an
    # attempt because it never leaves the machine and the library already handles the refusal.
    frame = sys._getframe(2)
    while frame is not None:
        code = frame.f_code
        if code.co_name == "_has_ipv6" and code.co_filename.replace(os.sep, "/").endswith("urllib3/util/connection.py"):
            return True
        frame = frame.f_back
    return False


def _hook(event, args):
    if event == "socket.__new__" and len(args) > 1 and int(args[1]) in _INET:
        if _MODE == "block":
            if not _ipv6_probe():
                _note(f"{os.getpid()} socket {args[1]}")
            raise PermissionError("network blocked by the test (socket creation)")
    elif event in ("socket.getaddrinfo", "socket.gethostbyname", "socket.gethostbyname_ex"):
        if _MODE == "block":
            _note(f"{os.getpid()} {event} {args[0]!r}")
            raise PermissionError("network blocked by the test (name lookup)")
    elif event == "socket.connect" and _MODE == "log":
        address = args[1]
        if isinstance(address, tuple):
            _note(f"connect {address[0]}:{address[1]}")


sys.addaudithook(_hook)
'''


@pytest.fixture
def offline(tmp_path):
    """(environment, log path): run a command with Internet sockets refused."""
    site = tmp_path / "site"
    site.mkdir()
    (site / "sitecustomize.py").write_text(HOOK, encoding="utf-8")
    log = tmp_path / "net.log"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(site), str(ROOT)]), "BOILDOWN_NET_LOG": str(log),
           "BOILDOWN_NET_MODE": "block", "BOILDOWN_DTYPE": os.environ.get("BOILDOWN_DTYPE", "float32")}
    return env, log


def boildown(env, *args, timeout=900) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "summarize", *args], cwd=ROOT, env=env, capture_output=True,
                          text=True, timeout=timeout)


def attempts(log: Path) -> list[str]:
    return log.read_text().splitlines() if log.exists() else []


def test_the_fixture_refuses_a_connection_and_logs_it(offline):
    env, log = offline
    probe = subprocess.run([sys.executable, "-c", "import socket; socket.create_connection(('192.0.2.1', 80), 1)"],
                           env=env, capture_output=True, text=True, timeout=60)
    assert probe.returncode != 0 and "network blocked by the test" in probe.stderr
    assert attempts(log)


def test_batch_local_engine_offline(offline, tmp_path):
    env, log = offline
    src = tmp_path / "in"
    src.mkdir()
    for i in range(3):
        (src / f"note_{i}.md").write_text(f"# Pier {i}\n\nThe ferry from Lantern Quay docked at pier {i} "
                                          "on time, and the harbour trust logged no delays that week.\n")
    done = boildown(env, "batch", str(src), "--out", str(tmp_path / "out"), "--words", "8", "--workers", "2",
                    "--job", "lead", "-q")
    assert done.returncode == 0, done.stderr
    assert "done 3" in done.stdout
    assert attempts(log) == []


@pytest.mark.models
@pytest.mark.parametrize("command", [
    ["summarize", str(DEMO / "source.md"), "--words", "40"],
    ["score", str(DEMO / "source.md"), str(DEMO / "good.txt"), str(DEMO / "weak.txt")],
    ["compare", str(DEMO / "source.md"), str(DEMO / "good.txt"), str(DEMO / "weak.txt")],
    ["batch", str(DEMO), "--include", "source.md", "--words", "40", "--workers", "1", "--candidates", "1", "-q"],
    ["assess", "ROWS", "--workers", "1", "--samples", "50", "-q"],
], ids=["summarize", "score", "compare", "batch-summarize", "assess"])
def test_each_command_runs_offline(offline, tmp_path, command):
    env, log = offline
    if command[0] == "assess":  # two systems' summaries of the demo source, as JSON lines
        source = (DEMO / "source.md").read_text(encoding="utf-8")
        rows = tmp_path / "rows.jsonl"
        rows.write_text("".join(json.dumps({"id": "demo", "system": name, "source": source,
                                            "summary": (DEMO / f"{name}.txt").read_text(encoding="utf-8")}) + "\n"
                                for name in ("good", "weak")), encoding="utf-8")
        command = [command[0], str(rows), *command[2:]]
    if command[0] in ("batch", "assess"):
        command = command + ["--out", str(tmp_path / "out")]
    done = boildown(env, *command)
    assert done.returncode == 0, done.stderr[-2000:]
    assert attempts(log) == []
    if command[0] == "assess":
        records = [json.loads(line) for line in (tmp_path / "out" / "results.jsonl").read_text().splitlines()]
        assert sorted((r["system"], r["status"]) for r in records) == [("good", "scored"), ("weak", "scored")]


def test_dask_engine_connects_only_to_the_scheduler_given(tmp_path):
    distributed = pytest.importorskip("distributed", reason="Dask is optional")
    site = tmp_path / "site"
    site.mkdir()
    (site / "sitecustomize.py").write_text(HOOK, encoding="utf-8")
    log = tmp_path / "net.log"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(site), str(ROOT)]), "BOILDOWN_NET_LOG": str(log),
           "BOILDOWN_NET_MODE": "log"}
    src = tmp_path / "in"
    src.mkdir()
    for i in range(4):
        (src / f"note_{i}.txt").write_text(f"The ferry from Lantern Quay docked at pier {i} on time, and the "
                                           "harbour trust logged no delays that week.\n")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None,
                                  host="127.0.0.1") as cluster:
        address = cluster.scheduler_address
        done = boildown(env, "batch", str(src), "--out", str(tmp_path / "out"), "--words", "8", "--engine", "dask",
                        "--scheduler", address, "--job", "lead", "--json", "-q", timeout=300)
        workers = set(cluster.scheduler_info["workers"])
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["done"] == 4
    connects = set(attempts(log))
    assert connects, "the hook saw no connection at all"
    assert connects == {"connect " + address.removeprefix("tcp://")}, (connects, workers)
