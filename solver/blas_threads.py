"""The solver's dense linear algebra on one thread: fast on a busy machine.

A rig's dense tangent is at most ``DENSE_MAX`` (400) unknowns; at that size a
multithreaded BLAS (OpenBLAS starts one thread per core) gains nothing, and when the
cores are busy with other work (the GUI, a second solve, another program) its threads
spin and wait for each other: a 100-point solve measured 9 ms idle went to 0.4-1.7 s
beside one busy process on 2 cores.  Large rigs take the sparse path (SuperLU), which
does not use BLAS threads either.

:func:`solving_on_one_blas_thread` (a decorator on ``solve``) sets every BLAS library
numpy and scipy loaded to one thread (threadpoolctl) before the solve and leaves it so.
It is not undone after each solve on purpose: OpenBLAS ignores a thread count set from
any other thread once the main thread has set one, so a limit that the GUI thread set
and lifted again could never be set by the live-solve worker thread (measured with
OpenBLAS 0.3.30).  A count someone else changed is put back to one at the next solve.
The libraries are looked up once; the check costs about a microsecond per library.
"""

from __future__ import annotations

import functools
import logging
import threading
from typing import Any, Callable, TypeVar

log = logging.getLogger(__name__)
T = TypeVar("T")

_lock = threading.Lock()
_libraries: list[Any] | None = None  # threadpoolctl's controller of each loaded BLAS, found once


def _blas_libraries() -> list[Any]:
    """threadpoolctl's controller of every BLAS library loaded in this process (looked up once), or []."""
    global _libraries
    if _libraries is None:
        try:
            from threadpoolctl import ThreadpoolController

            _libraries = list(ThreadpoolController().select(user_api="blas").lib_controllers)
        except Exception:  # noqa: BLE001 - a missing or broken helper must never stop a solve
            log.warning("cannot limit BLAS threads; dense solves may slow down on a busy machine", exc_info=True)
            _libraries = []
    return _libraries


def blas_threads() -> list[int]:
    """The thread count each loaded BLAS library uses right now (for tests and diagnostics)."""
    from threadpoolctl import threadpool_info

    return [int(info["num_threads"]) for info in threadpool_info() if info.get("user_api") == "blas"]


def one_blas_thread() -> None:
    """Every loaded BLAS library on one thread from now on (see the module doc); thread-safe."""
    with _lock:
        for lib in _blas_libraries():
            if lib.get_num_threads() != 1:
                lib.set_num_threads(1)


#: Rigs with fewer points than this are left alone: a 16-point rig solved beside a busy core
#: took the same time on 1 and on 2 BLAS threads (0.38 ms median, measured), and a command-line
#: solve of a small rig then never pays the ~20 ms of finding the libraries (our threshold).
MIN_POINTS = 20


def solving_on_one_blas_thread(fn: Callable[..., T]) -> Callable[..., T]:
    """Decorator of ``solve(rig, ...)``: :func:`one_blas_thread` first when the rig has MIN_POINTS points or more."""

    @functools.wraps(fn)
    def wrapped(rig: Any, *args: Any, **kwargs: Any) -> T:
        if _libraries is None and len(rig.points) < MIN_POINTS:
            return fn(rig, *args, **kwargs)
        one_blas_thread()
        return fn(rig, *args, **kwargs)

    return wrapped
