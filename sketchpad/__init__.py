"""Ropewright sketchpad: the PySide6 application, a thin view over the solver."""

import sys as _sys


def _keep_none_alive() -> None:
    """Work around a PySide6 6.12.0 fault on CPython < 3.12: each call to a Qt method returning
    ``void`` (or ``bool``) drops one reference to ``None`` (or ``True``/``False``) without taking
    one, so after a few thousand calls (one drag repaint) Python aborts with "deallocating None".
    CPython 3.12 made these objects immortal (PEP 683); here we give each a reserve of 2**40
    references instead.
    TODO(lead): drop this once the PySide6 pin or the Python version makes it unnecessary.
    """
    if _sys.version_info >= (3, 12) or _sys.implementation.name != "cpython":
        return
    import ctypes

    for singleton in (None, True, False):
        refcount = ctypes.c_ssize_t.from_address(id(singleton))  # ob_refcnt is PyObject's first field
        if refcount.value < 1 << 40:
            refcount.value += 1 << 40


_keep_none_alive()
