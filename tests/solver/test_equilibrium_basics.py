"""The equilibrium solver on small drawn rigs, each checked against a closed form or scipy.

Every expected value is computed here from the formula named beside it
(shared/references/check-values.md), never read back from solver numerics.
Rigs embed a linear rope (stretch table [(EA * 0.01, 0.01)], T = EA * strain).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from solver.equilibrium import solve
from solver.model import Force, Hardware, Material, Pass, Point, Rig, Rigging, Rope, Settings

EA = 1.0e5  # N, linear test rope
G = 9.80665  # m/s^2, standard gravity (NIST SP 811)


def lin(ea: float = EA) -> Material:
    return Material(id="lin", kind="rope", mbs_N=30e3, stretch=((ea * 0.01, 0.01),))


def pulley(eta: float, hid: str = "pul", size: float | None = None) -> Hardware:
    return Hardware(id=hid, kind="pulley", efficiency=eta, mbs_N=36e3, size_m=size)


def edge(mu: float) -> Hardware:
    return Hardware(id="edge", kind="edge", friction_coefficient=mu, mbs_N=1e9)


def rope(rid: str, path, **rigged) -> Rope:
    passes = tuple(Pass(p) if isinstance(p, str) else Pass(*p) for p in path)
    return Rope(id=rid, material="lin", path=passes, rigged=Rigging(**rigged))


def rig(points, ropes, forces=(), hardware=(), motion="haul", view="plan", ea=EA) -> Rig:
    return Rig(points=tuple(points), ropes=tuple(ropes), forces=tuple(forces), materials=(lin(ea),),
               hardware=tuple(hardware), view=view, settings=Settings(motion=motion))


def z_rig(eta: float, motion: str = "haul", P: float = 1000.0) -> Rig:
    """A 3:1 Z-rig drawn in one line: load L, rope grab G, anchor pulley A, travelling pulley at G, haul H."""
    pts = [Point("L", "load", 0.0, 0.0), Point("G", "point", 6.0, 0.0), Point("A", "anchor", 10.0, 0.0),
           Point("H", "haul", 11.0, 0.0, force_N=P)]
    z = rope("z", ["L", "G", ("A", "pulley", "pul"), ("G", "pulley", "pul"), ("H", "hauled")])
    return rig(pts, [z], hardware=[pulley(eta)], motion=motion)


# --- mechanical advantage -----------------------------------------------------------------


@pytest.mark.parametrize("eta, expected", [(0.90, 2.710), (0.95, 2.853), (0.50, 1.750)])
def test_three_to_one_z_rig_delivers_t_method_advantage(eta, expected):
    # check-values.md, "Pulley friction": 3:1 (Z) = 1 + eta + eta^2 (T-method, derived);
    # eta = 0.90 -> 2.710, 0.95 -> 2.853, 0.50 -> 1.750.
    res = solve(z_rig(eta))
    assert res.status == "ok", res.message
    assert 1 + eta + eta**2 == pytest.approx(expected, abs=5.1e-4)  # quoted to 3 decimals
    assert res.ma_actual == pytest.approx(1 + eta + eta**2, rel=1e-9)
    assert res.ma_ideal == pytest.approx(3.0, rel=1e-9)  # every pass frictionless
    assert res.loads["L"].force_N == pytest.approx(1000.0 * (1 + eta + eta**2), rel=1e-9)
    # the pulleys at A and G double the rope back: 180 degrees of turn
    assert res.deflection_deg["z@A"] == pytest.approx(180.0, abs=1e-6)
    assert res.deflection_deg["z@G#2"] == pytest.approx(180.0, abs=1e-6)


def test_lowering_a_three_to_one_reverses_the_pulley_losses():
    # check-values.md: lowering, tension rises by 1/eta at each sheave: MA = 1 + 1/eta + 1/eta^2.
    eta = 0.9
    res = solve(z_rig(eta, motion="lower"))
    assert res.status == "ok", res.message
    assert res.ma_actual == pytest.approx(1 + 1 / eta + 1 / eta**2, rel=1e-9)


def test_holding_a_three_to_one_reports_the_static_friction_range():
    # check-values.md: not moving, each sheave allows any ratio in [eta, 1/eta]; the haul force
    # that holds the frictionless load force 3P lies between 3P/(1+1/eta+1/eta^2) and 3P/(1+eta+eta^2).
    eta, P = 0.9, 1000.0
    res = solve(z_rig(eta, motion="hold", P=P))
    assert res.status == "ok", res.message
    assert res.ma_actual == pytest.approx(3.0, rel=1e-9)
    r = res.hold_haul_range["H"]
    assert r.low == pytest.approx(3 * P / (1 + 1 / eta + 1 / eta**2), rel=1e-9)
    assert r.high == pytest.approx(3 * P / (1 + eta + eta**2), rel=1e-9)
    a = res.hold_anchor_range["A"]
    # anchor pulley carries the two legs either side of it: P(eta + eta^2) .. P(1/eta + 1/eta^2)
    assert a.low == pytest.approx(P * (eta + eta**2), rel=1e-9)
    assert a.high == pytest.approx(P * (1 / eta + 1 / eta**2), rel=1e-9)


# --- pretension, vector pull, slack ---------------------------------------------------------


def test_straight_line_keeps_its_pretension_and_its_shape():
    # A line rigged to P as drawn with nothing else on it stays put at tension P (rig-format.md, "rigged").
    P = 750.0
    pts = [Point("A", "anchor", 0.0, 0.0), Point("M", "point", 4.0, 0.0), Point("B", "anchor", 10.0, 0.0)]
    res = solve(rig(pts, [rope("line", ["A", "M", "B"], pretension_N=P)]))
    assert res.status == "ok", res.message
    for s in res.segments:
        assert s.tension_N == pytest.approx(P, rel=1e-12)
        assert s.strain == pytest.approx(P / EA, rel=1e-12)
    assert res.points["M"] == pytest.approx((4.0, 0.0), abs=1e-12)
    assert res.anchors["A"].force_N == pytest.approx(P, rel=1e-12)
    assert res.anchors["A"].direction_deg == pytest.approx(0.0, abs=1e-9)  # pulled east, toward B


@pytest.mark.parametrize("p_over_ea, theta_deg, t_over_p", [(1e-3, 5.725, 5.013), (1e-2, 12.30, 2.348)])
def test_hand_tight_line_pulled_at_mid_span_matches_the_elastic_string(p_over_ea, theta_deg, t_over_p):
    # check-values.md, Vector pull: T = P / (2 sin theta) and 1 + T/EA = 1/cos theta
    # (Irvine, Cable Structures, ch. 1); derived P/EA = 1e-3 -> 5.725 deg, T/P = 5.013;
    # 1e-2 -> 12.30 deg, T/P = 2.348.  Re-derived here with scipy brentq.
    P = p_over_ea * EA
    theta = brentq(lambda t: 2 * math.sin(t) * (1 / math.cos(t) - 1) - p_over_ea, 1e-9, 1.5, xtol=1e-15)
    assert math.degrees(theta) == pytest.approx(theta_deg, abs=5e-3)
    pts = [Point("A", "anchor", 0.0, 0.0), Point("V", "point", 8.0, 0.0), Point("B", "anchor", 16.0, 0.0)]
    res = solve(rig(pts, [rope("line", ["A", "V", "B"])], forces=[Force("V", P, 90.0)]))
    assert res.status == "ok", res.message
    T = res.segments[0].tension_N
    assert T / P == pytest.approx(1 / (2 * math.sin(theta)), rel=1e-8)
    assert T / P == pytest.approx(t_over_p, abs=2e-3)
    assert res.points["V"][1] == pytest.approx(8.0 * math.tan(theta), rel=1e-8)
    # the rope turns through twice the angle off the line at the hand (rig-format.md, deflection_deg)
    assert res.deflection_deg["line@V"] == pytest.approx(2 * math.degrees(theta), rel=1e-8)
    assert res.ma_actual is None  # no load point in this rig


def test_slack_rope_carries_exactly_zero():
    # A hanging mass on one rope: the taut rope carries m g (statics), the slack one nothing.
    m = 100.0
    pts = [Point("A1", "anchor", 0.0, 10.0), Point("A2", "anchor", 4.0, 10.0),
           Point("L", "load", 2.0, 0.0, fixed=False, mass_kg=m)]
    ropes = [rope("r1", ["A1", "L"]), rope("r2", ["A2", "L"], slack_m=2.0)]
    res = solve(rig(pts, ropes, view="elevation"))
    assert res.status == "ok", res.message
    t = {s.rope: s.tension_N for s in res.segments}
    assert t["r2"] == 0.0
    assert t["r1"] == pytest.approx(m * G, rel=1e-9)
    x, y = res.points["L"]
    assert x == pytest.approx(0.0, abs=1e-9)  # hangs plumb under A1
    assert 10.0 - y == pytest.approx(math.hypot(2.0, 10.0) * (1 + m * G / EA), rel=1e-9)


def test_a_slack_rope_that_comes_tight_shares_the_load():
    # Same hang with 1 cm of slack: once the first rope stretches, the second takes load too,
    # and both tensions balance the weight at the solved geometry (statics at the node).
    m = 100.0
    pts = [Point("A1", "anchor", 0.0, 10.0), Point("A2", "anchor", 4.0, 10.0),
           Point("L", "load", 2.0, 0.0, fixed=False, mass_kg=m)]
    ropes = [rope("r1", ["A1", "L"]), rope("r2", ["A2", "L"], slack_m=0.01)]
    res = solve(rig(pts, ropes, view="elevation", ea=2e4))
    assert res.status == "ok", res.message
    seg = {s.rope: s for s in res.segments}
    assert seg["r1"].tension_N > 0 and seg["r2"].tension_N > 0
    L = np.array(res.points["L"])
    f = np.zeros(2)
    for rid, anchor in (("r1", (0.0, 10.0)), ("r2", (4.0, 10.0))):
        d = np.array(anchor) - L
        f += seg[rid].tension_N * d / np.linalg.norm(d)
    np.testing.assert_allclose(f, [0.0, m * G], atol=1e-7 * m * G)


# --- named failures --------------------------------------------------------------------------


def test_an_unloaded_point_between_hand_tight_ropes_is_a_named_mechanism():
    pts = [Point("A", "anchor", 0.0, 0.0), Point("G1", "point", 5.0, 0.0), Point("B", "anchor", 10.0, 0.0)]
    res = solve(rig(pts, [rope("r1", ["A", "G1"]), rope("r2", ["G1", "B"])]))
    assert res.status == "mechanism"
    assert res.subject == "G1"
    assert res.message == ('point "G1" is not held: it can move north–south with nothing resisting '
                           "(tie it off, tension its ropes or add a load)")


def test_a_point_on_a_slack_rope_is_a_mechanism_and_a_loaded_one_is_not():
    pts = [Point("A", "anchor", 0.0, 0.0), Point("G1", "point", 0.0, 5.0)]
    slack = solve(rig(pts, [rope("r1", ["A", "G1"], slack_m=0.5)]))
    assert slack.status == "mechanism" and slack.subject == "G1"
    # a loaded point on one rope swings into line and is held (solver-notes.md)
    loaded = solve(rig(pts, [rope("r1", ["A", "G1"])], forces=[Force("G1", 300.0, 30.0)]))
    assert loaded.status == "ok", loaded.message
    x, y = loaded.points["G1"]
    assert math.degrees(math.atan2(y, x)) == pytest.approx(30.0, abs=1e-9)


def test_a_point_no_rope_reaches_is_named():
    pts = [Point("A", "anchor", 0.0, 0.0), Point("G1", "point", 0.0, 5.0), Point("X", "point", 3.0, 3.0)]
    res = solve(rig(pts, [rope("r1", ["A", "G1"])], forces=[Force("G1", 300.0, 90.0)]))
    assert res.status == "mechanism" and res.subject == "X"
    assert "no rope is attached" in res.message


def two_to_one(P: float, m: float = 100.0, gap: float = 1.0, tie: bool = False) -> Rig:
    """A free load hanging in a 2:1 (rope tied at A, over a pulley on the load, hauled at H ``gap`` m away)."""
    pts = [Point("A", "anchor", 0.5 - gap / 2, 10.0), Point("H", "haul", 0.5 + gap / 2, 10.0, force_N=P),
           Point("L", "load", 0.5, 0.0, fixed=False, mass_kg=m)]
    ropes = [rope("m", ["A", ("L", "pulley", "pul"), ("H", "hauled")])]
    if tie:  # a rope tied below the load to a fixed anchor B
        pts.append(Point("B", "anchor", 0.5, -5.0))
        ropes.append(rope("tie", ["L", "B"]))
    return rig(pts, ropes, hardware=[pulley(1.0, size=0.1)], view="elevation")


def test_a_two_to_one_hauled_with_less_than_half_the_load_cannot_hold_it():
    # 2:1 ideal: the load needs 2P >= m g (check-values.md, 2:1 = 1 + eta with eta = 1).
    res = solve(two_to_one(P=0.45 * 100.0 * G))
    assert res.status == "diverged"
    assert res.subject == "L"
    assert res.message.startswith('the rig cannot hold the load: point "L" runs away down')


def test_a_two_to_one_hauled_harder_than_the_load_two_blocks_and_says_so():
    # legs 5 cm apart: 2P cos(alpha) > m g all the way up, so the load rises into the pulley block
    res = solve(two_to_one(P=0.6 * 100.0 * G, gap=0.05))
    assert res.status == "ok", res.message
    assert ("two-blocked", "L") in {(w.code, w.subject) for w in res.warnings}
    # it stops at the hardware's size (size_m = 0.1 m) from the anchor and the haul point
    L = np.array(res.points["L"])
    assert np.linalg.norm(L - [0.475, 10.0]) == pytest.approx(0.1, abs=1e-4)


def test_a_two_to_one_with_legs_apart_hangs_where_2p_cos_alpha_is_m_g():
    # Statics of the pulley node (any mechanics text): each leg carries P; the load settles
    # where the legs' half-angle alpha satisfies 2 P cos(alpha) = m g.
    m, P = 100.0, 0.6 * 100.0 * G
    res = solve(two_to_one(P=P, m=m))
    assert res.status == "ok", res.message
    assert not res.warnings
    x, y = res.points["L"]
    alpha = math.atan2(0.5, 10.0 - y)
    assert x == pytest.approx(0.5, abs=1e-9)
    assert math.cos(alpha) == pytest.approx(m * G / (2 * P), rel=1e-9)


def test_a_two_to_one_with_a_tie_below_shares_the_load_by_statics():
    # With a fixed-length tie below, vertical balance at the load: tie = 2 P cos(alpha) - m g.
    m, P = 100.0, 0.75 * 100.0 * G
    res = solve(two_to_one(P=P, m=m, tie=True))
    assert res.status == "ok", res.message
    x, y = res.points["L"]
    alpha = math.atan2(0.5, 10.0 - y)
    tie = next(s for s in res.segments if s.rope == "tie")
    assert tie.tension_N == pytest.approx(2 * P * math.cos(alpha) - m * G, rel=1e-8)


@pytest.mark.parametrize("breakage, subject, words", [
    (lambda r: r.with_rope(rope("z", ["L", "Q"])), "Q", "not on the sketch"),
    (lambda r: r.with_rope(Rope("z", "nylon-99", r.ropes[0].path)), "nylon-99", '"nylon-99"'),
    (lambda r: r.moved("G", 0.0, 0.0), "G", "same spot"),
    (lambda r: r.with_point(Point("H", "haul", 11.0, 0.0)), "H", "no haul force"),
])
def test_a_broken_rig_is_invalid_with_the_culprit_named(breakage, subject, words):
    res = solve(breakage(z_rig(0.9)))
    assert res.status == "invalid"
    assert res.subject == subject
    assert words in res.message


# --- edges: capstan --------------------------------------------------------------------------


@pytest.mark.parametrize("mu", [0.14, 0.44])
def test_rope_over_an_edge_loses_the_capstan_factor_at_the_solved_wrap(mu):
    # Euler-Eytelwein: T_high / T_low = e^(mu phi) (check-values.md, Capstan; mu for concrete
    # 0.44, aluminium bar 0.14 measured by R. Delaney, Physics for Roping Technicians).
    # The pulled end G is drawn off the final line, so the wrap comes from the solved geometry:
    # G swings until its rope points along the pull (east), making phi = 90 degrees.
    F = 1000.0
    pts = [Point("L", "load", 0.0, 0.0), Point("E", "anchor", 0.0, 10.0), Point("G", "point", 8.0, 12.0)]
    r = rope("r", ["L", ("E", "edge", "edge"), "G"])
    res = solve(rig(pts, [r], forces=[Force("G", F, 0.0)], hardware=[edge(mu)]))
    assert res.status == "ok", res.message
    phi = res.deflection_deg["r@E"]
    assert phi == pytest.approx(90.0, abs=1e-7)
    assert res.loads["L"].force_N == pytest.approx(F * math.exp(-mu * math.radians(phi)), rel=1e-9)
    assert res.ma_actual == pytest.approx(math.exp(-mu * math.pi / 2), rel=1e-9)
    if mu == 0.44:  # "a 90 degree concrete edge roughly doubles the haul force" (common practice, no source)
        assert 1 / res.ma_actual == pytest.approx(2.0, abs=0.02)


# --- warm start --------------------------------------------------------------------------------


def test_warm_start_after_a_small_anchor_move_takes_at_most_four_iterations():
    eta = 0.9
    pts = [Point("L", "load", 0.0, 0.0), Point("G", "point", 6.0, 0.5), Point("A", "anchor", 10.0, 1.0),
           Point("H", "haul", 11.0, 2.0, force_N=800.0), Point("B", "anchor", 5.0, -4.0)]
    z = rope("z", ["L", "G", ("A", "pulley", "pul"), ("G", "pulley", "pul"), ("H", "hauled")])
    tie = rope("tie", ["G", "B"], pretension_N=100.0)
    base = rig(pts, [z, tie], hardware=[pulley(eta)])
    first = solve(base)
    assert first.status == "ok", first.message
    moved = base.moved("A", 10.02, 1.01)
    warm = solve(moved, start=dict(first.points))
    cold = solve(moved)
    assert warm.status == "ok" and cold.status == "ok"
    assert warm.iterations <= 4 < cold.iterations
    np.testing.assert_allclose(warm.points["G"], cold.points["G"], atol=1e-9)


# --- independent parts and stiff swings: iteration counts (counts, never time) ----------------

def _hauling_copies(n: int) -> Rig:
    """``n`` identical, disconnected 3:1 systems with a redirect, 40 m apart (demo rig, invented numbers):
    load L, redirect pulley R, grab G, two-sling master point M with an anchor pulley, haul H 600 N."""
    pts, ropes = [], []
    for k in range(n):
        x = 40.0 * k
        pts += [Point(f"L{k}", "load", x, 0.0), Point(f"R{k}", "anchor", x + 6, 12), Point(f"S{k}", "anchor", x - 4, 20),
                Point(f"T{k}", "anchor", x - 1, 21), Point(f"M{k}", "point", x - 2, 17), Point(f"G{k}", "point", x - 1, 14),
                Point(f"H{k}", "haul", x - 8, 20, force_N=600.0)]
        ropes += [rope(f"main{k}", [f"L{k}", (f"R{k}", "pulley", "pul"), f"G{k}", (f"M{k}", "pulley", "pul"),
                                    (f"G{k}", "pulley", "pul"), (f"H{k}", "hauled")]),
                  rope(f"sa{k}", [f"S{k}", f"M{k}"]), rope(f"sb{k}", [f"T{k}", f"M{k}"])]
    return rig(pts, ropes, hardware=[pulley(0.9)], ea=6e4)


def test_disconnected_copies_solve_like_one_copy():
    # Each copy is statically independent (no rope links them), so each must come out exactly as
    # when drawn alone, and the solve must not take longer in iterations for having neighbours.
    one = solve(_hauling_copies(1))
    many = solve(_hauling_copies(10))
    assert one.status == "ok" and many.status == "ok", many.message
    assert many.iterations <= one.iterations + 3
    base = {(s.rope, s.index): s.tension_N for s in one.segments}
    for k in range(10):
        for (r, i), t in base.items():
            mine = next(s for s in many.segments if s.rope == f"{r[:-1]}{k}" and s.index == i)
            assert mine.tension_N == pytest.approx(t, rel=1e-9)
        for pid in ("M", "G"):
            x0, y0 = one.points[f"{pid}0"]
            assert many.points[f"{pid}{k}"] == pytest.approx((x0 + 40.0 * k, y0), abs=1e-9)
        assert many.anchors[f"R{k}"].force_N == pytest.approx(one.anchors["R0"].force_N, rel=1e-9)


def test_a_drag_step_that_moves_one_part_solves_it_as_if_drawn_alone():
    # A drag step warm-starts every part at its last equilibrium and moves one: the parts left
    # still are done at once and the moved part is iterated on its own (the plain-number loop
    # takes it over).  Statically independent parts: the moved part must take the same
    # iterations and come out where it does when drawn alone, and the still parts must not move.
    def drag(r: Rig) -> tuple:
        first = solve(r)
        assert first.status == "ok", first.message
        moved = r.moved("H0", r.point("H0").x + 1.5, r.point("H0").y - 1.0)
        start = {k: v for k, v in first.points.items() if k != "H0"}
        return first, solve(moved, start=start, ideal=False)

    _, one = drag(_hauling_copies(1))
    first, many = drag(_hauling_copies(4))
    assert one.status == "ok" and many.status == "ok", many.message
    assert many.iterations == one.iterations > 0
    for pid in ("M0", "G0", "L0"):
        assert many.points[pid] == pytest.approx(one.points[pid], abs=1e-9)
    for k in range(1, 4):
        for pid in (f"M{k}", f"G{k}"):
            assert many.points[pid] == first.points[pid]  # still parts: not a bit moved


def test_an_anchor_shared_by_two_parts_sums_both():
    # Two points hang from one anchor on separate ropes (two parts of the rig): the anchor carries
    # the vector sum of both rope pulls, i.e. both weights (plan-view forces, statics).
    pts = [Point("A", "anchor", 0.0, 0.0), Point("P", "point", -3.0, -4.0), Point("Q", "point", 4.0, -3.0)]
    res = solve(rig(pts, [rope("p", ["A", "P"]), rope("q", ["A", "Q"])],
                    forces=[Force("P", 300.0, 270.0), Force("Q", 500.0, 270.0)]))
    assert res.status == "ok", res.message
    assert res.anchors["A"].force_N == pytest.approx(800.0, rel=1e-9)


@pytest.mark.parametrize("ea", [1e6, 1e7])
@pytest.mark.parametrize("direction", [270.0, 200.0, 100.0])
def test_a_point_swinging_on_a_stiff_rope_needs_few_iterations(ea, direction):
    # Drawn level at 10 m from its anchor, pulled 1000 N toward `direction`: it must swing up to
    # 170 degrees round the anchor.  At equilibrium the rope lines up with the force and
    # stretches by T/EA (Hooke's law, T = 1000 N).  Before the soft start this took 22-68 iterations.
    pts = [Point("A", "anchor", 0.0, 0.0), Point("P", "point", 10.0, 0.0)]
    res = solve(rig(pts, [rope("r", ["A", "P"])], forces=[Force("P", 1000.0, direction)], motion="hold", ea=ea))
    assert res.status == "ok", res.message
    assert res.iterations <= 20
    th = math.radians(direction)
    r = 10.0 * (1 + 1000.0 / ea)
    assert res.points["P"] == pytest.approx((r * math.cos(th), r * math.sin(th)), abs=1e-7)


@pytest.mark.parametrize("eta", [0.6, 0.5])
def test_a_pulley_hauled_into_a_knot_jams_and_is_named_two_blocked(eta):
    # Found by the rotation property (hypothesis): a pulley at P1 on the run P0 (tied) -> P1 ->
    # A1 slides into the knot at P0.  A jammed pass lets no rope run through it, so it passes
    # the static ratio 1, inside the static friction range [eta, 1/eta] (rig-format.md), not
    # the running ratio 1/eta (which would ask the spacing contact to pull).  Checked by statics
    # (any mechanics text): P0 and P1 pressed together act as one body, so the external forces
    # and the ropes leaving the pair balance exactly; the contact force inside acts along P0-P1.
    pts = [Point("A0", "anchor", 10.0, 14.0), Point("A1", "anchor", 0.0, 14.0), Point("P0", "point", 0.0, 2.0),
           Point("P1", "point", 0.0, 0.0)]
    ropes = [rope("r0", ["A0", "P0"]), rope("r2", ["A0", "P0", ("P1", "pulley", "pul"), "A1"], pretension_N=20.0)]
    forces = [Force("P0", 391.0, 270.0), Force("P1", 100.0, 270.0)]
    res = solve(rig(pts, ropes, forces, hardware=[pulley(eta)], motion="haul", ea=2e4))
    assert res.status == "ok", res.message
    assert ("two-blocked", "P1") in {(w.code, w.subject) for w in res.warnings}
    seg = {(s.rope, s.index): s for s in res.segments}
    # default hardware spacing 5 cm, less the penalty contact's tiny give (push / stiffness ~ 1e-6 m)
    assert seg[("r2", 1)].length_m == pytest.approx(0.05, abs=1e-5)
    assert seg[("r2", 2)].tension_N == pytest.approx(seg[("r2", 1)].tension_N, rel=1e-9)
    xy = {k: np.array(v) for k, v in res.points.items()}

    def pull(s):  # force of segment s on its two ends
        u = (xy[s.to_point] - xy[s.from_point]) / np.linalg.norm(xy[s.to_point] - xy[s.from_point])
        return {s.from_point: s.tension_N * u, s.to_point: -s.tension_N * u}

    net = {"P0": np.array([0.0, -391.0]), "P1": np.array([0.0, -100.0])}
    for s in res.segments:
        for p, f in pull(s).items():
            if p in net:
                net[p] = net[p] + f
    pair = net["P0"] + net["P1"]  # the short piece's pull cancels inside the pair
    assert np.linalg.norm(pair) <= 1e-7 * 391.0
    # what is left on P1 is the contact push, along P0 -> P1 and away from P0
    d = (xy["P1"] - xy["P0"]) / np.linalg.norm(xy["P1"] - xy["P0"])
    push = net["P1"]
    assert abs(push[0] * d[1] - push[1] * d[0]) <= 1e-7 * 391.0
    assert push @ d < 0.0 or np.linalg.norm(push) <= 1e-7 * 391.0


def test_a_pulley_that_friction_draws_up_its_rope_climbs_into_the_anchor_and_is_named():
    # Found by the scaling property (hypothesis).  P0 hangs on a pulley (eta 0.6, haul) on the
    # run P1 (tied) -> P0 -> A1 with P1 hanging below it.  Running, the pulley passes t/eta up
    # and t down (rig-format.md): with t ~ 150 N from P1's 151 N, 0.667 t exceeds P0's 100 N at
    # every height, so nothing stops it short of A1; it must end two-blocked there (5 cm
    # default spacing), with the running ratio kept and P1, clear of any contact, balanced
    # exactly (statics of a point, any mechanics text).
    pts = [Point("A0", "anchor", 3.0, 14.0), Point("A1", "anchor", 0.0, 14.0), Point("P0", "point", 0.0, 4.0),
           Point("P1", "point", 0.0, 1.0)]
    ropes = [rope("r0", ["A0", "P0"]), rope("r1", ["A0", "P1"]),
             rope("r2", ["A0", "P1", ("P0", "pulley", "pul"), "A1"], pretension_N=20.0)]
    forces = [Force("P0", 100.0, 270.0), Force("P1", 151.0, 270.0)]
    res = solve(rig(pts, ropes, forces, hardware=[pulley(0.6)], motion="haul", ea=1e6))
    assert res.status == "ok", res.message
    assert ("two-blocked", "P0") in {(w.code, w.subject) for w in res.warnings}
    xy = {k: np.array(v) for k, v in res.points.items()}
    assert np.linalg.norm(xy["P0"] - xy["A1"]) == pytest.approx(0.05, abs=1e-5)
    seg = {(s.rope, s.index): s for s in res.segments}
    assert seg[("r2", 2)].tension_N == pytest.approx(seg[("r2", 1)].tension_N / 0.6, rel=1e-9)
    net = np.array([0.0, -151.0])
    for s in res.segments:
        for end, other in ((s.from_point, s.to_point), (s.to_point, s.from_point)):
            if end == "P1":
                d = xy[other] - xy[end]
                net = net + s.tension_N * d / np.linalg.norm(d)
    assert np.linalg.norm(net) <= 1e-8 * 151.0
