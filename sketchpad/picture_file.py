"""Reading a site picture's bytes from disk: regular files only, of a capped size, never blocking.

A name in a rig file can point at anything in its folder: a FIFO (opening it for reading waits
for a writer for ever), a device such as /dev/zero (reads without end) or a folder.  The file is
opened non-blocking, checked with ``fstat`` to be a regular file no larger than a rig file may be
(the picture has to fit embedded in one, rig-format.md), and only then read.
"""

from __future__ import annotations

import os
import pathlib
import stat

from solver import limits
from solver.errors import RopewrightError

#: Largest picture read, bytes: what fits embedded (base64, 4/3 larger) in the largest rig file.
MAX_PICTURE_BYTES = limits.MAX_FILE_BYTES * 3 // 4


class PictureFileError(RopewrightError):
    """A site picture that cannot be read; ``where`` is its file name."""


def read_picture_bytes(path: os.PathLike[str] | str) -> bytes:
    """The bytes of the picture file at ``path``; PictureFileError in words for anything but a regular file."""
    p = pathlib.Path(path)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(p, flags)
    except FileNotFoundError:
        raise PictureFileError("there is no such picture file", where=p.name) from None
    except IsADirectoryError:
        raise PictureFileError("is not a regular file but a folder; choose a picture file", where=p.name) from None
    except OSError as exc:
        raise PictureFileError(f"the picture cannot be read ({exc.strerror or exc})", where=p.name) from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            what = "a folder" if stat.S_ISDIR(st.st_mode) else "a pipe, device or socket"
            raise PictureFileError(f"is not a regular file but {what}; choose a picture file", where=p.name)
        if st.st_size > MAX_PICTURE_BYTES:
            raise PictureFileError(f"the picture is {st.st_size / 2**20:.1f} MB; a site picture may be at most "
                                   f"{MAX_PICTURE_BYTES / 2**20:.0f} MB (save a smaller copy)", where=p.name)
        os.set_blocking(fd, True)  # a regular file: ordinary reads from here on
        with os.fdopen(fd, "rb") as fh:
            fd = -1
            data = fh.read(MAX_PICTURE_BYTES + 1)
    finally:
        if fd >= 0:
            os.close(fd)
    if len(data) > MAX_PICTURE_BYTES:  # grew while being read
        raise PictureFileError(f"the picture is larger than {MAX_PICTURE_BYTES / 2**20:.0f} MB", where=p.name)
    return data
