"""Wet pieces of runs through pulleys: the bowed rope that slides, against outside sources.

Sources: rope drag per metre 1/2 rho C_d d v_n^2, C_d 1.2 for a circular cylinder at Re 1e4-1e5 and the
cross-flow principle (S. F. Hoerner, Fluid-Dynamic Drag, 1965, ch. 3); a string under a uniform normal
load q: sag q s^2 / (8 T), end reactions normal to the chord q s / 2 (Irvine, Cable Structures, ch. 1,
small-sag approximation); a frictionless pulley passes the tension unchanged (statics); and the bowed run
against scipy.optimize.minimize of the run's elastic energy with the drag as a dead load.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import minimize

from solver.equilibrium import solve
from solver.model import Feature, Flow, Force, Hardware, Material, Pass, Point, Rig, Rigging, Rope, Settings, Site

RHO = 1000.0  # fresh water, kg/m^3 (check-values.md)
CD_ROPE = 1.2  # Hoerner 1965, ch. 3: circular cylinder, Re 1e4-1e5
D = 0.011  # rope diameter, m
#: A pulley (demo data); every test holds (motion "hold": frictionless passes), so its efficiency does not act.
PULLEY = Hardware(id="pul", kind="pulley", efficiency=0.9, mbs_N=36000.0, size_m=0.1)


def river(speed=2.0, bearing=90.0, box=(-60.0, -16.0, 60.0, 16.0)) -> Site:
    x0, y0, x1, y1 = box
    return Site(features=(Feature(id="main", kind="water", polygon=((x0, y0), (x1, y0), (x1, y1), (x0, y1)),
                                  flow=Flow(speed, bearing)),))


def rope_mat(ea=1.0e9) -> Material:
    """A linear rope T = EA * strain, 11 mm."""
    return Material(id="r", kind="rope", mbs_N=1e12, stretch=((ea * 0.01, 0.01),), diameter_m=D)


def q_normal(a, b, speed=2.0, bearing=90.0) -> float:
    """Drag per metre (N/m) on a straight rope a->b across a uniform current: 1/2 rho C_d d v_n^2 (Hoerner)."""
    v = speed * np.array([math.sin(math.radians(bearing)), math.cos(math.radians(bearing))])
    t = np.subtract(b, a) / np.linalg.norm(np.subtract(b, a))
    vn = v - (v @ t) * t
    return 0.5 * RHO * CD_ROPE * D * float(vn @ vn)


def redirect(haul_N=10000.0, ea=1.0e9) -> Rig:
    """A line tied on the north bank, across water flowing east to a bank pulley, then along the bank to a
    haul team (that leg lies along the flow: no drag on it)."""
    return Rig(points=(Point("A", "anchor", 0, 15), Point("P", "anchor", 0, -15), Point("H", "haul", 20, -15,
                                                                                          force_N=haul_N)),
               ropes=(Rope("R", "r", (Pass("A"), Pass("P", "pulley", "pul"), Pass("H", "hauled"))),),
               materials=(rope_mat(ea),), hardware=(PULLEY,), site=river(), settings=Settings(motion="hold"))


def two_to_one(load_N=10000.0, ea=1.0e9, load_y=-15.0) -> Rig:
    """A 2:1 across the current: both strands from the north bank to a pulley on a free load in the water."""
    return Rig(points=(Point("A", "anchor", -1, 15), Point("B", "anchor", 1, 15),
                       Point("L", "load", 0, load_y, fixed=False)),
               ropes=(Rope("R", "r", (Pass("A"), Pass("L", "pulley", "pul"), Pass("B")),
                           rigged=Rigging(pretension_N=load_N / 2)),),
               forces=(Force(at="L", magnitude_N=load_N, direction_deg=-90.0),),
               materials=(rope_mat(ea),), hardware=(PULLEY,), site=river(box=(-60.0, -40.0, 60.0, 16.0)),
               settings=Settings(motion="hold"))


def normal_component(force_xy, a, b) -> float:
    t = np.subtract(b, a) / np.linalg.norm(np.subtract(b, a))
    return float(abs(force_xy[0] * -t[1] + force_xy[1] * t[0]))


def test_redirect_line_sags_like_irvine():
    # Irvine ch. 1: uniform normal load q over span s at tension T: sag q s^2 / (8 T), normal reactions q s / 2.
    # Stiff rope, frictionless (hold): T is the haul force through the pulley; sag / span ~ 1 %.
    r = solve(redirect())
    assert r.ok, r.message
    wet = next(w for w in r.water.ropes if w.index == 0)
    assert wet.bowed
    q, s, T = q_normal((0, 15), (0, -15)), 30.0, 10000.0
    assert wet.tension_in_N == pytest.approx(T, rel=1e-9)  # a frictionless pulley passes the haul force
    assert wet.sag_m == pytest.approx(q * s ** 2 / (8 * T), rel=2e-3)
    assert r.anchors["A"].fx_N == pytest.approx(q * s / 2, rel=2e-3)  # normal (east) reaction at the tie
    assert wet.drag_N == pytest.approx(q * s, rel=1e-3)
    # the drag is no longer carried to the ends of a straight piece: no such note
    assert "rope-drag-straight" not in {w.code for w in r.warnings}
    assert r.residual_N <= 1e-7 * T


def test_two_to_one_strands_sag_like_irvine():
    # both strands of a 2:1 in the current; the load swings downstream until it balances. Each strand against
    # Irvine with its solved chord (normal speed from the chord's angle) and its solved tension. A heavy pull
    # keeps the sag (0.5 % of the span) and the strands' swing off square to the flow small: the drag per metre
    # then varies along a strand only at second order, as Irvine's uniform load has it.
    r = solve(two_to_one(load_N=40000.0))
    assert r.ok, r.message
    ropes = {w.index: w for w in r.water.ropes}
    assert set(ropes) == {0, 1} and all(w.bowed for w in ropes.values())
    L = r.points["L"]
    for w, anchor in ((ropes[0], "A"), (ropes[1], "B")):
        a, b = w.polyline[0], w.polyline[-1]
        s = math.dist(a, b)
        q = q_normal(a, b)
        T = 0.5 * (w.tension_in_N + w.tension_out_N)
        assert w.sag_m == pytest.approx(q * s ** 2 / (8 * T), rel=3e-3)
        f = (r.anchors[anchor].fx_N, r.anchors[anchor].fy_N)
        assert normal_component(f, a, b) == pytest.approx(q * s / 2, rel=3e-3)
        assert w.tension_in_N == pytest.approx(w.tension_out_N, rel=1e-9)  # no tangential drag
    # one rope through a frictionless pulley: the same tension in both strands
    assert ropes[0].tension_out_N == pytest.approx(ropes[1].tension_in_N, rel=1e-9)
    assert L[0] > 0.5  # the load is pushed downstream (east)


def test_tension_is_the_same_through_every_hidden_point():
    # linear rope: the piece's mean strain times EA is the mean tension over its segments; equal to the
    # largest (reported) tension only if every segment carries the same tension (frictionless bends)
    ea = 4.0e5
    r = solve(two_to_one(load_N=3000.0, ea=ea))
    assert r.ok, r.message
    for seg in r.segments:
        assert ea * seg.strain == pytest.approx(seg.tension_N, rel=1e-8)


def test_hidden_points_follow_the_rope_as_it_slides():
    # the load drawn 5 m farther out: rope runs through the load pulley into both strands. Every hidden point
    # sits at its share of its strand's rope (equal tension: stretched shares = unstretched shares), before
    # and after, so the segments lengthened with the rope.
    near = solve(two_to_one(ea=4.0e5, load_N=3000.0))
    far = solve(two_to_one(ea=4.0e5, load_N=3000.0, load_y=-16.5), start=dict(near.points))
    assert near.ok and far.ok
    lengths = []
    for r in (near, far):
        w = r.water.ropes[0]
        seg = np.linalg.norm(np.diff(np.array(w.polyline), axis=0), axis=1)
        lengths.append(seg)
        from solver.water import _fractions

        ts = _fractions([(0.0, 1.0)], math.dist(w.polyline[0], w.polyline[-1]))
        assert seg / seg.sum() == pytest.approx(np.diff([0.0, *ts, 1.0]), abs=1e-8)
    assert len(lengths[0]) == len(lengths[1])
    assert np.all(lengths[1] > lengths[0] + 0.05)


def test_warm_solve_of_a_sliding_run_equals_a_cold_one():
    rig = two_to_one(ea=4.0e5, load_N=3000.0)
    cold = solve(rig)
    moved = rig.moved("B", 3.0, 15.0)
    a = solve(moved, start=dict(cold.points))
    b = solve(moved)
    assert a.ok and b.ok
    for wa, wb in zip(a.water.ropes, b.water.ropes):
        assert np.abs(np.array(wa.polyline) - np.array(wb.polyline)).max() < 1e-6


def test_bowed_run_through_a_pulley_matches_scipy_energy_minimisation():
    # A slack stretchy rope tied on the north bank, across an oblique current to a pulley, then on along the
    # flow (no drag there) to a tie: a deep bow. Reference: minimise the run's elastic energy (the wet piece's
    # segments each a share c_j of the wet rope L_w, the rest of the run L0 - L_w, both free: the rope slides
    # through the pulley) minus the work of the drag as a dead load at the converged nodes.
    ea, slack, bearing = 4.0e5, 1.0, 60.0
    B = (20 * math.sin(math.radians(bearing)), -15 + 20 * math.cos(math.radians(bearing)))
    rig = Rig(points=(Point("A", "anchor", 0, 15), Point("P", "anchor", 0, -15), Point("B", "anchor", *B)),
              ropes=(Rope("R", "r", (Pass("A"), Pass("P", "pulley", "pul"), Pass("B")),
                          rigged=Rigging(slack_m=slack)),),
              materials=(rope_mat(ea),), hardware=(PULLEY,), site=river(bearing=bearing),
              settings=Settings(motion="hold"))
    r = solve(rig)
    assert r.ok, r.message
    wet = next(w for w in r.water.ropes if w.index == 0)
    nodes = np.array(wet.polyline)
    assert wet.sag_m > 1.0
    from solver.water import _fractions
    from solver.water_drag import bend_normal_shares, rope_drag

    v = 2.0 * np.array([math.sin(math.radians(bearing)), math.cos(math.radians(bearing))])
    loads = bend_normal_shares(nodes, rope_drag(nodes, np.tile(v, (len(nodes) - 1, 1)), D))[1:-1]
    share = np.diff([0.0, *_fractions([(0.0, 1.0)], 30.0), 1.0])
    assert len(share) == len(nodes) - 1
    L0 = 30.0 + 20.0 + slack  # the drawn run plus its slack
    a, p, b = nodes[0], nodes[-1], np.array(B)
    rest = float(np.linalg.norm(b - p))

    def energy(z):
        x, L_w = z[:-1].reshape(-1, 2), z[-1]
        pts = np.vstack([a, x, p])
        l = np.linalg.norm(np.diff(pts, axis=0), axis=1)
        l0 = share * L_w
        e_wet = np.maximum(l / l0 - 1.0, 0.0)
        e_rest = max(rest / (L0 - L_w) - 1.0, 0.0)
        return float(np.sum(0.5 * ea * l0 * e_wet ** 2) + 0.5 * ea * (L0 - L_w) * e_rest ** 2
                     - np.sum(loads * x))

    n = len(nodes) - 1
    x0 = np.concatenate([(np.linspace(a, p, n + 1)[1:-1] + [1.0, 0.0]).ravel(), [30.5]])
    ref = minimize(energy, x0, method="BFGS", options={"gtol": 1e-10, "maxiter": 50000})
    assert np.abs(ref.x[:-1].reshape(-1, 2) - nodes[1:-1]).max() < 1e-4
    # the tension is the same on both sides of the pulley (frictionless) and of every hidden point
    seg = {(s.rope, s.index): s for s in r.segments}
    assert seg[("R", 1)].tension_N == pytest.approx(seg[("R", 0)].tension_N, rel=1e-9)
    assert ea * seg[("R", 0)].strain == pytest.approx(seg[("R", 0)].tension_N, rel=1e-8)


def test_friction_steps_the_tension_at_the_real_pulley_only():
    # hauling through a pulley of efficiency eta, the rope beyond it carries eta x the haul force (rig-format.md:
    # a pulley multiplies by its efficiency against the rope's travel); the hidden points add no friction, so
    # the whole bowed piece carries that one tension.
    eta, P = PULLEY.efficiency, 2000.0
    rig = redirect(haul_N=P, ea=4.0e5)
    r = solve(rig, motion="haul")
    assert r.ok, r.message
    wet = next(w for w in r.water.ropes if w.index == 0)
    assert wet.tension_in_N == pytest.approx(eta * P, rel=1e-9)
    assert wet.tension_out_N == pytest.approx(eta * P, rel=1e-9)
    seg = {(s.rope, s.index): s for s in r.segments}
    assert seg[("R", 1)].tension_N == pytest.approx(P, rel=1e-9)
    assert 4.0e5 * seg[("R", 0)].strain == pytest.approx(eta * P, rel=1e-8)  # every segment at eta P


def test_segment_count_is_enough_on_a_sliding_run(monkeypatch):
    # the bow of a 2:1 strand with the chosen count against four times as many segments (convergence check)
    import solver.water as water

    rig = two_to_one(ea=4.0e5, load_N=1500.0)
    coarse = solve(rig).water.ropes[0]
    monkeypatch.setattr(water, "SEGMENT_M", 0.1)
    monkeypatch.setattr(water, "MIN_SEGMENTS", 4 * len(coarse.polyline))
    monkeypatch.setattr(water, "MAX_SEGMENTS", 400)
    fine = solve(rig).water.ropes[0]
    assert len(fine.polyline) > 3 * len(coarse.polyline)
    assert (coarse.sag_m, coarse.tension_in_N, coarse.drag_N) == pytest.approx(
        (fine.sag_m, fine.tension_in_N, fine.drag_N), rel=5e-3)
