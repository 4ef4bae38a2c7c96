"""Speed of re-solving a dragged rig (pytest-benchmark; correctness asserted, never time).

A drag step is a new Rig with one point moved, solved warm-started from the last step's
result.  Its compile is now only the geometry of the cached topology
(``assembly.with_geometry``); the second bench forces the full compile of every step, as
before, for comparison.  Goal: a whole drag step (solve + overlay) within a 16 ms frame.
"""

from __future__ import annotations

from solver import equilibrium, memo
from solver.assembly import compile_rig, compile_topology, with_geometry
from solver.compile import DIFFERENT
from tests.bench.fifty_ropes import fifty_rope_rig

#: Steps of one drag: the grab of system 4 pulled 2 cm left and 1 cm down per step.
STEPS = 20


def _drag_steps():
    rig = fifty_rope_rig()
    steps, current = [], rig
    for _ in range(STEPS):
        g = current.point("G4")
        current = current.moved("G4", g.x - 0.02, g.y - 0.01)  # each step moved from the last, as a drag does
        steps.append(current)
    return rig, steps


def _bench_drag(benchmark):
    rig, steps = _drag_steps()
    memo.COMPILED.clear()
    first = equilibrium.solve(rig)
    assert first.ok, first.message
    start0 = {k: (float(v[0]), float(v[1])) for k, v in first.points.items()}

    def drag():
        start, out = start0, []
        for step in steps:
            res = equilibrium.solve(step, start=start)
            out.append(res)
            start = {k: (float(v[0]), float(v[1])) for k, v in res.points.items()}
        return out

    results = benchmark(drag)
    assert all(r.ok for r in results), next(r.message for r in results if not r.ok)
    # the last step solved through the cache equals a fresh solve of that rig from the same start
    before = results[-2]
    memo.COMPILED.clear()
    fresh = equilibrium.solve(steps[-1], start={k: (float(v[0]), float(v[1])) for k, v in before.points.items()})
    assert repr(fresh) == repr(results[-1])
    memo.COMPILED.clear()


def test_bench_drag_fifty_ropes_geometry_update(benchmark):
    # 20 warm-started steps; per step = time / 20
    _bench_drag(benchmark)


def test_bench_drag_fifty_ropes_full_compile_each_step(benchmark, monkeypatch):
    # the same drag with the topology never reused (every step compiled whole), for comparison
    monkeypatch.setattr(equilibrium, "structure_match", lambda *a, **k: DIFFERENT)
    _bench_drag(benchmark)


def test_bench_drag_step_geometry_update_only(benchmark):
    # the compile part of one step: the geometry of the 50-rope rig's cached topology
    rig, steps = _drag_steps()
    topo = compile_topology(rig)
    s = benchmark(with_geometry, topo, steps[-1])
    assert s.rig is steps[-1]


def test_bench_drag_step_full_compile_only(benchmark):
    # the compile part of one step as before: the whole 50-rope rig
    rig, steps = _drag_steps()
    s = benchmark(compile_rig, steps[-1])
    assert s.rig is steps[-1]
