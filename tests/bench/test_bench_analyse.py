"""Speed of the full analysis of a 50-rope rig: equilibrium + safety checks (``solver.analysis.analyse``).

This is what the live scheduler runs once a drag pauses (``SETTLE_MS``), and what the CLI,
reports and exports run; the danger zones it builds for the people-in-zones check are reused by
the overlay drawing the same result.  Correctness is asserted, never time; measure with
``python -m pytest tests/bench/test_bench_analyse.py --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

from solver.analysis import analyse
from solver.checks import run_checks
from solver.danger import _build_zones, danger_zones
from solver.equilibrium import solve
from tests.bench.fifty_ropes import fifty_rope_rig


def test_analyse_a_50_rope_rig_warm_started(benchmark):
    rig = fifty_rope_rig()
    cold = solve(rig)
    assert cold.ok, cold.message
    start = {pid: tuple(xy) for pid, xy in cold.points.items()}  # as the scheduler warm-starts a settled rig
    result = benchmark.pedantic(analyse, args=(rig,), kwargs={"start": start}, rounds=20, iterations=1,
                                warmup_rounds=1)
    assert result.ok, result.message
    # the checks merged in are exactly what run_checks finds for this solve (analyse adds nothing of its own)
    codes = {(w.code, w.subject) for w in result.warnings}
    assert {(w.code, w.subject) for w in run_checks(rig, result)} <= codes
    # the zones handed on to the overlay for this result are the ones built from scratch
    remembered = danger_zones(rig, result)
    built = _build_zones(rig, result)
    assert [(z.kind, z.subject, z.piece) for z in remembered] == [(z.kind, z.subject, z.piece) for z in built]
    assert all(a.geometry.equals(b.geometry) for a, b in zip(remembered, built))
