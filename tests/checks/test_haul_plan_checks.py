"""The haul plan against outside sources: Hooke's law, an energy balance, rope travel = MA x load travel,
a rope grab's slip force.  Reference values are derived here with plain arithmetic or scipy, never read
from project numerics.  Units: m, N.
"""

from __future__ import annotations

from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from solver.haul_plan import plan_haul
from solver.model import Hardware, Pass
from tests.rigs import STIFF_EA, anchor, free, haul, load, make_rig, pulley, rope

EA = 2.0e5  # N: a soft linear rope, so stretch is large enough to measure well


def one_to_one(required: float, ea: float = EA, length: float = 20.0):
    """A straight rope from a stuck load to the haul team, L0 = ``length`` m."""
    return make_rig([load("L", 0, 0, required_N=required), haul("H", 0, length, 100.0)],
                    [rope("r", ["L", ("H", "hauled")])], ea=ea)


def z_in_line(required: float, ea: float = EA, eta: float = 1.0):
    """A 3:1 (Z) drawn in line along +y: load at 0, grab G at 10, anchor pulley A at 20, team at 25 m."""
    return make_rig([load("L", 0, 0, required_N=required), free("G", 0, 10), anchor("A", 0, 20),
                     haul("H", 0, 25, 100.0)],
                    [rope("m", ["L", "G", ("A", "pulley", "pul"), ("G", "pulley", "pul"), ("H", "hauled")])],
                    hardware=[pulley("pul", eta)], ea=ea)


def test_hookes_law_one_to_one_rope_paid_in_before_a_stuck_load_moves():
    # Hooke's law (any mechanics of materials text; check-values.md "Hauling stroke by stroke"):
    # a straight rope of unstretched length L0 must stretch by F_free * L0 / EA before it pulls F_free.
    # L0 is the rope left between load and hands when the load moves: the 20 m drawn less the rope
    # paid in, so p = F_free * (20 - p) / EA (solved with brentq; p = F L0 / EA to first order).
    F, drawn = 3000.0, 20.0
    expected = brentq(lambda p: p - F * (drawn - p) / EA, 0.0, drawn, xtol=1e-14)
    assert expected == pytest.approx(F * drawn / EA, rel=0.02)  # the first-order form of the check value
    plan = plan_haul(one_to_one(F, length=drawn), travel_m=0.5, throw_m=1.0)
    assert plan.ok, plan.message
    # (rel 1e-4: the breakout is interpolated within one of the stroke's 100 steps)
    assert plan.paid_in_before_move_m == pytest.approx(expected, rel=1e-4)


def test_energy_balance_for_a_three_to_one_drawn_in_line_with_the_load_stuck():
    # Energy balance (work by the haul team = elastic energy stored; linear rope, so the haul force
    # rises linearly from 0 and the work is T_haul * p / 2), check-values.md "When something lets go":
    #     T_haul * p / 2 = sum_i T_i^2 L0_i / (2 EA)   =>   p = sum_i T_i^2 L0_i / (T_haul EA).
    # Frictionless 3:1 at breakout: the load strand L-G carries F (L0 = 10 m, it never runs over a
    # sheave); the hauled run G-A-G-H carries T = F/3 everywhere.  Its unstretched length is what was
    # drawn (10 + 10 + 15 = 35 m) less the rope already paid in, so p appears on both sides:
    #     p = (F^2 * 10 + (F/3)^2 * (35 - p)) / ((F/3) * EA), solved for p with brentq.
    F = 3000.0
    T = F / 3.0

    def balance(p: float) -> float:
        return p - (F**2 * 10.0 + T**2 * (35.0 - p)) / (T * EA)

    expected = brentq(balance, 0.0, 5.0, xtol=1e-14)
    plan = plan_haul(z_in_line(F), travel_m=0.2, throw_m=1.0, steps=200)
    assert plan.ok, plan.message
    assert plan.paid_in_before_move_m == pytest.approx(expected, rel=1e-4)


def test_without_stretch_rope_travel_is_ideal_ma_times_load_travel():
    # check-values.md "Pulley friction ...": rope travel at the haul end = ideal MA x load travel when
    # nothing stretches.  A 3:1 in line with a practically inextensible rope, hauled 1.5 m.
    plan = plan_haul(z_in_line(1000.0, ea=STIFF_EA), travel_m=1.5, throw_m=3.0)
    assert plan.ok, plan.message
    assert plan.load_travel_m == pytest.approx(1.5, abs=1e-6)
    assert plan.paid_in_m == pytest.approx(3.0 * 1.5, rel=1e-4)
    assert plan.ma_ideal == pytest.approx(3.0, rel=1e-6)


def _one_to_one_with_capture(required: float, slip: float):
    """1:1 through a capture at anchor A (frictionless sheave) holding with a grab slipping at ``slip`` N."""
    grab = Hardware("g", "grab", mbs_N=1e12, slip_N=slip, label="grab")
    return make_rig([load("L", 0, 0, required_N=required), anchor("A", 0, 20), haul("H", 0, 24, 100.0)],
                    [rope("r", ["L", Pass("A", "capture", "pul", grab="g"), ("H", "hauled")])],
                    hardware=[pulley("pul", 1.0), grab], ea=EA)


def test_a_capture_holding_more_than_its_grab_slip_force_slides():
    # check-values.md "Knots and grabs": a 3-wrap prusik begins to slip around 7-9.5 kN (common
    # practice); the grab is a designed slip point, so a held force above it slides instead of holding.
    plan = plan_haul(_one_to_one_with_capture(10_000.0, slip=8_000.0), travel_m=1.0, throw_m=0.5)
    reset = [s for s in plan.strokes if s.reset]
    below = [s for s in reset if s.haul_force_max_N < 8_000.0]
    above = [s for s in reset if s.haul_force_max_N > 8_000.0 * 1.01]
    assert below and above, "the haul must build the held force past the slip force"
    assert all(s.capture_slip_m == 0.0 and s.capture_N < 8_000.0 for s in below)
    travelled = 0.0
    for s in plan.strokes:
        travelled += s.load_travel_m
        if s not in above:
            continue
        assert s.capture_N == pytest.approx(8_000.0, rel=1e-6)
        # Hooke's law: the load-side rope (20 m less the load's travel, between the stuck load and the
        # anchor) held at T holds l / (1 + T/EA) of unstretched rope; at 8 kN it holds l / (1 + 8 kN/EA):
        # the grab lets the difference slide through (the held force at lock-off is the haul force: 1:1)
        span = 20.0 - travelled
        expected = span / (1 + 8_000.0 / EA) - span / (1 + s.haul_force_max_N / EA)
        assert s.capture_slip_m == pytest.approx(expected, rel=1e-4)
    assert any("slips" in w for w in plan.warnings)


def test_a_capture_below_its_slip_force_holds_what_the_team_gained():
    # the same haul with a grab rated above the pull: it holds without sliding (common practice)
    plan = plan_haul(_one_to_one_with_capture(6_000.0, slip=8_000.0), travel_m=1.0, throw_m=0.5)
    assert plan.ok, plan.message
    assert all(s.capture_slip_m == 0.0 for s in plan.strokes)
    assert plan.strokes[0].capture_N == pytest.approx(plan.strokes[0].haul_force_max_N, rel=1e-3)


@settings(max_examples=15, deadline=None)
@given(ea=st.floats(5e4, 5e6), force=st.floats(200.0, 8000.0), length=st.floats(5.0, 60.0))
def test_hookes_law_holds_for_any_straight_rope_load_and_stiffness(ea, force, length):
    # Hooke's law as above, over ropes 5-60 m long, EA 50 kN-5 MN and loads 0.2-8 kN: p = F (L - p) / EA
    expected = brentq(lambda p: p - force * (length - p) / ea, 0.0, length, xtol=1e-14)
    plan = plan_haul(one_to_one(force, ea=ea, length=length), travel_m=0.05, throw_m=expected * 1.5 + 0.1)
    assert plan.ok, plan.message
    assert plan.paid_in_before_move_m == pytest.approx(expected, rel=2e-4)


def test_what_the_capture_holds_at_a_reset_follows_from_hookes_law_on_the_held_rope():
    # Derived here (Hooke's law, statics of a two-force point): a frictionless linear 3:1 drawn in line
    # (load 0, grab G 10 m, capture A 20 m, team 25 m), the load stuck throughout the first stroke of p.
    # During the stroke G moves u toward A: the load strand (L0 = 10 m) stretches by u, the hauled run
    # (L0 = 35 - p, drawn 35 - 3u) by p - 3u, and G balances 3 strands: EA u / 10 = 3 EA (p - 3u) / (35 - p).
    # At the reset the capture grips the rope at A: G-A holds l / (1 + T/EA) of rope with l = 10 - u.
    # Then L-G-A is one straight 20 m line of L0 = 10 + that, at one tension T' = EA (20 / L0 - 1).
    F, p = 20_000.0, 0.5  # far more than the first stroke can pull: the load stays stuck
    u = brentq(lambda u: u / 10.0 - 3.0 * (p - 3.0 * u) / (35.0 - p), 0.0, p / 3.0, xtol=1e-15)
    T = EA * (p - 3.0 * u) / (35.0 - p)
    held = (10.0 - u) / (1.0 + T / EA)
    expected = EA * (20.0 / (10.0 + held) - 1.0)
    rig = z_in_line(F)
    grab = Hardware("g", "grab", mbs_N=1e12, slip_N=1e12, label="grab")
    main = rig.ropes[0]
    path = tuple(Pass("A", "capture", "pul", grab="g") if ps.at == "A" else ps for ps in main.path)
    rig = replace(rig.with_rope(replace(main, path=path)), hardware=rig.hardware + (grab,))
    plan = plan_haul(rig, travel_m=0.01, throw_m=p)
    first = plan.strokes[0]
    assert first.load_travel_m == 0.0 and first.haul_force_max_N == pytest.approx(T, rel=1e-6)
    assert first.capture_N == pytest.approx(expected, rel=1e-6)
