"""The output folder's lock, ``out_dir/.boildown.lock``: one batch run writes a folder at a time.

The lock file is created with O_CREAT|O_EXCL, held with ``flock`` and holds the owner's PID.
The kernel drops a ``flock`` when its process dies, so a lock file whose ``flock`` can be taken
is stale, whatever PID it names; it is taken over with a message.
"""

from __future__ import annotations

import contextlib
import errno
import fcntl
import os
from pathlib import Path

from summarize.batch.errors import BatchError

LOCK_NAME = ".boildown.lock"


class OutputLock:
    """The lock on one output folder: ``acquire`` before the run writes anything, ``release`` after."""

    def __init__(self, out_dir: Path):
        self.out_dir = Path(out_dir)
        self.path = self.out_dir / LOCK_NAME
        self._fd: int | None = None

    def acquire(self) -> str | None:
        """Take the lock; return a notice when a stale lock was taken over. Raises BatchError."""
        for _ in range(20):
            created = True
            try:
                fd = os.open(self.path, os.O_RDWR | os.O_CREAT | os.O_EXCL, 0o644)
            except FileExistsError:
                created = False
                try:
                    fd = os.open(self.path, os.O_RDWR)
                except FileNotFoundError:
                    continue  # released in between: try again
                except PermissionError:
                    raise BatchError(f"cannot open the lock '{self.path}' (permission denied); another user's "
                                     "run may own this folder: choose another --out folder") from None
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError as exc:
                holder = _read_pid(fd)
                os.close(fd)
                if exc.errno in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
                    who = f"PID {holder}" if holder else "another process"
                    raise BatchError(
                        f"'{self.out_dir}' is in use by another boildown batch run ({who}, lock "
                        f"{self.path}); wait for it to finish or choose another --out folder"
                    ) from None
                raise BatchError(f"cannot lock '{self.path}' ({exc.strerror}); check the folder") from None
            try:
                same = os.fstat(fd).st_ino == os.stat(self.path).st_ino
            except FileNotFoundError:
                same = False
            if not same:  # the file was released and replaced while we waited: start over
                os.close(fd)
                continue
            stale = None if created else _read_pid(fd)
            os.ftruncate(fd, 0)
            os.pwrite(fd, f"{os.getpid()}\n".encode(), 0)
            os.fsync(fd)
            self._fd = fd
            if created:
                return None
            state = "no longer running" if stale is None or not _alive(stale) else "holding no lock"
            return f"took over a stale lock in '{self.out_dir}' left by PID {stale or '?'} ({state})"
        raise BatchError(f"could not take the lock '{self.path}'; another run keeps replacing it")

    def release(self) -> None:
        if self._fd is None:
            return
        with contextlib.suppress(OSError):
            if os.fstat(self._fd).st_ino == os.stat(self.path).st_ino:
                os.unlink(self.path)
        os.close(self._fd)
        self._fd = None


def _read_pid(fd: int) -> int | None:
    try:
        text = os.pread(fd, 64, 0).decode("ascii", "replace").strip()
        return int(text) if text.isdigit() else None
    except OSError:
        return None


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True
