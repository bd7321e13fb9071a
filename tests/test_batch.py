"""Batch runs over folders (the summarize/batch package and `boildown batch`).

Most tests use ``LeadJob`` (the document's opening words, no models; optionally a delay per
document) so they run in seconds; they still read every document for real, so every reading
failure is real. One test, marked ``models``, runs the real summarizer on two tiny invented
documents. The documents are invented notes of the fictional Harrowmere Valley Water Board.

Fixtures in tests/data/bad/ (each must fail with a reason):
  empty.txt         no bytes at all
  binary.txt        an image-like header and random bytes (NUL bytes) saved as .txt
  random_bytes.txt  random bytes 0x80-0xFF: no text encoding fits
  invalid_utf8.txt  the classic invalid UTF-8 sequences; the charset guesser still reads them
                    (as cp1251), so the record must say the guess is not English
  not_english.txt   German prose (invented)
  corrupt.pdf       a PDF header and a cut-off body
  corrupt.docx      a ZIP signature and nothing after it
Made at test time: an oversized file (reading.MAX_BYTES lowered), an unreadable file
(chmod 000), a symbolic link loop, a dangling link, a link to a folder that loops back, a
folder named like a document, a named pipe.
"""

from __future__ import annotations

import collections
import dataclasses
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from summarize import batch, reading
from summarize.batch import LeadJob, discovery, run_batch
from summarize.cli import main

ROOT = Path(__file__).resolve().parents[1]
BAD = ROOT / "tests" / "data" / "bad"

TOWNS = ["Harrowmere", "Ashby Fold", "Kestle Bridge", "Wenlow", "Marrick End", "Olderby", "Pennock", "Sallow Cross",
         "Thorncombe", "Upper Brayle", "Vennet", "Yarrowby", "Colbeck", "Dunstow"]


def doc_text(i: int) -> str:
    """An invented, English, distinct note (about 80 words)."""
    town = TOWNS[i % len(TOWNS)]
    return (
        f"Note {i}: the board inspected the service reservoir at {town} on day {i + 3} of the month. "
        f"The engineers found {i + 2} small cracks in the roof and one blocked overflow pipe. "
        "They recommend that the cracks are sealed before the winter, because rain water could reach "
        "the treated water. The overflow pipe was cleared on the same day. "
        f"Customers in {town} were not affected, and no sample failed a standard. "
        "The next inspection is planned for the spring, when the reservoir is drained for cleaning."
    )


def make_docs(folder: Path, n: int = 12) -> Path:
    """n documents: .txt, .md and .html, some in sub-folders."""
    folder.mkdir(parents=True, exist_ok=True)
    for i in range(n):
        text = doc_text(i)
        if i % 3 == 0:
            path = folder / f"note_{i:02d}.txt"
            path.write_text(text + "\n", encoding="utf-8")
        elif i % 3 == 1:
            path = folder / "minutes" / f"note_{i:02d}.md"
            path.parent.mkdir(exist_ok=True)
            path.write_text(f"# Inspection {i}\n\n{text}\n", encoding="utf-8")
        else:
            path = folder / "minutes" / "2024" / f"note_{i:02d}.html"
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_text(f"<html><body><h1>Inspection {i}</h1><p>{text}</p></body></html>\n", encoding="utf-8")
    return folder


def records(out: Path) -> list[dict]:
    return batch.read_manifest(out)


def summary_files(out: Path) -> dict[str, str]:
    return {p.relative_to(out).as_posix(): p.read_text(encoding="utf-8")
            for p in out.rglob("*") if p.is_file() and p.name.endswith(batch.SUMMARY_SUFFIX)}


def leftovers(out: Path) -> list[str]:
    """Temporary files, or any hidden file (the lock must be gone after a run)."""
    return [p.name for p in out.rglob("*") if p.name.endswith(batch.TMP_SUFFIX) or p.name.startswith(".")]


def run_lead(src, out, **options):
    options.setdefault("words", 12)
    options.setdefault("workers", 1)
    return run_batch(src, out, job=LeadJob(options.pop("delay", 0.0)), **options)


# ------------------------------------------------------------------------------------------ outputs


def test_summaries_mirror_paths_and_each_document_has_one_record(tmp_path):
    src = make_docs(tmp_path / "in", 4)
    out = tmp_path / "out"
    result = run_lead(src, out, workers=2)
    assert (result.done, result.skipped, result.failed) == (4, 0, 0)
    assert sorted(summary_files(out)) == [
        "minutes/2024/note_02.summary.txt", "minutes/note_01.summary.txt",
        "note_00.summary.txt", "note_03.summary.txt"]
    recs = records(out)
    assert sorted(r["path"] for r in recs) == [
        "minutes/2024/note_02.html", "minutes/note_01.md", "note_00.txt", "note_03.txt"]
    first = next(r for r in recs if r["path"] == "note_00.txt")
    # the lead job keeps the first 12 words of the document (doc_text(0))
    assert first["summary"] == " ".join(doc_text(0).split()[:12])
    assert first["words"] == 12 and first["budget"] == 12 and first["status"] == "done"
    assert first["sha256"] == __import__("hashlib").sha256((src / "note_00.txt").read_bytes()).hexdigest()
    assert first["settings"] == {"job": "lead", "words": 12, "ratio": None, "candidates": 3}
    assert first["signatures"]["summary"] == "lead(words=12, candidates=3) on boildown 0.1.0"
    assert first["error"] is None and first["summary_file"] == "note_00.summary.txt"
    assert set(first["timings"]) >= {"read_s", "summarize_s", "worker_s", "wall_s"}
    assert summary_files(out)["note_00.summary.txt"] == first["summary"] + "\n"
    rows = (out / "manifest.csv").read_text(encoding="utf-8").splitlines()
    assert rows[0].split(",")[:4] == ["path", "status", "words", "budget"] and len(rows) == 5
    assert leftovers(out) == []


def test_rerun_skips_force_supersedes_and_csv_shows_the_latest(tmp_path):
    src = make_docs(tmp_path / "in", 3)
    out = tmp_path / "out"
    run_lead(src, out)
    again = run_lead(src, out)
    assert (again.done, again.skipped, again.failed) == (0, 3, 0)
    assert len(records(out)) == 3  # nothing appended by a run that had nothing to do
    forced = run_lead(src, out, force=True)
    assert (forced.done, forced.skipped) == (3, 0)
    recs = records(out)
    assert len(recs) == 6 and collections.Counter(r["path"] for r in recs) == {p: 2 for p in {r["path"] for r in recs}}
    latest_runs = {r["run"] for r in recs[3:]}
    import csv

    with open(out / "manifest.csv", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert len(rows) == 3 and {row["finished"] for row in rows} <= {r["finished"] for r in recs[3:]}
    assert len(latest_runs) == 1


def test_new_settings_are_a_new_record_and_old_records_stay(tmp_path):
    src = make_docs(tmp_path / "in", 2)
    out = tmp_path / "out"
    run_lead(src, out, words=10)
    result = run_lead(src, out, words=20)
    assert result.done == 2 and result.skipped == 0
    assert sorted(r["words"] for r in records(out)) == [10, 10, 20, 20]
    assert run_lead(src, out, words=10).skipped == 2  # both settings are remembered


@dataclasses.dataclass(frozen=True)
class CodedLead(LeadJob):
    """LeadJob that names its code, as the real job does (its version and combined formula)."""

    version: str = "a"

    def code(self) -> str:
        return self.version


def test_a_record_made_by_other_code_is_not_reused(tmp_path):
    src = make_docs(tmp_path / "in", 2)
    out = tmp_path / "out"
    assert run_batch(src, out, job=CodedLead(version="a"), words=10).done == 2
    assert run_batch(src, out, job=CodedLead(version="a"), words=10).skipped == 2
    upgraded = run_batch(src, out, job=CodedLead(version="b"), words=10)
    assert (upgraded.done, upgraded.skipped) == (2, 0)  # an upgrade recomputes without --force
    assert {r["settings"]["code"] for r in records(out)} == {"a", "b"}


def test_identical_copies_are_summarized_once(tmp_path):
    src = make_docs(tmp_path / "in", 2)
    shutil.copy(src / "note_00.txt", src / "copy_of_note_00.txt")
    out = tmp_path / "out"
    result = run_lead(src, out)
    assert (result.done, result.computed) == (3, 2)
    by_path = {r["path"]: r for r in records(out)}
    # the first in path order is summarized, the other reuses its record
    assert by_path["note_00.txt"]["reused_from"] == "copy_of_note_00.txt"
    assert "reused_from" not in by_path["copy_of_note_00.txt"]
    assert by_path["copy_of_note_00.txt"]["summary"] == by_path["note_00.txt"]["summary"]
    assert (out / "copy_of_note_00.summary.txt").is_file()
    # a copy added later reuses the earlier record without running the job
    shutil.copy(src / "note_00.txt", src / "later_copy.txt")
    later = run_lead(src, out)
    assert (later.done, later.skipped, later.computed) == (1, 3, 0)


def test_a_skipped_document_gets_its_missing_summary_file_back(tmp_path):
    src = make_docs(tmp_path / "in", 1)
    out = tmp_path / "out"
    run_lead(src, out)
    (out / "note_00.summary.txt").unlink()
    assert run_lead(src, out).skipped == 1
    assert (out / "note_00.summary.txt").read_text() == records(out)[0]["summary"] + "\n"


def test_a_changed_document_is_summarized_again(tmp_path):
    src = make_docs(tmp_path / "in", 1)
    out = tmp_path / "out"
    run_lead(src, out)
    (src / "note_00.txt").write_text(doc_text(7), encoding="utf-8")
    result = run_lead(src, out)
    assert result.done == 1
    assert [r["summary"].split()[1] for r in records(out)] == ["0:", "7:"]
    assert batch.latest_records(out)["note_00.txt"]["summary"].startswith("Note 7:")


def test_a_torn_last_line_and_temporary_files_are_cleaned_up(tmp_path):
    src = make_docs(tmp_path / "in", 3)
    out = tmp_path / "out"
    run_lead(src, out)
    manifest = out / "manifest.jsonl"
    lines = manifest.read_bytes().splitlines(keepends=True)
    # as if killed while appending the third record and while writing its summary file
    manifest.write_bytes(b"".join(lines[:2]) + lines[2][:57])
    third = json.loads(lines[2])
    (out / third["summary_file"]).unlink()
    stray = out / "minutes" / f".note_01.summary.txt.abc123{batch.TMP_SUFFIX}"
    stray.parent.mkdir(exist_ok=True)
    stray.write_text("half a summ")
    messages = []
    result = run_lead(src, out, progress=messages.append)
    assert (result.done, result.skipped) == (1, 2)
    assert any("cut an incomplete last line" in m for m in messages)
    assert any("removed 1 temporary file" in m for m in messages)
    recs = records(out)
    assert len(recs) == 3 and len({r["path"] for r in recs}) == 3
    assert manifest.read_bytes().endswith(b"\n")
    assert leftovers(out) == [] and (out / third["summary_file"]).is_file()


def test_the_same_failure_is_not_recorded_twice(tmp_path):
    src = tmp_path / "in"
    src.mkdir()
    (src / "empty.txt").write_text("")
    out = tmp_path / "out"
    assert run_lead(src, out).failed == 1
    assert run_lead(src, out).failed == 1  # retried, still failing: counted, not logged again
    assert len(records(out)) == 1
    (src / "empty.txt").write_text(doc_text(1))
    assert run_lead(src, out).done == 1
    assert [r["status"] for r in records(out)] == ["failed", "done"]


def test_the_manifest_refuses_a_second_success_for_the_same_document(tmp_path):
    src = make_docs(tmp_path / "in", 1)
    out = tmp_path / "out"
    run_lead(src, out)
    record = records(out)[0]
    manifest = batch.Manifest(out)
    manifest.open()
    try:
        assert manifest.append(dict(record)) is False  # the same (path, content, settings): refused
        assert manifest.append({**record, "summary": "other"}, supersede=True) is True  # --force
    finally:
        manifest.close()
    assert [r["summary"] for r in records(out)] == [record["summary"], "other"]


def test_sigterm_stops_cleanly_and_the_run_resumes(corpus, tmp_path):
    src, reference = corpus
    out = tmp_path / "out"
    proc = subprocess.Popen(batch_command(src, out), cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True)
    deadline = time.monotonic() + 60
    while complete_lines(out) < 3 and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.01)
    proc.send_signal(signal.SIGTERM)
    stdout, stderr = proc.communicate(timeout=30)
    assert proc.returncode == 130, stderr
    assert "interrupted; run the same command again to resume" in stderr
    assert stdout.startswith("done ")
    assert not (out / batch.LOCK_NAME).exists() and (out / "manifest.csv").is_file()
    assert 3 <= complete_lines(out) < 12
    assert subprocess.run(batch_command(src, out), cwd=ROOT, timeout=120).returncode == 0
    assert collections.Counter(r["path"] for r in records(out)) == {r["path"]: 1 for r in records(reference)}
    assert leftovers(out) == []


# ------------------------------------------------------------------------------------------ finding files


def test_discover_includes_excludes_hidden_and_the_output_folder(tmp_path):
    src = make_docs(tmp_path / "in", 6)
    (src / ".git").mkdir()
    (src / ".git" / "notes.txt").write_text(doc_text(1))
    (src / ".hidden.txt").write_text(doc_text(1))
    (src / "LICENSE").write_text("no extension: not included by default")
    (src / "scan.PDF").write_bytes(b"%PDF-1.4 upper-case extension")
    (src / "report.txt").write_text(doc_text(2))
    (src / "report.md").write_text(doc_text(3))
    (src / "summaries").mkdir()
    (src / "summaries" / "old.summary.txt").write_text("an output of an earlier run")
    found = batch.discover(src, src / "summaries")
    rels = [f.rel for f in found]
    assert ".hidden.txt" not in rels and ".git/notes.txt" not in rels and "LICENSE" not in rels
    assert "scan.PDF" in rels and not any(r.startswith("summaries/") for r in rels)
    names = {f.rel: f.summary_rel for f in found}
    # report.txt and report.md share a stem, so both keep their whole name
    assert names["report.txt"] == "report.txt.summary.txt" and names["report.md"] == "report.md.summary.txt"
    assert names["note_00.txt"] == "note_00.summary.txt"
    only_md = [f.rel for f in batch.discover(src, include=("*.md",), exclude=("minutes/*",))]
    assert only_md == ["report.md"]
    no_minutes = [f.rel for f in batch.discover(src, exclude=("minutes",))]
    assert not any(r.startswith("minutes/") for r in no_minutes)
    assert [f.rel for f in batch.discover(src, include=("LICENSE",))] == ["LICENSE"]


# ------------------------------------------------------------------------------------------ bad inputs

BAD_CASES = [
    # (relative path, a fragment of the recorded reason); the wording comes from reading.py's
    # ReadError messages and the batch package's own checks
    ("empty.txt", "is empty; give a file that contains text"),
    ("binary.txt", "looks like a binary file"),
    ("random_bytes.txt", "is not in a text encoding that could be recognised; re-save it as UTF-8"),
    ("invalid_utf8.txt", "is not valid UTF-8, and read as cp1251 (the closest guess) it does not look like English"),
    ("not_english.txt", "does not look like English"),
    ("corrupt.pdf", "damaged or not a valid PDF"),
    ("corrupt.docx", "not a valid DOCX file"),
    ("huge.txt", "is too large"),
    ("locked.txt", "cannot be opened: permission denied"),
    ("loop.txt", "is a symbolic link loop"),
    ("dangling.txt", "is a symbolic link to a missing file"),
    ("folder.txt", "is a folder, not a document, though its name matches '*.txt'"),
    ("pipe.txt", "is not a regular file (a pipe, socket or device)"),
]


@pytest.fixture(scope="module")
def bad_run(tmp_path_factory):
    """One CLI run over tests/data/bad plus the cases made here, and two good documents."""
    base = tmp_path_factory.mktemp("bad")
    src = base / "in"
    shutil.copytree(BAD, src)
    (src / "good_a.txt").write_text(doc_text(1), encoding="utf-8")
    (src / "folder.txt").mkdir()
    (src / "folder.txt" / "good_b.txt").write_text(doc_text(2), encoding="utf-8")
    (src / "huge.txt").write_text(doc_text(3) * 40, encoding="utf-8")  # ~20 KB, over the lowered limit
    locked = src / "locked.txt"
    locked.write_text(doc_text(4), encoding="utf-8")
    locked.chmod(0)
    os.symlink("loop.txt", src / "loop.txt")
    os.symlink("nowhere/gone.txt", src / "dangling.txt")
    os.symlink("..", src / "folder.txt" / "up")  # a link to a folder that loops back: not followed
    os.mkfifo(src / "pipe.txt")
    real_open = discovery._open_bytes

    def open_as_a_user(path):
        # tests run as root, which ignores permission bits; refuse as the OS refuses other users
        if os.geteuid() == 0 and (os.stat(path).st_mode & 0o444) == 0:
            raise PermissionError(13, "Permission denied", str(path))
        return real_open(path)

    out = base / "out"
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(reading, "MAX_BYTES", 10_000)
        mp.setattr(discovery, "_open_bytes", open_as_a_user)
        result = CliRunner().invoke(main, ["batch", str(src), "--out", str(out), "--words", "12", "--workers", "2",
                                           "--job", "lead", "-q"])
    return result, out


def test_bad_inputs_fail_the_run_but_not_the_good_documents(bad_run):
    result, out = bad_run
    assert result.exit_code == 1
    assert f"{len(BAD_CASES)} of {len(BAD_CASES) + 2} document(s) failed" in result.output
    assert f"done 2, skipped 0, failed {len(BAD_CASES)}" in result.output
    latest = batch.latest_records(out)
    assert latest["good_a.txt"]["status"] == "done" and latest["folder.txt/good_b.txt"]["status"] == "done"
    assert sorted(latest) == sorted([name for name, _ in BAD_CASES] + ["good_a.txt", "folder.txt/good_b.txt"])
    assert leftovers(out) == []


@pytest.mark.parametrize("name, reason", BAD_CASES, ids=[n for n, _ in BAD_CASES])
def test_each_bad_input_is_recorded_with_its_reason(bad_run, name, reason):
    result, out = bad_run
    record = batch.latest_records(out)[name]
    assert record["status"] == "failed" and record["summary"] is None
    assert reason in record["error"] and record["error"].startswith(f"'{name}'")
    assert "boildown-batch-" not in record["error"]  # the worker's temporary path never shows
    assert f"failed: {record['error']}" in result.output


def test_a_guessed_encoding_is_recorded_as_a_warning(tmp_path):
    src = tmp_path / "in"
    src.mkdir()
    (src / "cafe.txt").write_bytes((doc_text(5) + " The caf\xe9 by the dam stays open.").encode("cp1252"))
    result = run_lead(src, tmp_path / "out")
    assert result.done == 1
    record = records(tmp_path / "out")[0]
    assert record["encoding"] == "cp1252"
    assert record["warnings"] == ["not valid UTF-8: read as cp1252 (a guess); check accented characters"]


def test_any_language_summarizes_text_that_is_not_english(tmp_path):
    src = tmp_path / "in"
    src.mkdir()
    shutil.copy(BAD / "not_english.txt", src)
    assert run_lead(src, tmp_path / "out", any_language=True).done == 1


# ------------------------------------------------------------------------------------------ worker deaths


class CrashOn(LeadJob):
    """Kills its worker process on documents whose name holds 'poison' (like a native crash)."""

    def __call__(self, document, settings):
        if "poison" in Path(document.source).name:
            os._exit(3)
        return super().__call__(document, settings)


def test_a_document_that_kills_its_worker_is_recorded_and_the_rest_done(tmp_path):
    src = make_docs(tmp_path / "in", 5)
    (src / "poison.txt").write_text(doc_text(9), encoding="utf-8")
    out = tmp_path / "out"
    messages = []
    result = run_batch(src, out, job=CrashOn(), words=12, workers=2, progress=messages.append)
    assert (result.done, result.failed) == (5, 1)
    assert result.failures[0][0] == "poison.txt"
    assert "a worker process died" in result.failures[0][1]
    assert any("restarting the pool" in m for m in messages)
    assert len(records(out)) == 6


# ------------------------------------------------------------------------------------------ kill and resume

DELAY = "0.25"


def batch_command(src: Path, out: Path, *extra: str, quiet: bool = True) -> list[str]:
    return [sys.executable, "-m", "summarize", "batch", str(src), "--out", str(out), "--words", "12",
            "--workers", "2", "--job", f"lead:{DELAY}", *(["-q"] if quiet else []), *extra]


def complete_lines(out: Path) -> int:
    try:
        return (out / "manifest.jsonl").read_bytes().count(b"\n")
    except FileNotFoundError:
        return 0


def children_of(pid: int) -> list[int]:
    found = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == pid:
                found.append(int(entry.name))
    return found


def running(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


@pytest.fixture(scope="module")
def corpus(tmp_path_factory):
    """Twelve documents and the manifest of an uninterrupted run over them."""
    base = tmp_path_factory.mktemp("corpus")
    src = make_docs(base / "in", 12)
    out = base / "reference"
    done = subprocess.run(batch_command(src, out), cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return src, out


@pytest.mark.parametrize("kill_after, whole_group", [(2, True), (5, False), (9, True)],
                         ids=["after-2-records", "after-5-parent-only", "after-9-records"])
def test_killed_run_resumes_to_the_same_result(corpus, tmp_path, kill_after, whole_group):
    src, reference = corpus
    out = tmp_path / "out"
    proc = subprocess.Popen(batch_command(src, out), cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            start_new_session=True)
    deadline = time.monotonic() + 60
    while complete_lines(out) < kill_after and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.01)
    workers = children_of(proc.pid)
    if whole_group:
        os.killpg(proc.pid, signal.SIGKILL)  # the whole run at once, like a power cut
    else:
        os.kill(proc.pid, signal.SIGKILL)  # the parent only: its workers must notice and exit
    proc.communicate(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    interrupted = complete_lines(out)
    assert kill_after <= interrupted < 12, "the kill came too late to interrupt the run"
    deadline = time.monotonic() + 15
    while any(running(p) for p in workers) and time.monotonic() < deadline:
        time.sleep(0.1)
    assert not any(running(p) for p in workers), "worker processes outlived their parent"
    assert (out / batch.LOCK_NAME).exists()  # left behind by the killed run

    resumed = subprocess.run(batch_command(src, out, quiet=False), cwd=ROOT, capture_output=True, text=True,
                             timeout=120)
    assert resumed.returncode == 0, resumed.stderr
    assert "took over a stale lock" in resumed.stderr
    assert "skipped" in resumed.stdout

    recs = records(out)
    assert collections.Counter(r["path"] for r in recs) == {r["path"]: 1 for r in records(reference)}
    assert all(r["status"] == "done" for r in recs)

    def facts(folder):
        return {(r["path"], r["sha256"], r["settings_key"], r["summary"]) for r in records(folder)}

    assert facts(out) == facts(reference)
    assert summary_files(out) == summary_files(reference)
    assert leftovers(out) == []
    assert (out / "manifest.jsonl").read_bytes().endswith(b"\n")
    assert len((out / "manifest.csv").read_text(encoding="utf-8").splitlines()) == 13


# ------------------------------------------------------------------------------------------ the lock


def test_a_second_run_on_the_same_folder_is_refused(corpus, tmp_path):
    src, _ = corpus
    out = tmp_path / "out"
    first = subprocess.Popen(batch_command(src, out, "--workers", "1", "--job", "lead:0.5"), cwd=ROOT,
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 60
    while complete_lines(out) < 1 and first.poll() is None and time.monotonic() < deadline:
        time.sleep(0.02)
    second = subprocess.run(batch_command(src, out), cwd=ROOT, capture_output=True, text=True, timeout=60)
    first.communicate(timeout=120)
    assert first.returncode == 0
    assert second.returncode == 1
    assert second.stderr.strip().splitlines()[-1] == (
        f"boildown: error: '{out}' is in use by another boildown batch run (PID {first.pid}, lock "
        f"{out / batch.LOCK_NAME}); wait for it to finish or choose another --out folder")
    assert len(records(out)) == 12


def test_a_held_lock_refuses_through_the_cli_too(tmp_path):
    src = make_docs(tmp_path / "in", 1)
    out = tmp_path / "out"
    out.mkdir()
    lock = batch.OutputLock(out)
    assert lock.acquire() is None
    try:
        result = CliRunner().invoke(main, ["batch", str(src), "--out", str(out), "--words", "9", "--job", "lead", "-q"])
    finally:
        lock.release()
    assert result.exit_code == 1
    assert f"is in use by another boildown batch run (PID {os.getpid()}" in result.output
    assert not (out / batch.LOCK_NAME).exists()


def test_a_stale_lock_is_taken_over_with_a_message(tmp_path):
    src = make_docs(tmp_path / "in", 1)
    out = tmp_path / "out"
    out.mkdir()
    dead = subprocess.Popen(["true"])
    dead.wait()
    (out / batch.LOCK_NAME).write_text(f"{dead.pid}\n")
    messages = []
    result = run_lead(src, out, progress=messages.append)
    assert result.done == 1
    expected = f"took over a stale lock in '{out}' left by PID {dead.pid} (no longer running)"
    assert expected in messages and expected in result.notices
    assert not (out / batch.LOCK_NAME).exists()


# ------------------------------------------------------------------------------------------ CLI


@pytest.mark.parametrize("args, message", [
    ([], "give a word budget (--words N) or a ratio of each document (--ratio R)"),
    (["--words", "10", "--ratio", "0.2"], "give a word budget (--words) or a ratio (--ratio), not both"),
    (["--words", "10", "--engine", "dask"], "--engine dask needs --scheduler tcp://HOST:PORT"),
    (["--words", "10", "--scheduler", "tcp://127.0.0.1:8786"], "--scheduler is only used with --engine dask"),
    (["--words", "10", "--engine", "dask", "--scheduler", "tcp://127.0.0.1:8786", "--workers", "2"],
     "--workers sets the local engine's processes"),
    (["--words", "10", "--job", "nonsense"], "unknown job 'nonsense'"),
    (["--words", "10", "--candidates", "99"], "--candidates must lie between 1 and"),
])
def test_cli_usage_errors_are_one_line(tmp_path, args, message):
    src = make_docs(tmp_path / "in", 1)
    result = CliRunner().invoke(main, ["batch", str(src), "--out", str(tmp_path / "out"), *args])
    assert result.exit_code == 1
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("boildown: error: ") and message in lines[0]


def test_cli_refuses_the_input_folder_as_output(tmp_path):
    src = make_docs(tmp_path / "in", 1)
    result = CliRunner().invoke(main, ["batch", str(src), "--out", str(src), "--words", "9", "--job", "lead"])
    assert result.exit_code == 1 and "must differ from the input folder" in result.output


def test_cli_json_tally_and_ratio(tmp_path):
    src = make_docs(tmp_path / "in", 2)
    result = CliRunner().invoke(main, ["batch", str(src), "--out", str(tmp_path / "out"), "--ratio", "0.25",
                                       "--job", "lead", "--json", "-q"])
    assert result.exit_code == 0, result.output
    tally = json.loads(result.output)
    assert (tally["done"], tally["skipped"], tally["failed"], tally["total"]) == (2, 0, 0, 2)
    assert tally["engine"] == "local" and tally["failures"] == []
    # ratio 0.25 of each document's words, floored (pipeline.budget_for)
    for r in records(tmp_path / "out"):
        assert r["budget"] == max(1, int(0.25 * r["source_words"])) and r["settings"]["ratio"] == 0.25


def test_cli_shows_a_progress_bar_on_stderr(tmp_path):
    src = make_docs(tmp_path / "in", 2)
    result = subprocess.run([sys.executable, "-m", "summarize", "batch", str(src), "--out", str(tmp_path / "out"),
                             "--words", "9", "--job", "lead", "--workers", "1"],
                            cwd=ROOT, capture_output=True, text=True, timeout=60)
    assert result.returncode == 0
    assert "2/2" in result.stderr and ("doc/s" in result.stderr or "s/doc" in result.stderr)
    assert result.stdout.startswith("done 2, skipped 0, failed 0 (2 document(s))")


def test_dask_missing_names_the_install_line(tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)  # import distributed -> ImportError
    src = make_docs(tmp_path / "in", 1)
    result = CliRunner().invoke(main, ["batch", str(src), "--out", str(tmp_path / "out"), "--words", "9",
                                       "--engine", "dask", "--scheduler", "tcp://127.0.0.1:8786", "--job", "lead"])
    assert result.exit_code == 1
    assert result.output.strip() == (
        "boildown: error: --engine dask needs Dask's distributed scheduler, which is not installed; install it "
        f"with: {batch.DASK_INSTALL}")


# ------------------------------------------------------------------------------------------ Dask


def test_dask_engine_on_a_local_cluster_matches_the_local_engine(tmp_path):
    distributed = pytest.importorskip("distributed", reason="Dask is optional: " + batch.DASK_INSTALL)
    src = make_docs(tmp_path / "in", 4)
    shutil.copy(BAD / "empty.txt", src)
    local = tmp_path / "local"
    run_lead(src, local)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None,
                                  host="127.0.0.1") as cluster:
        out = tmp_path / "dask"
        result = run_batch(src, out, job=LeadJob(), words=12, engine="dask", scheduler=cluster.scheduler_address)
        assert (result.done, result.failed, result.engine, result.workers) == (4, 1, "dask", 1)
        cli = CliRunner().invoke(main, ["batch", str(src), "--out", str(out), "--words", "12", "--engine", "dask",
                                        "--scheduler", cluster.scheduler_address, "--job", "lead", "-q"])
    assert cli.exit_code == 1 and "done 0, skipped 4, failed 1" in cli.output

    def facts(folder):
        return {(r["path"], r["sha256"], r["status"], r["summary"], r["error"]) for r in records(folder)}

    assert facts(out) == facts(local)
    assert {r["engine"] for r in records(out)} == {"dask"}
    assert summary_files(out) == summary_files(local)
    assert leftovers(out) == []


# ------------------------------------------------------------------------------------------ the real summarizer


@pytest.mark.models
def test_real_summarizer_on_two_tiny_documents(tmp_path):
    src = make_docs(tmp_path / "in", 2)
    out = tmp_path / "out"
    result = run_batch(src, out, words=30, candidates=1, workers=1)
    assert (result.done, result.failed) == (2, 0), result.failures
    for record in records(out):
        assert record["settings"] == {"job": "summarize", "words": 30, "ratio": None, "candidates": 1,
                                      "code": batch.SummarizeJob().code()}
        assert "boildown 0.1.0" in record["settings"]["code"] and "pool=independent" in record["settings"]["code"]
        assert 0 < record["words"] <= 30 and record["source_words"] > 30
        assert set(record["scores"]) == {"combined", "coverage", "fluency", "agreement", "over_budget"}
        assert record["scores"]["agreement"] is None  # one candidate: nothing to agree with
        assert 0 <= record["scores"]["coverage"] <= 1 and record["scores"]["over_budget"] is False
        assert record["signatures"]["summary"] == "summarize(words=30, candidates=1) on boildown 0.1.0"
        assert record["signatures"]["coverage"].startswith("coverage(model=")
        assert record["signatures"]["fluency"].startswith("fluency(model=")
        assert record["signatures"]["combined"].startswith("combined(coverage=0.75, fluency=0.25, pool=independent)")
        assert (out / record["summary_file"]).read_text(encoding="utf-8") == record["summary"] + "\n"
