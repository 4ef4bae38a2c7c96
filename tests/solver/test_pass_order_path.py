"""The spacing contact gives one answer whatever path the iteration took (solver.pass_order).

A ring sliding on a line between two anchors, pulled down past the far anchor (the force slider
of the vector-pull bench): warm-started from the step before (the ring above the line) the solve
used to wrap the ring past anchor A2 and report ``ok`` with the line at a third of its tension,
held by a spacing contact pushing 74 deg off the rope -- a force no hardware can give.  Checks:
* a warm-started and a cold solve of the same rig are the same equilibrium (the model is
  path-independent where its equilibrium is unique);
* statics of the reported state, any mechanics text: the ring balances T (u1 + u2) + P + C = 0,
  where C is the push of the hardware it rests on, which acts along the line between the two
  passes (two bodies touching push along the line of their centres), so
  (T (u1 + u2) + P) x u2 = 0.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from solver import equilibrium, memo
from tests.bench.test_bench_solver import vector_pull_rig


def _start(res) -> dict:
    return {k: (float(v[0]), float(v[1])) for k, v in res.points.items()}


@pytest.mark.parametrize("magnitude", [2000.0, 2762.0, 3000.0])
@pytest.mark.parametrize("direction", [-67.0, -80.0, -60.0])
def test_a_ring_pulled_past_an_anchor_warm_and_cold_agree_and_balance_along_the_rope(magnitude, direction):
    rig = vector_pull_rig(200.0)
    first = equilibrium.solve(rig)  # the ring above the line, as the slider's previous step leaves it
    f0 = rig.forces[0]
    step = replace(rig, forces=(replace(f0, magnitude_N=magnitude, direction_deg=direction),))
    warm = equilibrium.solve(step, start=_start(first))
    memo.forget_all()
    cold = equilibrium.solve(step)
    assert cold.ok and warm.ok, (cold.message, warm.message)
    for res in (warm, cold):
        v = np.asarray(res.points["V"])
        a1, a2 = (np.asarray(res.points[a]) for a in ("A1", "A2"))
        u1, u2 = (a1 - v) / np.linalg.norm(a1 - v), (a2 - v) / np.linalg.norm(a2 - v)
        t = [s.tension_N for s in res.segments_of("line")]
        p = magnitude * np.array([math.cos(math.radians(direction)), math.sin(math.radians(direction))])
        rest = t[0] * u1 + t[1] * u2 + p
        # whatever is left is the hardware's push, along the rope piece V-A2 (cross product 0)
        assert abs(rest[0] * u2[1] - rest[1] * u2[0]) <= 1e-6 * magnitude
        # the ring never passes A2 along the line (A2 is at x = 20 m)
        assert v[0] < 20.0
    np.testing.assert_allclose(warm.points["V"], cold.points["V"], atol=1e-6)
    np.testing.assert_allclose([s.tension_N for s in warm.segments_of("line")],
                               [s.tension_N for s in cold.segments_of("line")], rtol=1e-6)


# --- the last guard: a state held by a contact that is no equilibrium is never "ok" ------------------------

def _guard_rig():
    rig = vector_pull_rig(200.0)
    f0 = rig.forces[0]
    return replace(rig, forces=(replace(f0, magnitude_N=2762.0, direction_deg=-67.0),))


def test_inconsistent_names_a_closed_contact_whose_passes_have_crossed():
    from solver import pass_order
    from solver.assembly import compile_rig, evaluate
    s = compile_rig(_guard_rig())
    v = s.point_ids.index("V")
    k = next(i for i in range(s.n_pieces) if {s.point_ids[s.a[i]], s.point_ids[s.b[i]]} == {"V", "A2"})
    x = np.zeros(s.n_dof)
    # the ring inside A2's spacing, on the line: consistent with its order direction it is a plain contact ...
    xy = s.xy0.copy()
    xy[v] = s.xy0[s.point_ids.index("A2")] - np.array([0.5 * s.s_min[k], 0.0])
    x[s.dof[v]] = xy[v]
    pass_order.start(s, x)
    st = evaluate(s, x, None, None)
    assert st.pen[k] > 0 and len(pass_order.inconsistent(s, st)) == 0
    # ... but held there with its order turned round it has been carried across A2: named
    s.order_ref = s.order_ref.copy()
    s.order_ref[k] *= -1.0
    assert list(pass_order.inconsistent(s, st)) == [k]


def test_a_warm_result_the_guard_refuses_is_solved_cold(monkeypatch):
    from solver import pass_order
    rig = _guard_rig()
    cold = equilibrium.solve(rig)
    before = _start(equilibrium.solve(vector_pull_rig(200.0)))
    memo.forget_all()
    calls = []
    real = pass_order.inconsistent

    def first_refused(s, st):
        calls.append(1)
        return np.array([0]) if len(calls) == 1 else real(s, st)

    monkeypatch.setattr(pass_order, "inconsistent", first_refused)
    warm = equilibrium.solve(rig, start=before)
    assert len(calls) >= 2 and warm.ok
    assert repr(warm.points) == repr(cold.points)


def test_a_result_the_guard_refuses_twice_is_reported_failed_not_ok(monkeypatch):
    from solver import pass_order
    monkeypatch.setattr(pass_order, "inconsistent", lambda s, st: np.array([0]))
    res = equilibrium.solve(_guard_rig())
    assert res.status != "ok" and "not along their rope" in res.message


def test_a_force_slider_turned_full_circle_step_by_step_solves_each_step_as_a_cold_solve():
    # the slider dragged round, each step warm-started from the last (as the sketchpad does): the ring
    # slides round both anchors and back, and every step is the cold solve's equilibrium
    rig = vector_pull_rig(200.0)
    f0 = rig.forces[0]
    start = None
    for magnitude in (300.0, 2762.0):
        for direction in np.arange(80.0, -280.0, -7.0):
            step = replace(rig, forces=(replace(f0, magnitude_N=magnitude, direction_deg=float(direction)),))
            warm = equilibrium.solve(step, start=start)
            cold = equilibrium.solve(step)
            assert warm.ok and cold.ok, (direction, warm.message, cold.message)
            np.testing.assert_allclose(warm.points["V"], cold.points["V"], atol=1e-6, err_msg=str(direction))
            start = _start(warm)


# A jammed pair pinned at a fixed anchor rolls round it as one body, and in the disc model a Z hauled toward a
# point beyond its anchor has two equilibria with the grab at the pulley: below it (the drawn side) and swung
# over it toward the haul.  With the haul strand (16 kN) far stronger than the load rope (426 N below, 521 N
# above; Hooke) the state below is balanced like an inverted pendulum (roll stiffness about -1.5e5 N/m,
# tests/solver/test_pass_order_stability.py): 0.1 deg off line a cold solve already swings over, and a pulley
# clipped to its anchor turns to its load.  So the solver reports the stable state (solver.stability), swung
# over its anchor, whatever was solved before: the same as a cold solve at every step of the swing.
def test_a_z_haul_swung_in_line_from_off_line_gives_the_cold_answer_swung_over_the_pulley():
    from tests.solver.test_pass_order import SIZE, hooke, jammed_pair_statics, z_rig
    start = None
    for angle in (70.0, 80.0, 85.0, 90.0):  # the haul point 6 m from the anchor, swung to straight above it
        rad = math.radians(angle)
        rig = z_rig(9_000.0, (6.0 * math.cos(rad), 20.0 + 6.0 * math.sin(rad)), 19.0, 16_000.0)
        res = equilibrium.solve(rig, start=start)
        cold = equilibrium.solve(rig)
        assert res.ok and cold.ok, (res.message, cold.message)
        np.testing.assert_allclose(res.points["G1"], cold.points["G1"], atol=1e-6, err_msg=str(angle))
        jammed_pair_statics(rig, res)
        start = {"G1": res.points["G1"]}
    assert res.points["G1"][1] == pytest.approx(20.0 + SIZE, abs=1e-4)  # the penalty gives ~1e-5 m
    assert res.loads["L1"].force_N == pytest.approx(hooke(9_000.0, 20.0 + SIZE, 19.0), rel=1e-4)  # 521 N
