"""A lock that lives exactly as long as the process holding it: how a crash-recovery copy's owner is known.

A process id says nothing after a crash: after a reboot an unrelated process often has the
crashed run's id.  An advisory ``flock`` on a small file beside the copy is dropped by the
kernel the moment its process ends, however it ends (kill -9 included), so "can I take the lock?"
answers "is its owner gone?" exactly.  Where ``fcntl`` is missing (Windows) no lock is taken
and every copy whose owner cannot be asked counts as left over.
"""

from __future__ import annotations

import logging
import os
import pathlib

try:
    import fcntl
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None  # type: ignore[assignment]

log = logging.getLogger(__name__)


class RunLock:
    """An exclusive lock on ``path``, held until :meth:`release` or the end of the process."""

    def __init__(self, path: os.PathLike[str] | str) -> None:
        self.path = pathlib.Path(path)
        self.fd: int | None = None
        if fcntl is None:
            return
        fd = os.open(self.path, os.O_RDWR | os.O_CREAT | getattr(os, "O_CLOEXEC", 0), 0o600)
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            os.close(fd)
            raise
        self.fd = fd

    def drop(self) -> None:
        """Let go of the lock and leave the file (what the kernel does when the process dies)."""
        if self.fd is not None:
            os.close(self.fd)
            self.fd = None

    def release(self) -> None:
        """Remove the lock file and let go of the lock (a clean end)."""
        try:
            self.path.unlink()
        except FileNotFoundError:
            pass
        except OSError as exc:
            log.warning("could not remove the lock %s: %s", self.path, exc)
        self.drop()


def is_held(path: os.PathLike[str] | str) -> bool:
    """True while a living process holds the lock on ``path`` (this one included); False if none does."""
    if fcntl is None:
        return False
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_NONBLOCK", 0))
    except OSError:
        return False
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except BlockingIOError:
        return True
    except OSError:
        return False
    finally:
        os.close(fd)  # also lets go of the lock if we took it
    return False


def available() -> bool:
    """True where locks that die with their process exist (POSIX)."""
    return fcntl is not None
