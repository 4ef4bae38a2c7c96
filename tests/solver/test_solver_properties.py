"""Properties every equilibrium must have, and failures the solver must name.

Force balance is recomputed here from the Result's positions and segment tensions
(numpy only, tests/rigs.py), never read from the solver's own residual; invariance
under translation, rotation, unit scaling and mirroring is checked by solving the
transformed rig (Galilean / frame invariance of statics: any mechanics text).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, example, given, settings
from hypothesis import strategies as st

from solver import equilibrium
from tests import rigs

solve = equilibrium.solve

PROP = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
BOX = 20.0

coord = st.floats(0.0, BOX, allow_nan=False, allow_infinity=False)


@st.composite
def random_rigs(draw, friction: bool = True):
    """A plan-view rig hanging "downstream": 2-4 anchors along the top of the site, 1-4 free
    points below them, each tied to anchors or free points above it, one long rope through
    free points (tied, sliding or over a pulley), and on every free point a force within
    ±50° of "down" (like current in a river).  The family excludes by construction the two
    degenerate cases in which statics has no unique answer: forces that cancel on a point
    (it floats on slack ropes, a true mechanism) and a force aimed back through the anchor
    of a slack rope (the point would have to pass through the anchor)."""
    n_anchor = draw(st.integers(2, 4))
    n_free = draw(st.integers(1, 4))
    top = [(draw(coord), draw(st.floats(14.0, BOX))) for _ in range(n_anchor)]
    low = sorted(((draw(coord), draw(st.floats(0.0, 12.0))) for _ in range(n_free)), key=lambda q: -q[1])
    xy = top + low
    # no two points closer than 1 m, free points at least 0.5 m apart in height: a drawn rig
    for i in range(len(xy)):
        for j in range(i):
            assume(math.dist(xy[i], xy[j]) > 1.0)
    for i in range(1, len(low)):
        assume(low[i - 1][1] - low[i][1] > 0.5)
    anchors = [rigs.anchor(f"A{i}", *xy[i]) for i in range(n_anchor)]
    frees = [rigs.free(f"P{i}", *xy[n_anchor + i]) for i in range(n_free)]
    ids_a = [p.id for p in anchors]
    ids_f = [p.id for p in frees]
    ropes = []
    hw = [rigs.pulley("pul", draw(st.sampled_from([1.0, 0.9, 0.6])))]

    def rigging():
        mode = draw(st.sampled_from(["tight", "slack", "pre"]))
        if mode == "slack":
            return {"slack_m": draw(st.floats(0.0, 0.5))}
        if mode == "pre":
            return {"pretension_N": draw(st.floats(20.0, 800.0))}
        return {}

    for i, pid in enumerate(ids_f):
        above = ids_a + ids_f[:i]
        picks = draw(st.lists(st.sampled_from(above), min_size=1, max_size=2, unique=True))
        for other in picks:
            ropes.append(rigs.rope(f"r{len(ropes)}", [other, pid], **rigging()))
    a, b = draw(st.lists(st.sampled_from(ids_a), min_size=2, max_size=2, unique=True))
    mids = draw(st.lists(st.sampled_from(ids_f), min_size=1, max_size=2, unique=True))
    hows = ["tied", "sliding"] + (["pulley"] if friction else [])
    middle = []
    for m in mids:
        how = draw(st.sampled_from(hows))
        middle.append((m, how, "pul") if how == "pulley" else (m, how))
    ropes.append(rigs.rope(f"r{len(ropes)}", [a, *middle, b], pretension_N=draw(st.floats(20.0, 500.0))))
    forces = [rigs.force(pid, draw(st.floats(100.0, 2000.0)), 270.0 + draw(st.floats(-50.0, 50.0))) for pid in ids_f]
    motion = draw(st.sampled_from(["haul", "lower", "hold"]))
    return rigs.make_rig(anchors + frees, ropes, forces, hardware=hw, motion=motion, ea=draw(st.sampled_from([2e4, 1e5, 1e6])))


def solved(rig):
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    return res


def same_tensions(a, b, fmax: float) -> None:
    ta = {(s.rope, s.index): s.tension_N for s in a.segments}
    tb = {(s.rope, s.index): s.tension_N for s in b.segments}
    assert ta.keys() == tb.keys()
    for k in ta:
        assert tb[k] == pytest.approx(ta[k], rel=1e-6, abs=1e-8 * fmax), f"segment {k}"


# --- equilibrium ---------------------------------------------------------------------------


# A contact force between passes must be named: solver 30892e4 returned "ok" with no warning
# while the reported tensions left a point 2.5 N of 100 N out of balance (a hidden contact
# push at its 5 cm default spacing); b3538ae names it in a "two-blocked" warning.
@PROP
@given(rig=random_rigs())
def test_every_free_point_balances_to_1e_9_of_the_largest_force(rig):
    res = solved(rig)
    fmax = rigs.largest_force(rig, res)
    blocked = [w for w in res.warnings if w.code == "two-blocked"]
    for pid, r in rigs.free_point_residuals(rig, res).items():
        if any(w.subject == pid or f'"{pid}"' in w.message for w in blocked):
            continue  # a named two-blocked pass: the hardware, not a rope, takes the difference
        assert float(np.linalg.norm(r)) <= 1e-9 * fmax, f"{pid}: imbalance {np.linalg.norm(r)} N, largest force {fmax} N"
    assert all(s.tension_N >= 0.0 for s in res.segments), "ropes only pull"
    assert res.residual_N <= 1e-7 * fmax


@PROP
@given(rig=random_rigs())
def test_warm_start_from_the_answer_returns_the_same_answer(rig):
    res = solved(rig)
    again = solve(rig, start=rigs.start_from(res))
    assert again.status == "ok", rigs.describe(again)
    for pid in res.points:
        np.testing.assert_allclose(again.points[pid], res.points[pid], atol=1e-7 * BOX)
    same_tensions(res, again, rigs.largest_force(rig, res))


# DISCREPANCY (reported to the lead; solver/equilibrium.py at b3538ae): a warm start from
# the solver's own answer turns "ok" into "mechanism" when a pulley has friction.
def test_warm_start_from_the_answer_with_a_90pct_pulley_stays_ok():
    # Found by the property above.  Anchors A0 (0, 15), A1 (1, 14), A2 (0, 17), A3 (5, 14);
    # free P0 (1, 1), P1 (0, 0); r0 A0-P0, r1 A0-P1 hand-tight; r2 A3 -> pulley(η 0.9) at P0
    # -> P1 (tied) -> A0, pretension 20 N; EA 1e6 N; 100 N at 270° on P0, 280° on P1; haul.
    # Cold: "ok".  Warm from the cold answer: "mechanism", P1 "can move east–west", although
    # P1 hangs on three taut pieces (lateral stiffness ≈ ΣT/l ≈ 11 N/m).  η = 1 or hold: ok.
    pts = [rigs.anchor("A0", 0, 15), rigs.anchor("A1", 1, 14), rigs.anchor("A2", 0, 17), rigs.anchor("A3", 5, 14),
           rigs.free("P0", 1, 1), rigs.free("P1", 0, 0)]
    ropes = [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", "P1"]),
             rigs.rope("r2", ["A3", ("P0", "pulley", "pul"), "P1", "A0"], pretension_N=20.0)]
    rig = rigs.make_rig(pts, ropes, [rigs.force("P0", 100, 270), rigs.force("P1", 100, 280)],
                        hardware=[rigs.pulley("pul", 0.9)], motion="haul", ea=1e6)
    cold = solved(rig)
    warm = solve(rig, start=rigs.start_from(cold))
    assert warm.status == "ok", rigs.describe(warm)
    for pid in cold.points:
        np.testing.assert_allclose(warm.points[pid], cold.points[pid], atol=1e-7 * BOX)


# DISCREPANCY (reported to the lead; solver/equilibrium.py at b3538ae): a frictionless ring
# that slides down its rope into a knot is reported "diverged" instead of two-blocked.
def test_ring_sliding_into_a_knot_is_named_two_blocked_and_the_rest_still_solves():
    # Found by the properties above.  Anchors A0 (5, 15), A1 (2, 14), A2 (0, 16); free P0 (0, 4),
    # P1 (0, 2), P2 (7, 1), P3 (6, 0), each pulled 100 N at 270°; r0 A0-P0, r1 A0-P1, r2 A2-P2,
    # r3 A2-P3 hand-tight; r4 A0 -> P2 (sliding) -> P3 (tied) -> A1, pretension 20 N; EA 2e4 N.
    # An independent Nelder-Mead + BFGS minimisation of the potential energy (the reference
    # of tests/checks/test_solver_energy_reference.py) puts P2 on P3 (3e-13 m apart): the
    # ring slides into the knot, so the answer is a two-blocked state.  The solver gives
    # "diverged" after 200 iterations (148 N imbalance "at P3") and leaves P0 at x = 4.40,
    # though P0 hangs from A0 alone and must sit plumb under it at x = 5.
    pts = [rigs.anchor("A0", 5, 15), rigs.anchor("A1", 2, 14), rigs.anchor("A2", 0, 16),
           rigs.free("P0", 0, 4), rigs.free("P1", 0, 2), rigs.free("P2", 7, 1), rigs.free("P3", 6, 0)]
    ropes = [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["A2", "P2"]),
             rigs.rope("r3", ["A2", "P3"]), rigs.rope("r4", ["A0", ("P2", "sliding"), "P3", "A1"], pretension_N=20.0)]
    ea = 2e4
    rig = rigs.make_rig(pts, ropes, [rigs.force(p, 100.0, 270.0) for p in ("P0", "P1", "P2", "P3")], motion="hold", ea=ea)
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    assert any(w.code == "two-blocked" and ({w.subject} | {"P2", "P3"}) == {"P2", "P3"} for w in res.warnings), res.warnings
    # a point on one hand-tight rope hangs plumb under its anchor, stretched by W/EA (Hooke)
    for pid, (x, y) in (("P0", (0, 4)), ("P1", (0, 2))):
        l0 = math.hypot(5 - x, 15 - y)
        np.testing.assert_allclose(rigs.xy(res, pid), [5.0, 15.0 - l0 * (1 + 100.0 / ea)], atol=1e-7 * BOX)


# DISCREPANCY (reported to the lead; solver/equilibrium.py at 1f2fd43, which fixed the case
# above): a second ring-into-knot rig, frictionless, still "diverged".
def test_second_ring_sliding_into_a_knot_is_named_two_blocked():
    # Found by the properties.  Anchors A0 (5.6875, 14.5), A2 (12, 16); free P0 (16, 8.5) with
    # 178 N and P1 (17.5, 5.6473) with 100 N, both at 270°; r0 A0-P0, r1 A0-P1 hand-tight;
    # r2 A0 -> P1 (tied) -> P0 (sliding) -> A2, pretension 20 N; EA 1e5 N.  An independent
    # Nelder-Mead minimisation of the potential energy puts P0 on P1 (9e-16 m apart, at
    # (11.795, 4.249)): two-blocked.  Solver: "diverged" after 145 iterations, 573 N at P1.
    pts = [rigs.anchor("A0", 5.6875, 14.5), rigs.anchor("A2", 12.0, 16.0),
           rigs.free("P0", 16.0, 8.5), rigs.free("P1", 17.5, 5.647296625711277)]
    ropes = [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", "P1"]),
             rigs.rope("r2", ["A0", "P1", ("P0", "sliding"), "A2"], pretension_N=20.0)]
    rig = rigs.make_rig(pts, ropes, [rigs.force("P0", 178.0, 270.0), rigs.force("P1", 100.0, 270.0)], motion="hold", ea=1e5)
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    assert any(w.code == "two-blocked" and ({w.subject} | {"P0", "P1"}) == {"P0", "P1"} for w in res.warnings), res.warnings
    # the pair sits where the energy minimum puts it, within the hardware spacing
    for pid in ("P0", "P1"):
        assert float(np.linalg.norm(rigs.xy(res, pid) - [11.79487, 4.24944])) < 0.06


# DISCREPANCY (reported to the lead; solver/equilibrium.py at 9d6a14c): one point hanging
# on a tied rope and on a pulley with η = 0.6 (haul) is reported "diverged" though the
# frictional equilibrium exists (found by the translation property, then minimised).
def test_point_hanging_on_a_60pct_pulley_solves_to_the_frictional_equilibrium():
    # P0 (0, 0) with 100 N at 270°; r0 A0 (5, 14) - P0 hand-tight; r1 A0 -> pulley(η 0.6) at P0
    # -> A1 (0, 14), pretension 20 N; EA 1e6 N; haul, so r1's second piece carries t/η
    # (rig-format.md).  Reference: scipy least_squares on the force balance of P0 and the
    # run's length equation Σ l_k/(1 + T_k/EA) = L0 (3 equations, x, y, t); it finds
    # P0 = (1.85695, -0.20120), t = 38.04 N.  Solver: "diverged" after 216 iterations,
    # 3.18 N imbalance at P0 (2.10, -0.21); with η = 1 or in hold it is "ok".
    from scipy.optimize import least_squares

    ea, eta = 1e6, 0.6
    a0, a1, p0, w = np.array([5.0, 14.0]), np.array([0.0, 14.0]), np.array([0.0, 0.0]), np.array([0.0, -100.0])
    l00 = float(np.linalg.norm(a0 - p0))
    l01 = (float(np.linalg.norm(a0 - p0)) + float(np.linalg.norm(a1 - p0))) / (1 + 20.0 / ea)

    def eqs(z):
        p, t = z[:2], z[2]
        d0, d1 = a0 - p, a1 - p
        n0, n1 = float(np.linalg.norm(d0)), float(np.linalg.norm(d1))
        t0 = max(ea * (n0 / l00 - 1.0), 0.0)
        f = (t0 + t) * d0 / n0 + (t / eta) * d1 / n1 + w
        return [f[0], f[1], ea * (n0 / (1 + t / ea) + n1 / (1 + t / (eta * ea)) - l01)]

    ref = least_squares(eqs, [1.0, 0.0, 50.0], xtol=1e-15, ftol=1e-15, gtol=1e-15)
    assert max(abs(v) for v in eqs(ref.x)) < 1e-6
    pts = [rigs.anchor("A0", *a0), rigs.anchor("A1", *a1), rigs.free("P0", *p0)]
    ropes = [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", ("P0", "pulley", "pul"), "A1"], pretension_N=20.0)]
    rig = rigs.make_rig(pts, ropes, [rigs.force("P0", 100.0, 270.0)], hardware=[rigs.pulley("pul", eta)], motion="haul", ea=ea)
    res = solved(rig)
    np.testing.assert_allclose(rigs.xy(res, "P0"), ref.x[:2], atol=1e-7 * BOX)
    assert rigs.tension(res, "r1", 0) == pytest.approx(ref.x[2], rel=1e-6)
    assert rigs.tension(res, "r1", 1) == pytest.approx(ref.x[2] / eta, rel=1e-6)


# --- invariance ------------------------------------------------------------------------------


@PROP
@given(rig=random_rigs(), dx=st.floats(-500.0, 500.0), dy=st.floats(-500.0, 500.0))
def test_translating_the_rig_translates_the_answer(rig, dx, dy):
    a = solved(rig)
    b = solved(rigs.transformed(rig, shift=(dx, dy)))
    for pid in a.points:
        np.testing.assert_allclose(b.points[pid], np.asarray(a.points[pid]) + [dx, dy], atol=1e-7 * (BOX + 500.0))
    same_tensions(a, b, rigs.largest_force(rig, a))


def _passes_jammed_on_a_sliding_rope():
    """A rig of the random family in which two sliding passes on one rope are pulled into each other
    and rest two-blocked at their bare spacing (found by the property below, angle 1 deg): that spacing
    was a fraction of the diagonal of the box around the part, which a turn changes, so the turned rig
    solved 4.6 um and 1e-4 of its tensions away (solver.part_span)."""
    pts = [rigs.anchor("A0", 0.0, 14.0), rigs.anchor("A1", 7.0, 14.0), rigs.anchor("A2", 0.0, 16.0),
           rigs.free("P0", 1.0, 9.0), rigs.free("P1", 3.0, 8.0), rigs.free("P2", 0.0, 0.0)]
    ropes = [rigs.rope("r0", ["A1", "P0"]), rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["A0", "P2"]),
             rigs.rope("r3", ["A0", ("P0", "sliding"), ("P1", "sliding"), "A1"], pretension_N=20.0)]
    forces = [rigs.force(pid, 100.0, 270.0) for pid in ("P0", "P1", "P2")]
    return rigs.make_rig(pts, ropes, forces, hardware=[rigs.pulley("pul", 1.0)], motion="haul", ea=2e4)


@PROP
@given(rig=random_rigs(), angle=st.floats(0.0, 360.0))
@example(rig=_passes_jammed_on_a_sliding_rope(), angle=1.0)
@example(rig=_passes_jammed_on_a_sliding_rope(), angle=45.0)
def test_rotating_the_rig_rotates_the_answer(rig, angle):
    a = solved(rig)
    b = solved(rigs.transformed(rig, angle_deg=angle))
    for pid in a.points:
        np.testing.assert_allclose(b.points[pid], rigs.map_point(a.points[pid], angle_deg=angle), atol=1e-7 * BOX)
    same_tensions(a, b, rigs.largest_force(rig, a))


# Known, not yet mended (found by the rotation property; the same numbers on the code before this
# test): two knots tied on one rope, the piece between them slack, each swinging under its own
# anchor past the other.  Drawn as is, the solve lets them pass (the slack piece folds; no contact,
# every point balanced by its ropes); turned 1 deg, the iteration brings them within the spacing
# contact first and the order direction of the slack piece (solver.pass_order) then holds them
# jammed: "ok" with a two-blocked warning, 9.3 N of contact and tensions 12 % off.  strict: it
# fails as soon as the solve no longer depends on the path, so this marker is then removed.
@pytest.mark.xfail(strict=True, reason="a slack piece's order direction holds two knots that swing past each other")
def test_two_knots_swinging_past_each_other_on_a_slack_piece_solve_alike_turned():
    pts = [rigs.anchor("A0", 2.0, 14.0), rigs.anchor("A1", 0.0, 14.0), rigs.free("P0", 15.0, 3.0),
           rigs.free("P1", 14.0, 0.0)]
    ropes = [rigs.rope("r0", ["A1", "P0"]), rigs.rope("r1", ["A0", "P1"]),
             rigs.rope("r2", ["A0", "P1", "P0", "A1"], pretension_N=21.0)]
    forces = [rigs.force("P0", 100.0, 271.0), rigs.force("P1", 100.0, 270.0)]
    rig = rigs.make_rig(pts, ropes, forces, hardware=[rigs.pulley("pul", 1.0)], motion="haul", ea=2e4)
    test_rotating_the_rig_rotates_the_answer.hypothesis.inner_test(rig, 1.0)


@PROP
@given(rig=random_rigs(), k=st.sampled_from([0.3048, 1 / 0.3048, 10.0]))
def test_scaling_lengths_scales_positions_and_keeps_tensions(rig, k):
    # lengths x k (ft <-> m, and x10, slack included) with the same forces and rope stiffness:
    # same strains, same tensions.  Hardware has an absolute size (two-blocking spacing), so
    # a rig that ends two-blocked at either scale is outside this property.
    a = solved(rig)
    b = solved(rigs.transformed(rig, scale=k))
    assume(not any(w.code == "two-blocked" for w in a.warnings + b.warnings))
    for pid in a.points:
        np.testing.assert_allclose(b.points[pid], k * np.asarray(a.points[pid]), atol=1e-7 * BOX * k)
    same_tensions(a, b, rigs.largest_force(rig, a))


@PROP
@given(rig=random_rigs())
def test_mirroring_the_rig_mirrors_the_answer(rig):
    a = solved(rig)
    b = solved(rigs.transformed(rig, mirror=True))
    for pid in a.points:
        np.testing.assert_allclose(b.points[pid], rigs.map_point(a.points[pid], mirror=True), atol=1e-7 * BOX)
    same_tensions(a, b, rigs.largest_force(rig, a))


@PROP
@given(
    ax=st.floats(3.0, 15.0), ay=st.floats(-5.0, 5.0), px=st.floats(1.0, 6.0), py=st.floats(-8.0, -1.0),
    w=st.floats(100.0, 3000.0), side=st.floats(0.0, 1500.0), ea=st.sampled_from([2e4, 1e5]),
    ring=st.booleans(),
)
def test_symmetric_rig_keeps_its_mirror_symmetry(ax, ay, px, py, w, side, ea, ring):
    # A rig symmetric about the y axis (anchors, free points, forces mirrored; a centre
    # point pulled along the axis) must solve to a symmetric answer.
    assume(math.dist((ax, ay), (px, py)) > 1.0)  # a drawn rig: no point on top of another
    pts = [rigs.anchor("AL", -ax, ay), rigs.anchor("AR", ax, ay), rigs.free("PL", -px, py), rigs.free("PR", px, py),
           rigs.free("C", 0.0, py - 2.0), rigs.anchor("TOP", 0.0, 6.0)]
    mid = ("C", "sliding") if ring else "C"
    ropes = [rigs.rope("l1", ["AL", "PL"]), rigs.rope("r1", ["AR", "PR"]), rigs.rope("l2", ["PL", "C"]),
             rigs.rope("r2", ["PR", "C"]), rigs.rope("x", ["PL", mid, "PR"], pretension_N=50.0),
             rigs.rope("t", ["TOP", "PL", "PR", "TOP"], slack_m=0.1)]
    forces = [rigs.force("C", w, 270.0), rigs.force("PL", side, 200.0), rigs.force("PR", side, -20.0)]
    rig = rigs.make_rig(pts, ropes, forces, motion="hold", ea=ea)
    res = solved(rig)
    pl, pr, c = rigs.xy(res, "PL"), rigs.xy(res, "PR"), rigs.xy(res, "C")
    np.testing.assert_allclose(pr, [-pl[0], pl[1]], atol=1e-7 * BOX)
    assert c[0] == pytest.approx(0.0, abs=1e-7 * BOX)
    fmax = rigs.largest_force(rig, res)
    for left, right in (("l1", "r1"), ("l2", "r2")):
        assert rigs.tension(res, left, 0) == pytest.approx(rigs.tension(res, right, 0), rel=1e-6, abs=1e-9 * fmax)
    assert rigs.tension(res, "t", 0) == pytest.approx(rigs.tension(res, "t", 2), rel=1e-6, abs=1e-9 * fmax)


# --- failures, named ---------------------------------------------------------------------------


def test_slack_unloaded_point_is_a_mechanism_naming_the_point():
    # solver-notes.md: an unloaded point on a slack rope is a mechanism.
    pts = [rigs.anchor("A1", 0, 0), rigs.anchor("A2", 10, 0), rigs.free("G1", 5, 0, label="loose grab"),
           rigs.free("P2", 5, 5), rigs.anchor("A3", 5, 10)]
    ropes = [rigs.rope("a", ["A1", "G1"], slack_m=0.5), rigs.rope("b", ["G1", "A2"], slack_m=0.5),
             rigs.rope("c", ["A1", "P2", "A2"]), rigs.rope("d", ["P2", "A3"])]
    rig = rigs.make_rig(pts, ropes, [rigs.force("P2", 300.0, 90.0)])
    res = solve(rig)
    assert res.status == "mechanism", rigs.describe(res)
    assert res.subject == "G1" or "loose grab" in res.message, rigs.describe(res)
    assert res.message


def test_two_to_one_hauled_with_less_than_half_the_load_cannot_hold_and_says_so():
    # A 2:1 (ideal MA 2, check-values.md) hauled with 400 N on a free load resisting 1000 N:
    # no equilibrium, the load runs away (solver-notes.md "Cannot hold").
    pts = [rigs.load("L", 0, 0, fixed=False, label="pinned raft"), rigs.anchor("A", 10, 0.2), rigs.haul("H", 10, -0.2, 400.0)]
    ropes = [rigs.rope("m", ["A", ("L", "pulley", "pul"), ("H", "hauled")])]
    rig = rigs.make_rig(pts, ropes, [rigs.force("L", 1000.0, 180.0)], hardware=[rigs.pulley("pul", 1.0)])
    res = solve(rig)
    assert res.status != "ok", rigs.describe(res)
    assert res.status in ("mechanism", "diverged"), rigs.describe(res)
    assert res.subject == "L" or "pinned raft" in res.message, rigs.describe(res)


def test_coincident_points_are_invalid_and_named():
    pts = [rigs.anchor("A1", 0, 0), rigs.free("P1", 0, 0, label="grab"), rigs.anchor("A2", 8, 0)]
    ropes = [rigs.rope("a", ["A1", "P1", "A2"])]
    rig = rigs.make_rig(pts, ropes, [rigs.force("P1", 100.0, 90.0)])
    res = solve(rig)
    assert res.status == "invalid", rigs.describe(res)
    assert res.subject in ("A1", "P1", "a") or "grab" in res.message, rigs.describe(res)
    assert res.message


def test_bad_rigs_never_raise():
    # rig-format.md / brief: solve never raises for a bad rig, it returns a named failure.
    pts = [rigs.anchor("A1", 0, 0), rigs.free("P1", 3, 0)]
    bad = [
        rigs.make_rig(pts, [rigs.rope("a", ["A1", "NOPE"])]),  # unknown point
        rigs.make_rig(pts, [rigs.rope("a", ["A1", "P1"], material="no-such-material")]),
        rigs.make_rig(pts, [rigs.rope("a", ["A1", ("P1", "pulley", "no-such-pulley"), "A1"])]),
    ]
    for rig in bad:
        res = solve(rig)
        assert res.status == "invalid", rigs.describe(res)
        assert res.message


# Found by the scaling property (solver at f6d3ce1): a pulley pass on a rope running straight
# through it (no turn) takes the full running ratio 1/eta in `haul` (rig-format.md: "crossing a
# pulley in that direction the tension rises by 1/efficiency"), so friction alone pushes P0 up
# its tied rope toward A1: in this model there is no equilibrium short of the pulley
# two-blocking at A1.  Newton's trial steps overshot into the stiff spacing contact and the
# solve stalled ("diverged", 0.05 N left) until the jam-settling continuation (a softer contact
# first, stiffened a decade at a time) let it run up and jam.
def test_straight_through_pulley_pushed_up_its_rope_by_friction_is_named_two_blocked():
    pts = [rigs.anchor("A0", 3, 14), rigs.anchor("A1", 0, 14), rigs.anchor("A2", 0, 16), rigs.anchor("A3", 0, 18),
           rigs.free("P0", 0, 4), rigs.free("P1", 0, 1)]
    ropes = [rigs.rope("r0", ["A1", "P0"]), rigs.rope("r1", ["A0", "P1"]),
             rigs.rope("r2", ["A0", "P1", ("P0", "pulley", "pul"), "A1"], pretension_N=20.0)]
    forces = [rigs.force("P0", 100.0, 270.0), rigs.force("P1", 151.0, 270.0)]
    rig = rigs.make_rig(pts, ropes, forces, hardware=[rigs.pulley("pul", 0.6)], ea=1e6)
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    blocked = [w for w in res.warnings if w.code == "two-blocked"]
    assert [w.subject for w in blocked] == ["P0"] and '"A1"' in blocked[0].message
    assert "bears under 0.001 kN against each other" in blocked[0].message  # the running rope holds it there
    # the message follows the display units (1 N = 0.22 lbf, NIST SP 811): no N or cm in an imperial rig
    from dataclasses import replace as _replace

    from solver.model import Display
    imperial = solve(_replace(rig, display=Display(length="ft", force="lbf")))
    msg = next(w.message for w in imperial.warnings if w.code == "two-blocked")
    assert "bears under 0.2 lbf" in msg and " ft apart" in msg and " cm " not in msg and " N " not in msg
    x0, y0 = res.points["P0"]
    assert math.hypot(x0, y0 - 14.0) <= 0.06  # run up its rope into A1 (jammed: centimetres apart)
    # the rope keeps running through the jammed pulley: across it the tension falls by eta (rig-format.md)
    t_in = next(s.tension_N for s in res.segments if s.rope == "r2" and s.index == 1)
    t_out = next(s.tension_N for s in res.segments if s.rope == "r2" and s.index == 2)
    assert t_in == pytest.approx(0.6 * t_out, rel=1e-9)
    # statics (Newton's first law): P1 balances on its ropes; P0 only with the push of the hardware
    fmax = rigs.largest_force(rig, res)
    assert float(np.linalg.norm(rigs.free_point_residuals(rig, res)["P1"])) <= 1e-9 * fmax
    assert all(s.tension_N >= 0.0 for s in res.segments), "ropes only pull"


# Found by the balance property with a random draw (2026-12; frictionless, so not the friction
# case above): the sliding pass at P2 hangs its 100 N on rope r5 and slides down it into the knot
# at P3.  Jammed there, the millimetres between the two passes are held apart by the spacing
# contact, far stiffer than the ropes, and Newton zig-zagged across it (diverged, 339 N left at
# P3) until the solve learnt to settle a jam through a softer contact stiffened step by step.
def _pass_jammed_into_a_knot(motion: str):
    pts = [rigs.anchor("A0", 2.5625, 14.0), rigs.anchor("A1", 0.0, 14.0), rigs.anchor("A2", 5.1875, 14.921875),
           rigs.free("P0", 0.0, 7.0), rigs.free("P1", 19.61328125, 5.898090272322268), rigs.free("P2", 1.3125, 3.0),
           rigs.free("P3", 0.0, 0.0)]
    ropes = [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["P1", "P2"]),
             rigs.rope("r3", ["P0", "P3"]), rigs.rope("r4", ["A0", "P3"]),
             rigs.rope("r5", ["A2", "P3", ("P2", "sliding"), "A1"], pretension_N=365.0)]
    forces = [rigs.force(p, 100.0, 270.0) for p in ("P0", "P1", "P2")] + [rigs.force("P3", 100.0, 257.75)]
    return rigs.make_rig(pts, ropes, forces, motion=motion, ea=2e4)


@pytest.mark.parametrize("motion", ["hold", "haul"])
def test_a_pass_jammed_into_a_knot_is_settled_and_named_two_blocked(motion):
    rig = _pass_jammed_into_a_knot(motion)
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    blocked = [w for w in res.warnings if w.code == "two-blocked"]
    assert [w.subject for w in blocked] == ["P2"] and '"P3"' in blocked[0].message
    (x2, y2), (x3, y3) = res.points["P2"], res.points["P3"]
    assert math.hypot(x2 - x3, y2 - y3) <= 0.01  # jammed: millimetres apart
    # statics of free bodies (Newton's first and third laws): every other free point balances on its
    # own; the jammed pair balances as one body, the push between its two passes being internal
    fmax = rigs.largest_force(rig, res)
    residuals = rigs.free_point_residuals(rig, res)
    for pid in ("P0", "P1"):
        assert float(np.linalg.norm(residuals[pid])) <= 1e-9 * fmax
    assert float(np.linalg.norm(np.add(residuals["P2"], residuals["P3"]))) <= 1e-9 * fmax
    assert all(s.tension_N >= 0.0 for s in res.segments), "ropes only pull"


# Found by the warm-start property with a random draw (2026-12): lowering through the pulley at P1
# (eta 0.6), the rope on the A0 side is tighter by 1/eta (rig-format.md), and once that difference
# outweighs what r1 and the load hold, friction draws the pulley up its rope all the way to the knot
# at A0: no equilibrium on the way (the pull along the rope never drops), so Newton stalled near
# the drawn place (diverged, 61 N left at P1) until a stalled friction solve learnt to start over
# with the pass placed against the neighbour it is pulled toward.
def _pulley_drawn_up_to_its_anchor(eta: float):
    pts = [rigs.anchor("A0", 6.5, 17.0), rigs.anchor("A2", 0.0, 14.0),
           rigs.free("P1", 0.0, 2.0), rigs.free("P2", 0.0, 0.0)]
    ropes = [rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["A0", "P2"]),
             rigs.rope("r3", ["A0", ("P1", "pulley", "pul"), "P2", "A2"], pretension_N=20.0)]
    forces = [rigs.force("P1", 100.0, 270.0), rigs.force("P2", 879.0, 249.0)]
    return rigs.make_rig(pts, ropes, forces, hardware=[rigs.pulley("pul", eta)], motion="lower", ea=2e4)


@pytest.mark.parametrize("eta", [0.7, 0.6, 0.5])
def test_a_pulley_friction_draws_up_its_rope_runs_into_the_anchor_and_is_named_two_blocked(eta):
    rig = _pulley_drawn_up_to_its_anchor(eta)
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    blocked = [w for w in res.warnings if w.code == "two-blocked"]
    assert [w.subject for w in blocked] == ["P1"] and '"A0"' in blocked[0].message
    p1 = np.array(res.points["P1"])
    to_anchor = np.array([6.5, 17.0]) - p1
    assert float(np.linalg.norm(to_anchor)) <= 0.06  # run up its rope into A0 (centimetres apart)
    # the rope keeps running through the jammed pulley: lowering, the tension falls by eta across
    # it from the A0 side (rig-format.md)
    assert rigs.tension(res, "r3", 1) == pytest.approx(eta * rigs.tension(res, "r3", 0), rel=1e-9)
    # statics (Newton's first and third laws): P2 balances on its ropes; on P1 the ropes and the
    # load leave exactly the push the anchor's knot takes, a force pressing P1 toward A0
    fmax = rigs.largest_force(rig, res)
    residuals = rigs.free_point_residuals(rig, res)
    assert float(np.linalg.norm(residuals["P2"])) <= 1e-9 * fmax
    push = np.asarray(residuals["P1"], dtype=float)
    assert float(np.linalg.norm(push)) > 1.0  # the knot bears a real force
    cos = float(push @ to_anchor) / (float(np.linalg.norm(push)) * float(np.linalg.norm(to_anchor)))
    assert cos == pytest.approx(1.0, abs=1e-6)  # along the jammed piece, into the knot ...
    assert rigs.tension(res, "r1", 0) == 0.0  # ... with r1 gone slack below the climbing pulley


# Found by the same property next (2026-12): a pulley drawn up its rope that finds a balance on the
# way, 2.4 m short of the knot, where the kinked rope's pull offsets friction and load.  From
# the drawn place Newton stalled (diverged, 2.5 N left at P1); from the stop it comes back to it.
def test_a_pulley_friction_draws_partway_up_its_rope_balances_where_the_kink_holds_it():
    pts = [rigs.anchor("A0", 6.5, 17.25), rigs.anchor("A1", 0.0, 14.0),
           rigs.free("P1", 0.0, 5.0), rigs.free("P2", 0.0, 0.0)]
    ropes = [rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["A0", "P2"]),
             rigs.rope("r3", ["A0", ("P1", "pulley", "pul"), "P2", "A1"], pretension_N=20.0)]
    forces = [rigs.force("P1", 100.0, 270.0), rigs.force("P2", 860.0, 249.0)]
    rig = rigs.make_rig(pts, ropes, forces, hardware=[rigs.pulley("pul", 0.6)], motion="lower", ea=2e4)
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    assert not [w for w in res.warnings if w.code == "two-blocked"]
    # statics (Newton's first law) on both free points, and the running ratio eta (rig-format.md)
    fmax = rigs.largest_force(rig, res)
    for pid, r in rigs.free_point_residuals(rig, res).items():
        assert float(np.linalg.norm(r)) <= 1e-9 * fmax, pid
    assert rigs.tension(res, "r3", 1) == pytest.approx(0.6 * rigs.tension(res, "r3", 0), rel=1e-9)
    assert rigs.tension(res, "r1", 0) == 0.0  # the pulley has climbed above the reach of r1
    assert float(np.linalg.norm(rigs.xy(res, "P1") - [6.5, 17.25])) > 1.0  # short of the knot


def test_a_pulley_friction_cannot_draw_up_stays_where_its_ropes_hold_it():
    # the same rig with a better pulley: r1 still takes part of the load and nothing jams (the
    # other side of the case above; hand statics, the ratio eta across the running pulley)
    res = solve(_pulley_drawn_up_to_its_anchor(0.9))
    assert res.status == "ok", rigs.describe(res)
    assert not [w for w in res.warnings if w.code == "two-blocked"]
    assert rigs.tension(res, "r1", 0) > 0.0
    assert rigs.tension(res, "r3", 1) == pytest.approx(0.9 * rigs.tension(res, "r3", 0), rel=1e-9)


def test_a_solve_that_stops_at_a_jammed_pass_names_it():
    # Were the jam not settled, the failure must say where the pass jams, not send the rigger
    # looking for an unheld part: the Result of the solved state, reported as not converged.
    from solver.assembly import contact_stiffness, evaluate
    from solver.equilibrium import _build_result, _compiled, _Solved, _start_x

    rig = _pass_jammed_into_a_knot("hold")
    res = solve(rig)
    s = _compiled(rig, "hold")
    state = evaluate(s, _start_x(s, res.points), None, contact_stiffness(s))
    failed = _build_result(s, _Solved(state, state, 7, False, None, s.ones), "hold")
    assert failed.status == "diverged"
    assert 'on rope "r5" the pass at "P2" runs into "P3" (two-blocked)' in failed.message
    assert "nothing holds" not in failed.message
