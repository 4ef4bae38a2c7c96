"""Moving water: drag on bodies and ropes, bowed ropes and tethered loads, against outside sources.

Sources: drag equation F = 1/2 rho C_d A v^2 with C_d from C. Matthews, Aeronautical Engineer's
Data Book (as the load estimate); rope drag per metre 1/2 rho C_d d v_n^2 with C_d 1.2 for a
circular cylinder at Re 1e4-1e5 and the cross-flow principle (S. F. Hoerner, Fluid-Dynamic Drag,
1965, ch. 3); a string under a uniform normal load q: sag q s^2 / (8 T), end reactions q s / 2
(Irvine, Cable Structures, ch. 1); two-tether statics solved by hand from the angles; and the bowed
rope against scipy.optimize.minimize of its elastic energy with the drag as dead load.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.optimize import minimize

from solver.equilibrium import solve
from solver.model import Feature, Flow, Material, Pass, Point, Rig, Rigging, Rope, Site

RHO = 1000.0  # fresh water, kg/m^3 (check-values.md)
CD_ROPE = 1.2  # Hoerner 1965, ch. 3: circular cylinder, Re 1e4-1e5


def river(speed=2.0, bearing=90.0, box=(-60.0, -20.0, 60.0, 20.0), more=()) -> Site:
    x0, y0, x1, y1 = box
    main = Feature(id="main", kind="water", polygon=((x0, y0), (x1, y0), (x1, y1), (x0, y1)),
                   flow=Flow(speed, bearing))
    return Site(features=(main, *more))


def rope_mat(ea=1.0e9, d=0.011, mat_id="r") -> Material:
    """A linear rope T = EA * strain with diameter d (m)."""
    return Material(id=mat_id, kind="rope", mbs_N=1e12, stretch=((ea * 0.01, 0.01),), diameter_m=d)


def test_free_body_drag_is_the_drag_equation_along_the_flow():
    # Matthews: open half-cylinder (raft broadside) C_d 2.30; F = 1/2 rho C_d A v^2
    rig = Rig(points=(Point("A", "anchor", 0, 0),
                      Point("B", "load", 5, -3, fixed=False, wetted_area_m2=1.5, drag_shape="raft-broadside")),
              ropes=(Rope("R", "r", (Pass("A"), Pass("B"))),), materials=(rope_mat(),), site=river(1.8, 120.0))
    r = solve(rig)
    assert r.ok, r.message
    body = r.water.bodies[0]
    assert body.force_N == pytest.approx(0.5 * RHO * 2.30 * 1.5 * 1.8 ** 2, rel=1e-12)
    assert (90 - body.direction_deg) % 360 == pytest.approx(120.0, abs=1e-9)  # toward bearing 120


def test_one_tether_lies_straight_downstream_of_its_anchor():
    # statics of a point on one rope: the rope lines up with the only other force (the drag)
    for bearing in (90.0, 135.0, 200.0):
        rig = Rig(points=(Point("A", "anchor", 0, 0),
                          Point("B", "point", 4, 6, wetted_area_m2=0.8, drag_shape="hull-side-on")),
                  ropes=(Rope("R", "r", (Pass("A"), Pass("B"))),), materials=(rope_mat(ea=2e5),),
                  site=river(2.5, bearing))
        r = solve(rig)
        assert r.ok, r.message
        bx, by = r.points["B"]
        assert (math.degrees(math.atan2(bx, by)) % 360) == pytest.approx(bearing, abs=1e-6)
        drag = 0.5 * RHO * 1.98 * 0.8 * 2.5 ** 2  # Matthews: long flat plate 1.98
        # a rope along the flow has no normal speed: no rope drag, tension = the body's drag
        assert r.segments[0].tension_N == pytest.approx(drag, rel=1e-8)
        assert r.anchors["A"].force_N == pytest.approx(drag, rel=1e-8)


def test_two_tethers_statics_by_hand():
    # flow south; two stiff tethers from anchors 10 m either side, boat 10 m downstream: 45° legs.
    # Ropes with no diameter carry no drag (warned), so only the boat's drag acts.
    nodia = Material(id="nd", kind="rope", mbs_N=1e12, stretch=((1e7, 0.01),))
    rig = Rig(points=(Point("A", "anchor", -10, 0), Point("C", "anchor", 10, 0),
                      Point("B", "point", 0, -10, wetted_area_m2=1.0, drag_shape="panel-square")),
              ropes=(Rope("R1", "nd", (Pass("A"), Pass("B"))), Rope("R2", "nd", (Pass("C"), Pass("B")))),
              materials=(nodia,), site=river(2.0, 180.0, box=(-30, -30, 30, -1)))
    r = solve(rig)
    assert r.ok, r.message
    F = 0.5 * RHO * 1.17 * 1.0 * 2.0 ** 2  # Matthews: square plate 1.17
    # by hand: symmetric legs at 45° to the flow: 2 T cos 45° = F
    t1, t2 = (s.tension_N for s in r.segments)
    assert t1 == pytest.approx(F / (2 * math.cos(math.radians(45))), rel=1e-4)  # stiff: angles as drawn
    # exactly, with the solved angles: T1 u1 + T2 u2 = -F
    b = np.array(r.points["B"])
    u1 = (np.array(r.points["A"]) - b) / np.linalg.norm(np.array(r.points["A"]) - b)
    u2 = (np.array(r.points["C"]) - b) / np.linalg.norm(np.array(r.points["C"]) - b)
    T = np.linalg.solve(np.column_stack([u1, u2]), np.array([0.0, F]))
    assert (t1, t2) == pytest.approx(tuple(T), rel=1e-8)
    assert any(w.code == "rope-drag-unknown" for w in r.warnings)


def across(pretension=20000.0, ea=1.0e9, span=30.0, speed=2.0, bearing=90.0, slack=None) -> Rig:
    """A rope tied between anchors on both banks (north-south), the whole span in water flowing east."""
    rigged = Rigging(pretension_N=pretension) if slack is None else Rigging(slack_m=slack)
    return Rig(points=(Point("A", "anchor", 0, -span / 2), Point("C", "anchor", 0, span / 2)),
               ropes=(Rope("R", "r", (Pass("A"), Pass("C")), rigged=rigged),), materials=(rope_mat(ea=ea),),
               site=river(speed, bearing, box=(-60, -span / 2 - 5, 60, span / 2 + 5)))


def test_tensioned_rope_across_a_current_sags_like_irvine():
    # Irvine, Cable Structures ch. 1: uniform normal load q on span s at tension T: sag q s^2/(8T),
    # reactions normal to the chord q s / 2 each; small-sag approximation (sag/s here ~ 0.3 %).
    r = solve(across())
    assert r.ok, r.message
    q = 0.5 * RHO * CD_ROPE * 0.011 * 2.0 ** 2  # Hoerner: drag per metre of an 11 mm rope
    wet = r.water.ropes[0]
    T = wet.tension_in_N
    s = 30.0
    assert wet.sag_m == pytest.approx(q * s ** 2 / (8 * T), rel=1e-3)
    for a in ("A", "C"):
        assert r.anchors[a].fx_N == pytest.approx(q * s / 2, rel=1e-3)  # normal (east) component
    assert wet.drag_N == pytest.approx(q * s, rel=1e-3)
    assert wet.tension_in_N == pytest.approx(wet.tension_out_N, rel=1e-6)  # cross-flow: no tangential drag
    assert r.residual_N <= 1e-7 * T


def test_segment_count_is_enough():
    # the sag with the chosen count against four times as many segments (a convergence check)
    import solver.water as water

    coarse = solve(across(slack=0.5, ea=4e5)).water.ropes[0]
    old = (water.SEGMENT_M, water.MIN_SEGMENTS, water.MAX_SEGMENTS)
    try:
        water.SEGMENT_M, water.MIN_SEGMENTS, water.MAX_SEGMENTS = 0.1, 4 * len(coarse.polyline), 400
        fine = solve(across(slack=0.5, ea=4e5)).water.ropes[0]
    finally:
        water.SEGMENT_M, water.MIN_SEGMENTS, water.MAX_SEGMENTS = old
    assert len(fine.polyline) > 3 * len(coarse.polyline)
    assert coarse.sag_m == pytest.approx(fine.sag_m, rel=5e-3)
    assert coarse.tension_in_N == pytest.approx(fine.tension_in_N, rel=5e-3)


def test_bowed_rope_matches_scipy_energy_minimisation():
    # An oblique current on a slack, stretchy rope: a deep bow. Reference: minimise the subdivided
    # rope's elastic energy minus the work of the drag as a dead load at the converged directions.
    ea, slack = 4.0e5, 1.0
    rig = across(slack=slack, ea=ea, bearing=60.0)
    r = solve(rig)
    assert r.ok, r.message
    wet = r.water.ropes[0]
    nodes = np.array(wet.polyline)
    assert wet.sag_m > 1.0
    from solver.water_drag import node_shares, rope_drag

    mid = 0.5 * (nodes[1:] + nodes[:-1])
    v = 2.0 * np.array([math.sin(math.radians(60)), math.cos(math.radians(60))])
    loads = node_shares(rope_drag(nodes, np.tile(v, (len(mid), 1)), 0.011))[1:-1]
    n = len(nodes) - 1
    L0 = (30.0 + slack) / n  # each hidden segment keeps its share of the unstretched length
    a, c = nodes[0], nodes[-1]

    def energy(x):
        pts = np.vstack([a, x.reshape(-1, 2), c])
        l = np.linalg.norm(np.diff(pts, axis=0), axis=1)
        eps = np.maximum(l / L0 - 1.0, 0.0)
        return float(np.sum(0.5 * ea * L0 * eps ** 2) - np.sum(loads * x.reshape(-1, 2)))

    x0 = np.linspace(a, c, n + 1)[1:-1].ravel() + np.tile([1.0, 0.0], n - 1)
    ref = minimize(energy, x0, method="BFGS", options={"gtol": 1e-9, "maxiter": 20000})
    assert np.abs(ref.x.reshape(-1, 2) - nodes[1:-1]).max() < 1e-4


def test_eddy_drawn_on_top_wins():
    eddy = Feature(id="eddy", kind="water", polygon=((5, -5), (15, -5), (15, 5), (5, 5)), flow=Flow(0.5, 270.0))
    rig = Rig(points=(Point("A", "anchor", 0, 0),), site=river(2.0, 90.0, more=(eddy,)))
    from solver.water_site import build_field, flow_field

    ff = flow_field(rig)
    v = ff.velocity_at(np.array([[10.0, 0.0], [-10.0, 0.0], [0.0, 50.0]]))
    assert v[0] == pytest.approx([-0.5, 0.0], abs=1e-12)
    assert v[1] == pytest.approx([2.0, 0.0], abs=1e-12)
    assert v[2] == pytest.approx([0.0, 0.0])
    # the kept field equals a fresh build
    fresh = build_field(tuple((f.id, f.polygon, f.flow) for f in rig.site.features))
    assert fresh.ids == ff.ids and np.array_equal(fresh.velocities, ff.velocities)
    assert all(p.equals(q) for p, q in zip(fresh.polygons, ff.polygons))
    # reversed drawing order: the main current covers the eddy
    under = replace(rig, site=Site(features=(eddy, rig.site.features[0])))
    assert flow_field(under).velocity_at(np.array([[10.0, 0.0]]))[0] == pytest.approx([2.0, 0.0])


def test_warm_drag_step_equals_a_cold_solve():
    # the kept bow only starts a warm solve; the answer is the cold one to the tolerance
    rig = across(slack=0.5, ea=4e5)
    cold = solve(rig)
    warm = solve(rig, start=dict(cold.points))
    moved = rig.moved("C", 1.0, 15.0)
    a = solve(moved, start=dict(warm.points))
    b = solve(moved)
    assert a.ok and b.ok
    assert np.abs(np.array(a.water.ropes[0].polyline) - np.array(b.water.ropes[0].polyline)).max() < 1e-6


def test_warnings_for_a_tethered_body_and_a_bowed_rope():
    # a swimmer-sized body tied to the middle of a rope across 2.5 m/s water: the rope's drag dwarfs the body's
    from solver.analysis import analyse
    from solver.water_warnings import BOW_SHARE, TETHER_RATIO

    rig = Rig(points=(Point("A", "anchor", 0, 15), Point("C", "anchor", 0, -15),
                      Point("B", "point", 0, 0, label="swimmer", wetted_area_m2=0.1, drag_shape="panel-square")),
              ropes=(Rope("R", "r", (Pass("A"), Pass("B"), Pass("C")), rigged=Rigging(slack_m=0.5)),),
              materials=(rope_mat(ea=4e5),), site=river(2.5, 90.0, box=(-60, -14, 60, 14)))
    r = analyse(rig)
    assert r.ok, r.message
    codes = {w.code: w for w in r.warnings}
    wet = r.water.ropes[0]
    body = r.water.bodies[0]
    assert wet.tension_out_N > TETHER_RATIO * body.force_N  # the premise, from the solve
    assert codes["rope-in-current"].severity == "danger" and "person" in codes["rope-in-current"].message
    assert (wet.drag_N > BOW_SHARE * wet.tension_in_N) == ("rope-bowed" in codes)
    # no current: no water warnings
    dry = analyse(replace(rig, site=Site()))
    assert not {"rope-in-current", "rope-bowed"} & {w.code for w in dry.warnings}


def test_elevation_view_has_no_current():
    # the side view is untouched: a current drawn on the site pushes nothing there
    rig = replace(across(), view="elevation")
    r = solve(rig)
    assert r.water is None
    dry = solve(replace(rig, site=Site()))
    assert r.segments == dry.segments


def test_unstretched_lengths_given_solve_in_still_water_and_say_so():
    # the stroke-by-stroke haul sets ropes' unstretched lengths; that path has no current yet: it must say so
    rig = across(slack=0.5, ea=4e5)
    r = solve(rig, unstretched_m={"R": 30.2})
    assert r.ok and r.water is None
    assert any(w.code == "water-left-out" for w in r.warnings)
    still = solve(replace(rig, site=Site()), unstretched_m={"R": 30.2})
    assert r.segments == still.segments
