"""The failure scan held to outside values: statics of what remains, the pendulum, the spring drop.

Every reference number is computed here with numpy/scipy from the formula named beside it,
never with project numerics.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from solver.failures import scan
from solver.materials import LIBRARY_MATERIALS
from solver.model import STANDARD_GRAVITY
from tests.rigs import STIFF_EA, anchor, free, haul, linear_material, load, make_rig, rope


def _by_id(s, component: str):
    return next(f for f in s.failures if f.component.id == component)


# --- the redirect whose anchor fails straightens -------------------------------------------------
def _redirect_rig(p_haul: float = 1000.0):
    """Load at the origin, a frictionless ring on anchor R 10 m east and 8 m north, hauled from 20 m east."""
    return make_rig(
        [load("L", 0, 0), anchor("R", 10, 8), haul("H", 20, 0, p_haul)],
        [rope("line", ["L", ("R", "sliding"), ("H", "hauled")])],
    )


@pytest.mark.parametrize("component", ["R", "line@R"])
def test_redirect_whose_anchor_fails_straightens_and_the_load_gets_the_haul_force(component):
    # statics of a two-force member (any engineering mechanics text): with the redirect gone the
    # rope runs straight from the haul team to the load and delivers the haul force, toward the team.
    s = scan(_redirect_rig(1000.0))
    f = _by_id(s, component)
    assert f.status == "holds"
    if component == "R":
        assert "R" not in f.after.anchors  # the anchor itself let go
    else:
        assert f.after.anchors["R"].force_N == 0.0  # the anchor stands, its ring or sling let go
    assert f.after.loads["L"].force_N == pytest.approx(1000.0, rel=1e-9)
    assert f.after.loads["L"].direction_deg % 360.0 == pytest.approx(0.0, abs=1e-6)
    assert [(seg.rope, seg.index, seg.from_point, seg.to_point) for seg in f.after.segments] == [("line", 0, "L", "H")]
    # the intact redirect load, frictionless: R = 2 T cos(alpha / 2) (check-values.md, "Anchors and redirects")
    u1, u2 = np.array([-10.0, -8.0]), np.array([10.0, -8.0])
    alpha = math.acos(u1 @ u2 / (np.linalg.norm(u1) * np.linalg.norm(u2)))
    assert s.intact.anchors["R"].force_N == pytest.approx(2 * 1000.0 * math.cos(alpha / 2), rel=1e-6)
    # the legs sweep the triangle between the bent and the straight rope, the ring flies on down the bisector
    from shapely.geometry import Point as P

    assert f.zone.contains(P(10, 4)) and f.zone.contains(P(10, -3))
    assert not f.zone.contains(P(10, 12)) and not f.zone.contains(P(25, 8))


# --- pendulum: rigid rope, peak tension m g (3 - 2 cos theta0) ------------------------------------
@pytest.mark.parametrize("theta0", [30.0, 60.0, 90.0])
def test_pendulum_peak_tension_at_the_bottom_of_the_swing(theta0):
    # pendulum, energy + centripetal force (any mechanics text): T = m g (3 - 2 cos theta0), rigid rope
    m, r = 80.0, 10.0
    th = math.radians(theta0)
    bx, by = r * math.sin(th), -r * math.cos(th)
    hold = (bx + 6.0, by) if theta0 < 90 else (bx, by + 6.0)  # held sideways (or from above at 90 deg)
    rig = make_rig(
        [anchor("A", 0, 0), free("B", bx, by, mass_kg=m), anchor("C", *hold)],
        [rope("swing", ["A", "B"]), rope("hold", ["B", "C"])],
        ea=STIFF_EA,
    )
    rig = replace(rig, view="elevation", settings=replace(rig.settings, motion="hold"))
    s = scan(rig)
    assert s.ok, s.reason
    f = _by_id(s, "C")
    assert f.status == "holds"
    assert f.peak is not None and f.peak.how == "swing" and f.peak.at == "swing#0"
    expected = m * STANDARD_GRAVITY * (3.0 - 2.0 * math.cos(th))
    assert f.peak.force_N == pytest.approx(expected, rel=1e-4)
    # it swings under the pivot, and its area reaches the mirror position on the other side
    from shapely.geometry import Point as P

    assert f.after.points["B"][0] == pytest.approx(0.0, abs=1e-6)
    assert f.zone.contains(P(-0.98 * bx, 0.98 * by))


# --- spring energy balance: a drop onto a rope -----------------------------------------------------
def _drop_rig(slack_m: float, material):
    """A mass hung from A1 on a stiff rope, with a back-up rope from A2 (1 m higher) rigged with slack."""
    m = 100.0
    rig = make_rig(
        [anchor("A1", 0, 0), anchor("A2", 0.0, 1.0), free("M", 0.0, -2.0, mass_kg=m)],
        [rope("main", ["A1", "M"], material="stiff"), rope("backup", ["A2", "M"], material=material.id,
                                                             slack_m=slack_m)],
        materials=[linear_material("stiff", STIFF_EA), material],
    )
    return replace(rig, view="elevation", settings=replace(rig.settings, motion="hold")), m


@pytest.mark.parametrize("slack", [0.0, 0.5, 1.5])
def test_drop_onto_a_linear_rope_matches_the_spring_energy_balance(slack):
    # undamped spring, check-values.md "When something lets go": F = mg + sqrt((mg)^2 + 2 mg h k),
    # recomputed here from m g (h + y) = k y^2 / 2 by brentq, k = EA / L0
    ea = 5.0e4
    rig, m = _drop_rig(slack, linear_material("backup-lin", ea))
    s = scan(rig)
    f = _by_id(s, "main#0")
    assert f.status == "holds" and f.peak is not None and f.peak.how == "drop"
    L0 = 3.0 + slack
    k = ea / L0
    mg = m * STANDARD_GRAVITY
    m0 = s.intact.points["M"]
    h = L0 - math.dist((0.0, 1.0), m0)  # drop before the back-up takes load (the main rope's stretch counts)
    pre = max(-h, 0.0)  # the back-up may already carry a little: its stretch at the start
    y = brentq(lambda y: mg * y - 0.5 * k * ((pre + y) ** 2 - pre ** 2) if h <= 0 else
               mg * (h + y) - 0.5 * k * y * y, 1e-12, 100.0)
    expected = k * (pre + y) if h <= 0 else k * y
    if h > 0:
        assert expected == pytest.approx(mg + math.sqrt(mg * mg + 2 * mg * h * k), rel=1e-9)
    assert f.peak.force_N == pytest.approx(expected, rel=1e-3)
    if slack == 0.0:  # released onto a slack-free rope: twice the weight (check-values.md)
        assert f.peak.force_N == pytest.approx(2 * mg, rel=1e-3)


def test_drop_onto_a_real_rope_uses_its_own_stretch_curve():
    # energy balance with the library rope's curve, integrated here by scipy.integrate.quad of the
    # table (piecewise linear through (0, 0), last slope beyond: rig-format.md): m g (h + L0 e) = L0 int T de
    mat = LIBRARY_MATERIALS["kern-11"]
    rig, m = _drop_rig(1.0, mat)
    s = scan(rig)
    f = _by_id(s, "main#0")
    t = np.array([0.0] + [p[0] for p in mat.stretch])
    e = np.array([0.0] + [p[1] for p in mat.stretch])

    def T(x):
        if x <= e[-1]:
            return float(np.interp(x, e, t))
        return float(t[-1] + (t[-1] - t[-2]) / (e[-1] - e[-2]) * (x - e[-1]))

    L0 = 4.0
    h = L0 - math.dist((0.0, 1.0), s.intact.points["M"])
    mg = m * STANDARD_GRAVITY
    eps = brentq(lambda x: L0 * quad(T, 0.0, x, points=list(e[1:]), limit=200)[0] - mg * (h + L0 * x), 1e-9, 0.5)
    assert f.peak.force_N == pytest.approx(T(eps), rel=2e-3)
    # and it is far above what the rope carries once it settles (the static weight)
    assert f.peak.force_N > 3 * mg


# --- load-sharing against self-equalising ----------------------------------------------------------
def _two_point(self_equalising: bool):
    pts = [anchor("A1", -3, 5), anchor("A2", 3, 5), free("M", 0, 0)]
    if self_equalising:
        ropes = [rope("sling", ["A1", ("M", "sliding"), "A2"])]
    else:
        ropes = [rope("s1", ["A1", "M"]), rope("s2", ["A2", "M"])]
    from tests.rigs import force

    return make_rig(pts, ropes, forces=[force("M", 2000.0, 270.0)], motion="hold", ea=2.0e5)


def test_load_sharing_anchor_one_leg_cut_the_other_takes_the_whole_load_after_a_swing():
    s = scan(_two_point(False))
    f = _by_id(s, "s1#0")
    assert f.status == "holds"
    # statics: one leg left, in line with the 2 kN pull: it carries all of it
    assert f.after.anchors["A2"].force_N == pytest.approx(2000.0, rel=1e-6)
    assert f.peak is not None and f.peak.force_N > 2000.0


def test_self_equalising_sling_one_leg_cut_runs_out_through_the_master_point():
    # without a limiting knot the sling runs through the master point: nothing holds (common practice, no source)
    s = scan(_two_point(True))
    f = _by_id(s, "sling#0")
    assert f.status == "runs free"
    assert [u.point for u in f.unheld] == ["M"]
    assert f.unheld[0].direction_deg % 360.0 == pytest.approx(270.0, abs=1e-6)
