"""A warm re-solve after a force changed starts from the last answer, however far that swung from the drawing."""

from __future__ import annotations

import pytest

from solver.equilibrium import solve
from solver.model import Force, Material, Pass, Point, Rig, Rope


def test_a_free_end_swung_past_a_right_angle_re_solves_warm_as_cold():
    # one rope, a free end pulled round by 3 kN: it swings more than 90° from its drawn direction; a warm
    # re-solve with the force turned by 1° must find the same answer as a cold one (statics: the rope lines
    # up with the force, T = 3 kN)
    rope = Material(id="r", kind="rope", mbs_N=1e12, stretch=((2e3, 0.01),))
    rig = Rig(points=(Point("A", "anchor", 0, 0), Point("B", "point", 4, 6)),
              ropes=(Rope("R", "r", (Pass("A"), Pass("B"))),), materials=(rope,), forces=(Force("B", 3000.0, -45.0),))
    first = solve(rig)
    assert first.ok, first.message
    turned = Rig(points=rig.points, ropes=rig.ropes, materials=rig.materials, forces=(Force("B", 3000.0, -44.0),))
    warm, cold = solve(turned, start=dict(first.points)), solve(turned)
    assert warm.ok, warm.message
    assert warm.points["B"] == pytest.approx(cold.points["B"], abs=1e-9)
    assert warm.segments[0].tension_N == pytest.approx(3000.0, rel=1e-9)
