"""A solve runs its dense linear algebra on one BLAS thread, in the GUI thread and in a worker thread alike.

Behaviour, not speed (the speed under a competing load is ``tests/bench/test_bench_busy_blas.py``):
the solver reads the warm start while it solves, so a start mapping that notes the BLAS
thread counts it is read under tells what the solve ran with.
"""

from __future__ import annotations

import threading

import pytest

from solver.blas_threads import blas_threads
from solver.equilibrium import solve
from tests.bench.test_bench_solver import net


class _NotingStart(dict):
    """A warm start that notes the BLAS thread counts in force whenever the solver reads it."""

    def __init__(self, points):
        super().__init__(points)
        self.seen: list[list[int]] = []

    def get(self, key, default=None):
        self.seen.append(blas_threads())
        return super().get(key, default)


@pytest.fixture
def blas_on_two_threads():
    """Every BLAS library put on 2 threads by the main thread (OpenBLAS's own start on 2 cores), restored after."""
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=2, user_api="blas"):
        assert blas_threads() and all(n == 2 for n in blas_threads())
        yield


def test_a_solve_runs_on_one_blas_thread(blas_on_two_threads):
    rig = net(6, 5)  # 30 free points: the dense path
    cold = solve(rig)
    assert cold.ok, cold.message
    start = _NotingStart(cold.points)
    warm = solve(rig, start=start)
    assert warm.ok, warm.message
    assert start.seen and all(all(n == 1 for n in counts) for counts in start.seen), start.seen


def test_a_solve_in_a_worker_thread_after_one_in_the_main_thread_runs_on_one_blas_thread(blas_on_two_threads):
    """The live-solve pattern: quick solves in the GUI thread, slow ones in a worker thread."""
    rig = net(6, 5)
    cold = solve(rig)  # the main thread's solve
    assert cold.ok, cold.message
    start = _NotingStart(cold.points)
    out = []
    worker = threading.Thread(target=lambda: out.append(solve(rig, start=start)))
    worker.start()
    worker.join(60)
    assert out and out[0].ok
    assert start.seen and all(all(n == 1 for n in counts) for counts in start.seen), start.seen
