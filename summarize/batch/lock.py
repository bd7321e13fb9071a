"""The output folder's lock, ``out_dir/.boildown.lock``: one batch run writes a folder at a time.

The lock file is made whole before it has its name: the owner's PID is written and fsynced in a
temporary file, which is then hard-linked to ``.boildown.lock`` (``link`` fails when the name
exists, so creation is exclusive and atomic): a racer never opens a lock without its PID, so it
never mistakes a lock being born for a stale one. The lock is held with ``flock``.
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
            fd = self._create()
            created = fd is not None
            if not created:
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
            self._fd = fd
            if created:  # made whole with our PID before it got its name: nothing to rewrite
                return None
            stale = _read_pid(fd)
            # write our PID over the stale one, then cut: a reader never sees an empty lock
            mine = f"{os.getpid()}\n".encode()
            os.pwrite(fd, mine, 0)
            os.ftruncate(fd, len(mine))
            os.fsync(fd)
            state = "no longer running" if stale is None or not _alive(stale) else "holding no lock"
            return f"took over a stale lock in '{self.out_dir}' left by PID {stale or '?'} ({state})"
        raise BatchError(f"could not take the lock '{self.path}'; another run keeps replacing it")

    def _create(self) -> int | None:
        """A new lock file holding our PID and our ``flock``, linked in whole; None when the name
        is taken. The ``flock`` is taken before the link, so the lock is held from its first moment."""
        # not named like a temporary file: the holder's clean-up of those must not remove it
        tmp = self.out_dir / f"{LOCK_NAME}.{os.getpid()}.{os.urandom(4).hex()}.new"
        try:
            fd = os.open(tmp, os.O_RDWR | os.O_CREAT | os.O_EXCL, 0o644)
        except OSError as exc:
            raise BatchError(f"cannot create the lock '{self.path}' ({exc.strerror}); check that the "
                             "--out folder is writable") from None
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            os.write(fd, f"{os.getpid()}\n".encode())
            os.fsync(fd)
            try:
                os.link(tmp, self.path)
            except FileExistsError:
                os.close(fd)
                return None
            return fd
        except BaseException:
            with contextlib.suppress(OSError):
                os.close(fd)
            raise
        finally:
            with contextlib.suppress(OSError):
                os.unlink(tmp)

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
