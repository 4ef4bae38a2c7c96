"""Speed of the equilibrium solver (pytest-benchmark; correctness asserted, never time).

Goals (medians on the 2-core CI machine, see shared/design/solver-notes.md):
30-point rig ≤ 2 ms, 1,000-point net ≤ 100 ms, 500-step warm-started sweep of a
vector pull ≤ 1 s.  CI runs each once with --benchmark-disable; measure with
``python -m pytest tests/bench --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from solver import equilibrium
from tests import rigs

solve = equilibrium.solve


def net(nx: int, ny: int, spacing: float = 1.0, pretension: float = 800.0, seed: int = 0):
    """An nx x ny grid of free points, tied to neighbours and to a ring of anchors, each point
    pulled by a small random force (plan view); pretensioned so it stays taut."""
    rnd = np.random.default_rng(seed)
    pts, ropes, forces = [], [], []

    def pid(i, j):
        return f"n{i}_{j}"

    for i in range(nx):
        for j in range(ny):
            pts.append(rigs.free(pid(i, j), i * spacing, j * spacing))
            forces.append(rigs.force(pid(i, j), float(rnd.uniform(5, 40)), float(rnd.uniform(0, 360))))
    for i in range(nx):
        pts.append(rigs.anchor(f"S{i}", i * spacing, -spacing))
        pts.append(rigs.anchor(f"N{i}", i * spacing, ny * spacing))
        ropes.append(rigs.rope(f"s{i}", [f"S{i}", pid(i, 0)], pretension_N=pretension))
        ropes.append(rigs.rope(f"nn{i}", [pid(i, ny - 1), f"N{i}"], pretension_N=pretension))
    for j in range(ny):
        pts.append(rigs.anchor(f"W{j}", -spacing, j * spacing))
        pts.append(rigs.anchor(f"E{j}", nx * spacing, j * spacing))
        ropes.append(rigs.rope(f"w{j}", [f"W{j}", pid(0, j)], pretension_N=pretension))
        ropes.append(rigs.rope(f"e{j}", [pid(nx - 1, j), f"E{j}"], pretension_N=pretension))
    for i in range(nx):
        for j in range(ny):
            if i + 1 < nx:
                ropes.append(rigs.rope(f"h{i}_{j}", [pid(i, j), pid(i + 1, j)], pretension_N=pretension))
            if j + 1 < ny:
                ropes.append(rigs.rope(f"v{i}_{j}", [pid(i, j), pid(i, j + 1)], pretension_N=pretension))
    return rigs.make_rig(pts, ropes, forces, motion="hold", ea=5e4)


def thirty_point_rig():
    """A 30-point rig: a 4 x 3 net (12 free points, 14 anchors), a corner guy to one more anchor,
    and a 3:1 (Z) with 90 % pulleys hauling on the opposite corner (grab, anchor, haulers)."""
    rig = net(4, 3)
    # a Z-rig on the net's corner point: grab, anchor pulley, haulers (3 more points, 30 in all)
    pul = rigs.pulley("pul", 0.9)
    extra = [rigs.free("G", 5.5, 3.5), rigs.anchor("AZ", 9.0, 6.0), rigs.haul("HZ", 9.5, 5.0, 300.0),
             rigs.anchor("AX", -2.0, -2.0)]
    z = rigs.rope("z", ["n3_2", "G", ("AZ", "pulley", "pul"), ("G", "pulley", "pul"), ("HZ", "hauled")])
    guy = rigs.rope("guy", ["AX", "n0_0"], pretension_N=400.0)
    rig = replace(rig, points=rig.points + tuple(extra), ropes=rig.ropes + (z, guy), hardware=(pul,),
                  settings=replace(rig.settings, motion="haul"))
    assert len(rig.points) == 30
    return rig


def test_bench_thirty_point_rig(benchmark):
    # goal: median ≤ 2 ms
    rig = thirty_point_rig()
    res = benchmark(solve, rig)
    assert res.status == "ok", res.message


def test_bench_thousand_point_net(benchmark):
    # goal: median ≤ 100 ms for 1,000 free points
    rig = net(40, 25)
    assert sum(1 for p in rig.points if not p.is_fixed) == 1000
    res = benchmark(solve, rig)
    assert res.status == "ok", res.message


def vector_pull_rig(p: float):
    pts = [rigs.anchor("A1", 0, 0), rigs.anchor("A2", 20, 0), rigs.free("V", 9, 0, label="hand")]
    ropes = [rigs.rope("line", ["A1", ("V", "sliding"), "A2"], pretension_N=300.0)]
    return rigs.make_rig(pts, ropes, [rigs.force("V", p, 80.0)], motion="hold", ea=4e4)


def test_bench_warm_started_vector_pull_sweep(benchmark):
    # goal: 500 warm-started solves ≤ 1 s, as when a user drags a force slider
    steps = [vector_pull_rig(p) for p in np.linspace(20.0, 1500.0, 500)]

    def sweep():
        start = None
        out = []
        for rig in steps:
            res = solve(rig, start=start)
            out.append(res)
            start = {k: (float(v[0]), float(v[1])) for k, v in res.points.items()}
        return out

    results = benchmark(sweep)
    assert all(r.status == "ok" for r in results), next(r.message for r in results if r.status != "ok")
    # the last step still satisfies the node balance T (u1 + u2) + P = 0 (statics)
    last = results[-1]
    v = np.asarray(last.points["V"])
    u = [(np.asarray(last.points[a]) - v) / np.linalg.norm(np.asarray(last.points[a]) - v) for a in ("A1", "A2")]
    t = [s.tension_N for s in last.segments_of("line")]
    p = 1500.0 * np.array([math.cos(math.radians(80.0)), math.sin(math.radians(80.0))])
    assert np.linalg.norm(t[0] * u[0] + t[1] * u[1] + p) <= 1e-7 * 1500.0
