"""The input side of a batch run: finding the documents under a folder, naming their summary
files, and reading a document's bytes with the checks ``reading.read_document`` makes.

Patterns (``--include``/``--exclude``) are globs matched without regard to case, against the
file name, or against the path relative to the input folder when they contain "/".
"""

from __future__ import annotations

import errno
import fnmatch
import os
import stat
from dataclasses import dataclass
from pathlib import Path

from summarize import reading

SUMMARY_SUFFIX = ".summary.txt"
DEFAULT_INCLUDE = tuple(f"*{suffix}" for suffix in reading.EXTENSIONS if suffix)
"""The file types ``read_document`` reads (files without an extension are left out here, so
a folder's README or LICENSE is not summarized; add ``--include`` patterns to take them)."""


@dataclass(frozen=True)
class Found:
    """One document candidate under the input folder; ``problem`` when it cannot be a document."""

    rel: str
    path: Path
    summary_rel: str = ""
    problem: str | None = None


def _matches(rel: str, name: str, patterns) -> str | None:
    for pattern in patterns:
        target = rel if "/" in pattern else name
        if fnmatch.fnmatchcase(target.lower(), pattern.lower()):
            return pattern
    return None


def discover(input_dir, out_dir=None, include=DEFAULT_INCLUDE, exclude=()) -> list[Found]:
    """Documents under ``input_dir`` (recursively, sorted by relative path).

    Names starting with "." are skipped, and so is ``out_dir`` when it lies inside. Patterns
    match the file name, or the relative path when they contain "/", ignoring case. Symbolic
    links to files are read; links to folders are not followed (so no link can loop). A link
    that loops or leads nowhere, and a folder whose name matches an include pattern, come back
    with a ``problem`` saying so (the folder's contents are still read).
    """
    root = Path(input_dir)
    skip = Path(out_dir).resolve() if out_dir is not None else None
    found: list[Found] = []

    def walk(folder: Path, prefix: str) -> None:
        try:
            entries = sorted(os.scandir(folder), key=lambda e: e.name)
        except OSError as exc:
            found.append(Found(prefix.rstrip("/") or ".", folder,
                               problem=f"the folder '{prefix.rstrip('/') or '.'}' cannot be listed "
                                       f"({exc.strerror or exc}); check its permissions"))
            return
        for entry in entries:
            if entry.name.startswith("."):
                continue
            rel = prefix + entry.name
            if _matches(rel, entry.name, exclude):
                continue
            path = Path(entry.path)
            wanted = _matches(rel, entry.name, include)
            if entry.is_symlink():
                try:
                    mode = os.stat(path).st_mode
                except OSError as exc:
                    if wanted and exc.errno == errno.ELOOP:
                        found.append(Found(rel, path, problem=f"'{rel}' is a symbolic link loop (too many levels "
                                                              "of symbolic links); fix or remove the link"))
                    elif wanted and exc.errno == errno.ENOENT:
                        found.append(Found(rel, path, problem=f"'{rel}' is a symbolic link to a missing file "
                                                              f"('{os.readlink(path)}'); fix or remove the link"))
                    elif wanted:
                        found.append(Found(rel, path, problem=f"'{rel}' cannot be followed ({exc.strerror}); "
                                                              "fix or remove the link"))
                    continue
                if stat.S_ISDIR(mode):
                    continue  # links to folders are not followed
                if wanted:
                    found.append(Found(rel, path))
                continue
            if entry.is_dir(follow_symlinks=False):
                if skip is not None and path.resolve() == skip:
                    continue
                if wanted:
                    found.append(Found(rel, path, problem=(
                        f"'{rel}' is a folder, not a document, though its name matches '{wanted}'; "
                        "its contents are read as usual; rename it or --exclude it")))
                walk(path, rel + "/")
                continue
            if wanted:
                found.append(Found(rel, path))

    walk(root, "")
    found.sort(key=lambda f: f.rel)
    return _name_summaries(found)


def _name_summaries(found: list[Found]) -> list[Found]:
    """``sub/report.pdf`` -> ``sub/report.summary.txt``; documents sharing a folder and a stem
    (report.pdf, report.txt) keep their whole name (``report.pdf.summary.txt``)."""
    stems: dict[tuple[str, str], int] = {}  # case-folded: Report.txt and report.md clash on some disks
    for f in found:
        p = Path(f.rel)
        key = (str(p.parent), p.stem.lower())
        stems[key] = stems.get(key, 0) + 1
    out = []
    for f in found:
        p = Path(f.rel)
        base = p.stem if stems[(str(p.parent), p.stem.lower())] == 1 else p.name
        out.append(Found(f.rel, f.path, (p.parent / (base + SUMMARY_SUFFIX)).as_posix(), f.problem))
    return out


def _open_bytes(path: Path):
    """Open a document for reading (one place, so tests run as root can refuse permission)."""
    return open(path, "rb")


def read_bytes(path: Path, rel: str) -> bytes:
    """The document's bytes, checked as ``read_document`` checks them; ReadError names ``rel``."""
    name = f"'{rel}'"
    try:
        st = os.stat(path)
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            raise reading.ReadError(f"{name} is a symbolic link loop; fix or remove the link") from None
        if exc.errno == errno.ENOENT:
            raise reading.ReadError(f"{name} disappeared during the run; run again to pick up the change") from None
        raise reading.ReadError(f"{name} cannot be read ({exc.strerror or exc}); check the path and the disk") from None
    if stat.S_ISDIR(st.st_mode):
        raise reading.ReadError(f"{name} is a folder, not a document")
    if not stat.S_ISREG(st.st_mode):
        raise reading.ReadError(f"{name} is not a regular file (a pipe, socket or device); only saved documents "
                                "are read")
    limit = reading.MAX_BYTES  # looked up at each call (tests lower it)
    if st.st_size > limit:
        raise reading.ReadError(f"{name} is too large ({reading.format_size(st.st_size)}, limit "
                                f"{reading.format_size(limit)}); split it or trim it first")
    try:
        with _open_bytes(path) as fh:
            data = fh.read(limit + 1)
    except PermissionError:
        raise reading.ReadError(f"{name} cannot be opened: permission denied; check the file's permissions") from None
    except OSError as exc:
        raise reading.ReadError(f"{name} cannot be read ({exc.strerror or exc}); check the path and the disk") from None
    if len(data) > limit:
        raise reading.ReadError(f"{name} is too large (over {reading.format_size(limit)}); split it or trim it first")
    return data
