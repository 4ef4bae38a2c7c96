"""Speed of a 100-point dense solve while another process keeps a core busy (pytest-benchmark).

On a 2-core machine a multithreaded BLAS whose second thread competes with a busy process
turned a 9 ms solve into 0.4-1.7 s; the solver runs small dense problems on one BLAS thread
(``solver/blas_threads.py``).  The competing load is a plain busy loop in a subprocess that
ends by itself after ``BUSY_S`` seconds and is killed when the benchmark ends.  Goal: the
median stays within a few times the idle figure of ``test_bench_solver`` (correctness is
asserted here, never time).  Measure with
``python -m pytest tests/bench/test_bench_busy_blas.py --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

from solver.equilibrium import solve
from tests.bench.test_bench_solver import net

#: Longest the busy process may run (s): it stops by itself even if this test is interrupted.
BUSY_S = 60.0


@pytest.fixture
def busy_core():
    """One subprocess spinning on a core for at most BUSY_S seconds, killed after the test."""
    code = f"import time\nend = time.monotonic() + {BUSY_S}\nwhile time.monotonic() < end:\n    pass\n"
    proc = subprocess.Popen([sys.executable, "-c", code])
    try:
        yield proc
    finally:
        proc.kill()
        proc.wait(10)


def test_bench_hundred_point_dense_solve_beside_a_busy_core(benchmark, busy_core):
    rig = net(10, 10)  # 100 free points, 200 unknowns: the dense path
    res = benchmark.pedantic(solve, args=(rig,), rounds=30, iterations=1, warmup_rounds=2)
    assert res.ok, res.message
    assert busy_core.poll() is None, "the competing load ended before the measurement did"


def test_bench_hundred_point_dense_solve_beside_a_busy_core_all_blas_threads(benchmark, busy_core):
    """The same solve with the BLAS libraries on 2 threads (as OpenBLAS starts on 2 cores): what the limit removes."""
    from threadpoolctl import threadpool_limits

    rig = net(10, 10)

    def on_two_threads():
        with threadpool_limits(limits=2, user_api="blas"):
            return solve.__wrapped__(rig)

    res = benchmark.pedantic(on_two_threads, rounds=30, iterations=1, warmup_rounds=2)
    assert res.ok, res.message
