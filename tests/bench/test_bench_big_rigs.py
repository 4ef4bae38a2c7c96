"""Speed of big rigs: loading, solving and checking 1,000- and 10,000-point nets (pytest-benchmark).

Goals (2-core machine): ``analyse`` of the 1,000-point net at most 2x its solve (the checks cost
no more than the equilibrium); ``analyse`` of a 10,000-point net at most 5 s; loading that net's
rig file at most 0.5 s.  Every look-up by id is O(1) (``Rig.point`` / ``Rig.rope`` use an index),
so load, compile, checks and danger zones grow linearly with the rig.

Correctness is always asserted.  The time goals are asserted only when timing is on
(``--benchmark-enable``): CI runs this file once with timing off.  Measure with
``python -m pytest tests/bench/test_bench_big_rigs.py --benchmark-enable --benchmark-only -s``.
"""

from __future__ import annotations

import statistics
import time

import pytest

from solver.analysis import analyse
from solver.checks import run_checks
from solver.equilibrium import solve
from solver.rigfile import dumps_rig, load_rig
from tests.bench.test_bench_solver import net


def _timing_on(benchmark) -> bool:
    return not getattr(benchmark, "disabled", True)


def _seconds(fn) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


@pytest.fixture(scope="module")
def net_10k_file(tmp_path_factory):
    """A 100 x 100 net (10,000 free points, 400 anchors, 20,200 ropes) written as a rig file."""
    path = tmp_path_factory.mktemp("big") / "net-100x100.rig.json"
    path.write_text(dumps_rig(net(100, 100)), encoding="utf-8")
    return path


def test_bench_analyse_of_a_1000_point_net_within_twice_its_solve(benchmark):
    rig = net(40, 25)
    first = solve(rig)
    assert first.ok, first.message
    result = benchmark.pedantic(analyse, args=(rig,), rounds=10, iterations=1, warmup_rounds=1)
    assert result.ok, result.message
    assert {(w.code, w.subject) for w in run_checks(rig, first)} <= {(w.code, w.subject) for w in result.warnings}
    if _timing_on(benchmark):
        # the same rig solved and analysed in turn (both re-use its compiled topology); the ratio is taken
        # pair by pair, so a machine whose speed drifts (other work on the cores) does not move it
        pairs = [(_seconds(lambda: solve(rig)), _seconds(lambda: analyse(rig))) for _ in range(15)]
        ratio = statistics.median(a / s for s, a in pairs)
        benchmark.extra_info.update(solve_ms=round(statistics.median(s for s, _ in pairs) * 1e3, 2),
                                    analyse_ms=round(statistics.median(a for _, a in pairs) * 1e3, 2),
                                    ratio=round(ratio, 2))
        print(f"\n1,000-point net: {benchmark.extra_info}")
        assert ratio <= 2.0, benchmark.extra_info


@pytest.mark.slow
def test_bench_load_a_10000_point_rig_file(benchmark, net_10k_file):
    rig = benchmark.pedantic(load_rig, args=(net_10k_file,), rounds=5, iterations=1, warmup_rounds=1)
    assert len(rig.points) == 10_400 and len(rig.ropes) == 20_200
    assert rig.point("n99_99").kind == "point" and rig.rope("h98_99").path[1].at == "n99_99"
    if _timing_on(benchmark):
        assert benchmark.stats.stats.median <= 0.5


@pytest.mark.slow
def test_bench_analyse_of_a_10000_point_net(benchmark, net_10k_file):
    rig = load_rig(net_10k_file)
    result = benchmark.pedantic(analyse, args=(rig,), rounds=3, iterations=1)
    assert result.ok, result.message
    assert len(result.segments) == 20_200
    if _timing_on(benchmark):
        assert benchmark.stats.stats.median <= 5.0
