"""Writing output files so that no reader ever sees half of one, and failing early when a
target cannot be written.

``write_atomic`` is the one way boildown writes a result file (summaries, reports, batch
summaries and CSVs): the text goes to a temporary file in the target's own folder, is flushed
and fsynced, gets the permissions an ordinary new file would get, and is renamed over the
target; the folder is fsynced after the rename, so the new name survives a power cut. An
interrupted write leaves the old file (or none) and no temporary file.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

TMP_SUFFIX = ".boildown-tmp"  # every temporary file ends so; a batch run removes leftovers


def write_atomic(path, text: str, *, what: str = "file") -> Path:
    """Write ``text`` (UTF-8, "\\n" line ends) to ``path`` atomically; returns the path.

    ``what`` names the file in an error ("the report", "the summary"). Missing folders are
    created. An OSError comes back as one line naming the target."""
    target = Path(os.fspath(path))
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name[:80]}.", suffix=TMP_SUFFIX, dir=target.parent)
    try:
        os.fchmod(fd, 0o666 & ~_umask())
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        if isinstance(exc, OSError):
            raise OSError(f"cannot write {what} '{target}': {exc.strerror or exc}") from exc
        raise
    fsync_dir(target.parent)
    return target


def fsync_dir(folder) -> None:
    """Make a rename or a new file in ``folder`` durable (best effort: some file systems refuse)."""
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def check_writable(path, *, what: str = "file") -> None:
    """Fail early, before any work, when ``path`` cannot be written: a folder, a missing or
    read-only parent folder. The message names the target and the fix."""
    target = Path(os.fspath(path)).expanduser()
    folder = target.parent
    if target.is_dir():
        raise ValueError(f"'{target}' is a folder; give a file name for {what}, e.g. '{target / 'out'}'")
    if not folder.is_dir():
        raise ValueError(f"cannot write {what} '{target}': the folder '{folder}' does not exist; create it first")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise ValueError(f"cannot write {what} '{target}': the folder '{folder}' is not writable")


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
