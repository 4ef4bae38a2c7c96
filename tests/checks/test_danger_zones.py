"""Danger-zone geometry and the two-leg anchor angle rule, held to formulas and published values.

Zones are built from hand-made Results (no solver involved) and compared with
closed forms computed here and with shapely's own geometry.
"""

from __future__ import annotations

import math

import pytest
from scipy.integrate import quad
from shapely.geometry import LineString, Point as ShPoint, Polygon

from solver.checks import leg_force_factor, run_checks, two_leg_anchors
from solver.danger import (
    QUAD_SEGS,
    RECOIL_MAX_M,
    RECOIL_MIN_M,
    bight_triangle,
    bight_zone,
    danger_zones,
    recoil_band,
    recoil_bands,
    recoil_half_width_m,
    stored_energy_J,
)
from solver.model import Material, Pass, Point, Rig, Rope
from solver.result import Result, SegmentResult

MAT = Material(id="r", kind="rope", mbs_N=1e9, stretch=((1000.0, 0.01),))


def _result(rig: Rig, tensions: dict[tuple[str, int], float], strain: float = 0.0) -> Result:
    """An ok Result at the drawn geometry with the given piece tensions (N)."""
    pos = {p.id: (p.x, p.y) for p in rig.points}
    segs = []
    for rope in rig.ropes:
        for i in range(len(rope.path) - 1):
            a, b = rope.path[i].at, rope.path[i + 1].at
            t = tensions.get((rope.id, i), 0.0)
            segs.append(SegmentResult(rope.id, i, a, b, t, math.dist(pos[a], pos[b]), strain, 0.0))
    return Result(status="ok", points=pos, segments=tuple(segs))


# --- bight --------------------------------------------------------------------------------


def test_bight_triangle_is_the_triangle_between_the_legs():
    tri = bight_triangle((0.0, 0.0), (8.0, 0.0), (0.0, 6.0), reach_m=100.0)
    # shoelace area of the right triangle (0,0), (8,0), (0,6) = 8 * 6 / 2 = 24
    assert tri.area == pytest.approx(24.0)
    assert tri.equals(Polygon([(0, 0), (8, 0), (0, 6)]))


def test_bight_triangle_legs_are_cut_at_the_reach():
    # legs 20 m long at 60 deg; cut at 15 m: area = 1/2 * 15^2 * sin 60 (triangle area, two sides and the angle)
    a = (20.0, 0.0)
    b = (20.0 * math.cos(math.radians(60)), 20.0 * math.sin(math.radians(60)))
    tri = bight_triangle((0.0, 0.0), a, b, reach_m=15.0)
    assert tri.area == pytest.approx(0.5 * 15.0**2 * math.sin(math.radians(60)))


def test_bight_zone_is_triangle_plus_flight_strip_along_the_bisector():
    # 90 deg turn, legs 8 m and 6 m: triangle (0,0),(8,0),(0,6) and a strip of half-width w
    # along the bisector (direction 45 deg) for the shorter leg, 6 m
    w = 0.7
    zone = bight_zone((0.0, 0.0), (8.0, 0.0), (0.0, 6.0), reach_m=100.0, margin_m=w)
    tri = Polygon([(0, 0), (8, 0), (0, 6)])
    tip = (6 / math.sqrt(2), 6 / math.sqrt(2))
    assert zone.contains(Polygon([(0.01, 0.01), (7.9, 0.01), (0.01, 5.9)]))
    assert zone.contains(ShPoint(tip[0] + 0.6 * w / math.sqrt(2), tip[1] + 0.6 * w / math.sqrt(2)))  # beyond the chord
    # outside the legs (the far side of a leg) is not in the bight
    assert not zone.contains(ShPoint(4.0, -0.3)) and not zone.contains(ShPoint(-0.3, 3.0))
    # area: triangle + strip - overlap; the strip is a stadium 2wL + pi w^2 (polygonised ends)
    n = 4 * QUAD_SEGS
    strip = 2 * w * 6.0 + 0.5 * n * w * w * math.sin(2 * math.pi / n)
    overlap = tri.intersection(LineString([(0, 0), tip]).buffer(w)).area
    assert zone.area == pytest.approx(tri.area + strip - overlap, rel=1e-9)


def test_doubled_back_rope_still_has_a_bight_strip():
    # 180 deg turn (3:1 pulley): the triangle is a segment; the zone is the flight strip,
    # a stadium of half-width w and length 10 m: 2wL + (polygonised) pi w^2
    zone = bight_zone((0.0, 0.0), (0.0, 10.0), (0.0, 10.0), reach_m=100.0, margin_m=0.5)
    n = 4 * QUAD_SEGS  # round ends as a regular n-gon: area 1/2 n w^2 sin(2 pi / n)
    assert zone.area == pytest.approx(2 * 0.5 * 10.0 + 0.5 * n * 0.25 * math.sin(2 * math.pi / n))


# --- recoil band --------------------------------------------------------------------------


def test_recoil_band_area_is_2wL_plus_pi_w_squared():
    w, a, b = 1.3, (1.0, 2.0), (9.0, 8.0)
    length = math.dist(a, b)
    band = recoil_band(a, b, w)
    # exact for the polygon: round ends form a regular n-gon of circumradius w
    n = 4 * QUAD_SEGS
    assert band.area == pytest.approx(2 * w * length + 0.5 * n * w * w * math.sin(2 * math.pi / n), rel=1e-12)
    # and the ideal stadium area 2wL + pi w^2 to 0.2 %
    assert band.area == pytest.approx(2 * w * length + math.pi * w * w, rel=2e-3)
    # same as shapely's own buffer of the segment
    assert band.symmetric_difference(LineString([a, b]).buffer(w)).area < 1e-9


def test_recoil_bands_made_together_equal_bands_made_one_by_one():
    pieces = [((1.0, 2.0), (9.0, 8.0), 1.3), ((0.0, 0.0), (0.0, 0.0), 0.7), ((-3.0, 4.0), (5.0, -1.0), 0.5)]
    together = recoil_bands(pieces)
    assert len(together) == len(pieces)
    for (a, b, w), band in zip(pieces, together):
        alone = recoil_band(a, b, w)
        assert band.equals_exact(alone, 0.0), (a, b, w)  # the same vertices, not just the same area


def test_triangle_rule_energy_is_exact_for_a_linear_rope():
    # For T = EA*eps, stored energy = L0 * integral_0^eps T de (scipy quad) = T*delta/2, delta = L - L0
    ea, eps, length = 3.0e5, 0.015, 25.0
    l0 = length / (1 + eps)
    e_quad, _ = quad(lambda e: ea * e, 0.0, eps)
    assert stored_energy_J(ea * eps, length, eps) == pytest.approx(l0 * e_quad, rel=1e-12)


def _linear_rope_energy_J(tension_N: float, length_m: float, strain: float) -> float:
    """Elastic energy of a linear rope piece stretched to ``length_m`` at ``strain`` carrying ``tension_N``:
    L0 * integral_0^eps EA e de by quadrature (Hooke's law; check-values.md, "When something lets go")."""
    ea = tension_N / strain
    e, _ = quad(lambda x: ea * x, 0.0, strain)
    return length_m / (1.0 + strain) * e


def test_recoil_width_is_our_rule_linear_in_stored_energy_and_capped():
    # The band's width rule is the project's own choice, not a published one (solver/danger.py):
    # RECOIL_MIN_M at no load, widening in proportion to the energy stored in the piece, capped at
    # RECOIL_MAX_M.  What is checked here is that behaviour, with the energy computed independently.
    assert recoil_half_width_m(0.0, 20.0, 0.0) == RECOIL_MIN_M
    widths = [(recoil_half_width_m(t, 20.0, eps), _linear_rope_energy_J(t, 20.0, eps))
              for t, eps in ((1000.0, 0.01), (2000.0, 0.02), (2000.0, 0.04), (4000.0, 0.02))]
    growth_per_J = [(w - RECOIL_MIN_M) / e for w, e in widths]
    assert all(g > 0 for g in growth_per_J)
    assert max(growth_per_J) == pytest.approx(min(growth_per_J), rel=1e-9)  # linear in the stored energy
    assert widths[1][0] < widths[2][0] and widths[1][0] < widths[3][0]  # more stretch, more tension: wider
    assert recoil_half_width_m(3e4, 50.0, 0.1) == RECOIL_MAX_M  # 30 kN on 50 m at 10 %: far past the cap


# --- zones of a rig -------------------------------------------------------------------------


def _redirect_rig(person_at=(2.0, 2.0), haul_team=False) -> Rig:
    """Load L at (10, 0), redirect pulley at anchor A (0, 0), rope on to H at (0, 10): a 90 deg turn."""
    pts = [
        Point("L", "load", 10.0, 0.0),
        Point("A", "anchor", 0.0, 0.0, capacity_N=2e4),
        Point("H", "haul", 0.0, 10.0, force_N=500.0) if haul_team else Point("H", "anchor", 0.0, 10.0),
        Point("P", "person", *person_at, label="bank safety"),
    ]
    last = Pass("H", "hauled") if haul_team else Pass("H")
    rope = Rope("main", "r", (Pass("L"), Pass("A", "pulley"), last), label="main line")
    return Rig(points=tuple(pts), ropes=(rope,), materials=(MAT,))


def test_loaded_redirect_has_one_bight_and_a_band_per_piece():
    rig = _redirect_rig()
    zones = danger_zones(rig, _result(rig, {("main", 0): 1000.0, ("main", 1): 1000.0}, strain=0.01))
    kinds = sorted(z.kind for z in zones)
    assert kinds == ["bight", "recoil", "recoil"]
    bight = next(z for z in zones if z.kind == "bight")
    assert bight.subject == "A" and bight.severity == "danger"
    # triangle (0,0), (10,0), (0,10) with the flight strip along the 45 deg bisector
    assert bight.geometry.equals(bight_zone((0.0, 0.0), (10.0, 0.0), (0.0, 10.0)))
    assert bight.geometry.contains(Polygon([(0.1, 0.1), (9.8, 0.1), (0.1, 9.8)]))


def test_unloaded_pieces_get_no_zone():
    rig = _redirect_rig()
    assert danger_zones(rig, _result(rig, {})) == []
    zones = danger_zones(rig, _result(rig, {("main", 0): 800.0}))
    assert [z.kind for z in zones] == ["recoil"]  # one loaded piece, and no bight without both legs loaded


def test_straight_through_pass_has_no_bight():
    pts = (Point("L", "load", 0, 0), Point("A", "anchor", 5, 0.0), Point("B", "anchor", 10, 0))
    rope = Rope("r1", "r", (Pass("L"), Pass("A", "pulley"), Pass("B")))
    rig = Rig(points=pts, ropes=(rope,), materials=(MAT,))
    zones = danger_zones(rig, _result(rig, {("r1", 0): 500.0, ("r1", 1): 500.0}))
    assert [z.kind for z in zones] == ["recoil", "recoil"]


def test_failed_result_has_no_zones():
    rig = _redirect_rig()
    assert danger_zones(rig, Result(status="mechanism", message="x")) == []


def test_person_inside_the_bight_is_warned_as_danger():
    rig = _redirect_rig(person_at=(3.0, 3.0))  # inside triangle (0,0), (10,0), (0,10)
    res = _result(rig, {("main", 0): 1000.0, ("main", 1): 1000.0}, strain=0.01)
    ws = [w for w in run_checks(rig, res) if w.code == "person-in-zone"]
    assert ws and ws[0].severity == "danger" and "bank safety" in ws[0].message and ws[0].subject.startswith("P,")
    assert "bight" in ws[0].message


def test_person_outside_every_zone_is_not_warned():
    rig = _redirect_rig(person_at=(-6.0, -6.0))
    res = _result(rig, {("main", 0): 1000.0, ("main", 1): 1000.0}, strain=0.01)
    zones = danger_zones(rig, res)
    assert not any(z.geometry.covers(ShPoint(-6, -6)) for z in zones)
    assert not [w for w in run_checks(rig, res) if w.code == "person-in-zone"]


def test_person_beside_a_loaded_rope_is_in_its_recoil_band():
    rig = _redirect_rig(person_at=(6.0, -0.3))  # 0.3 m off the L-A piece, outside the bight side
    res = _result(rig, {("main", 0): 1000.0, ("main", 1): 1000.0}, strain=0.01)
    ws = [w for w in run_checks(rig, res) if w.code == "person-in-zone"]
    assert len(ws) == 1 and ws[0].severity == "warning" and "recoil" in ws[0].message


def test_haul_team_is_not_warned_about_the_rope_it_holds_but_is_about_others():
    rig = _redirect_rig(person_at=(-6.0, -6.0), haul_team=True)
    res = _result(rig, {("main", 0): 1000.0, ("main", 1): 1000.0}, strain=0.01)
    assert not [w for w in run_checks(rig, res) if w.code == "person-in-zone"]
    # a second loaded rope running past the haul team: that band does count
    pts = rig.points + (Point("A2", "anchor", -5.0, 10.2), Point("A3", "anchor", 5.0, 10.2))
    other = Rope("tag", "r", (Pass("A2"), Pass("A3")), label="tag line")
    rig2 = Rig(points=pts, ropes=rig.ropes + (other,), materials=(MAT,))
    res2 = _result(rig2, {("main", 0): 1000.0, ("main", 1): 1000.0, ("tag", 0): 300.0})
    ws = [w for w in run_checks(rig2, res2) if w.code == "person-in-zone"]
    assert len(ws) == 1 and ws[0].subject == "H,tag"


# --- two-leg anchors: ASME B30.9 ---------------------------------------------------------------


def _two_leg_rig(included_deg: float) -> Rig:
    """Master point M at the origin, anchors 3 m away at +-alpha/2 from +y, both legs tied; load below."""
    h = math.radians(included_deg) / 2
    pts = (
        Point("A1", "anchor", -3 * math.sin(h), 3 * math.cos(h), capacity_N=2e4, label="willow"),
        Point("A2", "anchor", 3 * math.sin(h), 3 * math.cos(h), capacity_N=2e4, label="birch"),
        Point("M", "point", 0.0, 0.0, label="master point"),
        Point("L", "load", 0.0, -10.0),
    )
    ropes = (
        Rope("s1", "r", (Pass("A1"), Pass("M"))),
        Rope("s2", "r", (Pass("A2"), Pass("M"))),
        Rope("main", "r", (Pass("L"), Pass("M"))),
    )
    return Rig(points=pts, ropes=ropes, materials=(MAT,))


def test_two_leg_angle_is_measured_at_the_master_point():
    found = two_leg_anchors(_two_leg_rig(100.0), None)
    assert len(found) == 1
    here, a1, a2, ang = found[0]
    assert here == "M" and {a1, a2} == {"A1", "A2"} and ang == pytest.approx(100.0)


@pytest.mark.parametrize("included, warned", [(119.0, False), (121.0, True), (90.0, False), (150.0, True)])
def test_included_angle_over_120_is_warned_asme_b30_9(included, warned):
    # ASME B30.9: sling leg included angles beyond 120 deg are not recommended
    rig = _two_leg_rig(included)
    res = _result(rig, {("s1", 0): 600.0, ("s2", 0): 600.0, ("main", 0): 1000.0})
    ws = [w for w in run_checks(rig, res) if w.code == "wide-anchor"]
    assert bool(ws) is warned
    if warned:
        # each leg's share of the load: (1/2) x the ASME B30.9 load-angle factor 1/sin(beta), beta from horizontal
        share = 0.5 / math.sin(math.radians((180.0 - included) / 2.0))
        assert f"each leg carries {share:.2f} × the load" in ws[0].message
        assert ws[0].subject == "M,A1,A2"


@pytest.mark.parametrize("beta_deg, asme_factor", [(60.0, 1.155), (45.0, 1.414), (30.0, 2.000)])
def test_leg_force_factor_matches_asme_load_angle_factor(beta_deg, asme_factor):
    # ASME B30.9 load angle factor 1/sin(beta), beta the leg's angle from horizontal;
    # leg force = (W/2) * factor, and the included angle is 180 - 2*beta
    assert 2 * leg_force_factor(180.0 - 2 * beta_deg) == pytest.approx(asme_factor, abs=5e-4)


def test_leg_force_factor_is_one_at_120_degrees():
    # redirect/anchor rule: at 120 deg each leg carries the full load (check-values.md, "Anchors and redirects")
    assert leg_force_factor(120.0) == pytest.approx(1.0)


def test_wide_angle_also_checked_on_a_rig_that_did_not_solve():
    rig = _two_leg_rig(140.0)
    ws = run_checks(rig, Result(status="diverged", message="no"))
    codes = [w.code for w in ws]
    assert "checks-skipped" in codes and "wide-anchor" in codes


def test_haul_team_in_the_bight_of_its_own_rope_is_warned():
    # rope doubled back round a pulley at A: the team hauls toward the load, standing in the bight line
    pts = (
        Point("L", "load", 0.0, 10.0),
        Point("A", "anchor", 0.0, 0.0, capacity_N=2e4),
        Point("H", "haul", 0.3, 5.0, force_N=500.0, label="haul team"),
    )
    rope = Rope("main", "r", (Pass("L"), Pass("A", "pulley"), Pass("H", "hauled")))
    rig = Rig(points=pts, ropes=(rope,), materials=(MAT,))
    res = _result(rig, {("main", 0): 1000.0, ("main", 1): 1000.0}, strain=0.01)
    ws = [w for w in run_checks(rig, res) if w.code == "person-in-zone"]
    # the bight at A (danger) and the band of the L-A piece, which is not the end the team holds
    assert sorted((w.subject, w.severity) for w in ws) == [("H,A", "danger"), ("H,main", "warning")]


def test_rope_grab_between_two_redirect_pulleys_is_not_a_two_leg_anchor():
    # the main line runs over pulleys at both anchors and is gripped at G in between (a 3:1's rope grab)
    pts = (
        Point("L", "load", 0.0, -10.0),
        Point("A1", "anchor", -5.0, 0.5, capacity_N=2e4),
        Point("A2", "anchor", 5.0, 0.5, capacity_N=2e4),
        Point("G", "point", 0.0, 0.0),
        Point("H", "haul", 0.0, 5.0, force_N=500.0),
    )
    rope = Rope("main", "r", (Pass("L"), Pass("A2", "pulley"), Pass("G"), Pass("A1", "pulley"), Pass("H", "hauled")))
    rig = Rig(points=pts, ropes=(rope,), materials=(MAT,))
    assert two_leg_anchors(rig, None) == []
    # the same geometry with both legs tied to the anchors is one (and is wide: 169 deg)
    legs = (Rope("s1", "r", (Pass("A1"), Pass("G"))), Rope("s2", "r", (Pass("G"), Pass("A2"))))
    rig2 = Rig(points=pts, ropes=legs, materials=(MAT,))
    (found,) = two_leg_anchors(rig2, None)
    assert found[0] == "G" and found[3] == pytest.approx(180 - 2 * math.degrees(math.atan2(0.5, 5.0)))


def test_shallow_bight_flight_strip_is_twice_the_distance_to_the_chord():
    # a 20 deg turn (a vector pull's hand): equal legs L = 12 m at an included angle of 160 deg;
    # the chord is L*cos(80 deg) from the pass along the bisector (isosceles triangle); the strip runs twice that
    L, half = 12.0, math.radians(80.0)
    a = (-L * math.sin(half), -L * math.cos(half))
    b = (L * math.sin(half), -L * math.cos(half))
    w = 0.5
    zone = bight_zone((0.0, 0.0), a, b, reach_m=100.0, margin_m=w)
    d = L * math.cos(half)
    assert zone.contains(ShPoint(0.0, -(2 * d + 0.9 * w)))
    assert not zone.contains(ShPoint(0.0, -(2 * d + 1.1 * w)))
