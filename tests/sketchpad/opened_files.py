"""Which files in a folder were opened, seen by the Linux kernel (inotify), whatever library opened them.

Qt's rich text loads ``<img src=...>`` in C++, out of reach of a Python spy; the kernel reports
every open.  Used by the hostile-text tests: a label like ``<img src="/elsewhere/x.png">`` must
never make the app open a file outside the rig's folder.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import os
import struct

IN_OPEN = 0x00000020
IN_NONBLOCK = 0o4000
_EVENT = struct.Struct("iIII")


class OpenWatch:
    """Watches one folder; :meth:`opened` lists the names opened in it since the watch began."""

    def __init__(self, folder: os.PathLike[str] | str) -> None:
        self._libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
        self.fd = self._libc.inotify_init1(IN_NONBLOCK)
        if self.fd < 0:
            raise OSError(ctypes.get_errno(), "inotify_init1 failed")
        wd = self._libc.inotify_add_watch(self.fd, os.fsencode(folder), IN_OPEN)
        if wd < 0:
            raise OSError(ctypes.get_errno(), f"cannot watch {folder}")
        self._seen: list[str] = []

    def opened(self) -> list[str]:
        while True:
            try:
                data = os.read(self.fd, 65536)
            except BlockingIOError:
                break
            offset = 0
            while offset < len(data):
                _wd, _mask, _cookie, length = _EVENT.unpack_from(data, offset)
                name = data[offset + _EVENT.size: offset + _EVENT.size + length].rstrip(b"\0")
                self._seen.append(name.decode(errors="replace") or ".")
                offset += _EVENT.size + length
        return list(self._seen)

    def close(self) -> None:
        os.close(self.fd)
