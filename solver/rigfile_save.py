"""Atomic replacement of a rig file on disk: temp file beside it, fsync, ``os.replace``, folder fsync.

A symbolic link is written through (its target is replaced); the temp files of killed saves are
recognised by their name and removed only when no save still holds them (a lock on POSIX).
"""

from __future__ import annotations

import logging
import os
import pathlib
import re
import tempfile
import time

from solver.errors import RigFileError

try:
    import fcntl
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None  # type: ignore[assignment]

log = logging.getLogger(__name__)

#: Prefix and suffix of the hidden temp file a save writes beside the rig before renaming it.
TEMP_PREFIX, TEMP_SUFFIX = ".", ".tmp"


def replace_atomically(p: pathlib.Path, data: bytes) -> None:
    """Replace the file ``p`` with ``data`` through a temp file beside it; the old file stays if anything fails.

    The file keeps its permission bits (a new one gets the umask's); temp files an
    interrupted save left in that folder are removed first.
    """
    folder = p.parent if str(p.parent) else pathlib.Path(".")
    mode = None
    try:
        mode = os.stat(p).st_mode & 0o7777
    except OSError:
        pass
    clean_stale_temps(folder)
    tmp_name = None
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f"{TEMP_PREFIX}{p.name}.", suffix=TEMP_SUFFIX, dir=folder)
        _hold(fd)  # marks the temp file as in use, so another save's clean-up leaves it alone
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if mode is None:
            umask = os.umask(0)
            os.umask(umask)
            mode = 0o666 & ~umask
        os.chmod(tmp_name, mode)
        os.replace(tmp_name, p)
        tmp_name = None
        _fsync_folder(folder)
    except OSError as exc:
        raise RigFileError(f"the rig could not be saved ({exc.strerror or exc}); the old file, if any, is unchanged",
                           where=str(p)) from None
    finally:
        if tmp_name is not None:
            try:
                os.unlink(tmp_name)
            except OSError:
                log.warning("could not remove the temporary file %s", tmp_name)


def write_target(p: pathlib.Path) -> pathlib.Path:
    """The file a save to ``p`` replaces: the final target when ``p`` is a symbolic link (a chain too)."""
    if not p.is_symlink():
        return p
    return pathlib.Path(os.path.realpath(p))


#: The hidden temp file of a save: "." + rig file name + "." + 8 random characters + ".tmp".
_TEMP_NAME = re.compile(r"^\.(?P<rig>.+\.json)\.[a-z0-9_]{8}\.tmp$")
#: Without locks (not POSIX), a temp file this old (s) is taken as left by a killed save.
_STALE_TEMP_S = 3600.0


def _hold(fd: int) -> None:
    if fcntl is not None:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)


def clean_stale_temps(folder: str | os.PathLike[str]) -> list[str]:
    """Remove the temp files killed saves of rig files left in ``folder``; the names removed.

    Only our own naming is touched, only regular files, and only when no save still writes
    one (a running save holds a lock on its temp file; without locks, when older than an hour).
    """
    removed: list[str] = []
    try:
        names = [e for e in os.scandir(folder) if _TEMP_NAME.match(e.name)]
    except OSError:
        return removed
    for entry in names:
        try:
            if not entry.is_file(follow_symlinks=False):
                continue
            if fcntl is None:
                if time.time() - entry.stat().st_mtime < _STALE_TEMP_S:
                    continue
            else:
                fd = os.open(entry.path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_NOFOLLOW", 0))
                try:
                    fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                except BlockingIOError:
                    continue  # a save is writing it right now
                finally:
                    os.close(fd)
            os.unlink(entry.path)
            removed.append(entry.name)
        except OSError as exc:
            log.info("left the temp file %s: %s", entry.path, exc)
    if removed:
        log.info("removed %d temp file(s) left by an interrupted save in %s", len(removed), folder)
    return removed


def _fsync_folder(folder: pathlib.Path) -> None:
    """Make the rename durable (POSIX); harmless where folders cannot be opened."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
