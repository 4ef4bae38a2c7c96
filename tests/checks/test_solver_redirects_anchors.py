"""Redirect resultants and two-leg anchor leg forces against published statics.

Sources (check-values.md "Anchors and redirects"): R = 2T cos(α/2) bisecting the
legs (frictionless); with friction R = T √(1 + η² + 2η cos α) (derived); two-leg
anchor leg force W / (2 cos(α/2)), i.e. ASME B30.9 load-angle factor 1/sin β.
Expected values are computed here with math/numpy/brentq, never with project code.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from solver import equilibrium
from tests import rigs

solve = equilibrium.solve

T = 800.0  # N, haul force on the redirected rope
REL = 1e-7


def unit(deg: float) -> np.ndarray:
    return np.array([math.cos(math.radians(deg)), math.sin(math.radians(deg))])


def redirect_rig(alpha_deg: float, eta: float, motion: str = "haul"):
    """Rope tied at A1, over a pulley on anchor R at the origin, hauled at H; legs at included angle α."""
    a1 = 10.0 * unit(alpha_deg / 2)
    h = 12.0 * unit(-alpha_deg / 2)
    pts = [rigs.anchor("A1", *a1), rigs.anchor("R", 0, 0, label="redirect"), rigs.haul("H", *h, T)]
    ropes = [rigs.rope("r", ["A1", ("R", "pulley", "pul"), ("H", "hauled")])]
    return rigs.make_rig(pts, ropes, hardware=[rigs.pulley("pul", eta)], motion=motion)


def solved(rig):
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    return res


@pytest.mark.parametrize(
    "alpha_deg, factor",
    [
        (90.0, math.sqrt(2.0)),  # check-values.md: α = 90° -> 1.414 T
        (120.0, 1.0),  # α = 120° -> 1.000 T
        (0.0, 2.0),  # α = 0° (doubled back) -> 2 T
        (1.0, 2.0 * math.cos(math.radians(0.5))),  # 0°-ish
        (45.0, 2.0 * math.cos(math.radians(22.5))),
    ],
)
def test_frictionless_redirect_resultant_is_2t_cos_half_angle_along_bisector(alpha_deg, factor):
    # Redirect resultant R = 2T cos(α/2), bisecting the legs (check-values.md, statics).
    res = solved(redirect_rig(alpha_deg, 1.0))
    assert factor == pytest.approx(2.0 * math.cos(math.radians(alpha_deg / 2)), rel=1e-12)
    r = res.anchors["R"]
    assert r.force_N == pytest.approx(factor * T, rel=REL), f"α={alpha_deg}: expected {factor * T} N, got {r.force_N} N"
    assert abs(((r.direction_deg + 180.0) % 360.0) - 180.0) < 1e-6, f"resultant should bisect the legs (0°), got {r.direction_deg}"
    assert res.anchors["A1"].force_N == pytest.approx(T, rel=REL)
    assert res.deflection_deg["r@R"] == pytest.approx(180.0 - alpha_deg, abs=1e-6)


# "bystander": the same rig plus an unrelated free point elsewhere (tests/rigs.py).  Without
# it every point of these rigs is fixed; solver/equilibrium.py at 30892e4 raised
# "ValueError: zero-size array to reduction operation maximum" there whenever a pass had
# friction (solve must never raise); fixed by b3538ae, kept as a guard.
BYSTANDER = pytest.mark.parametrize("bystander", [False, True], ids=["all-fixed", "bystander"])


def maybe_bystander(rig, bystander: bool):
    return rigs.with_bystander(rig) if bystander else rig


@BYSTANDER
@pytest.mark.parametrize("alpha_deg", [0.0, 60.0, 90.0, 120.0, 150.0])
@pytest.mark.parametrize("eta", [0.9, 0.5])
def test_redirect_with_friction_resultant_matches_derived_formula(alpha_deg, eta, bystander):
    # With friction the legs carry T and ηT: R = T √(1 + η² + 2η cos α) (check-values.md, derived).
    res = solved(maybe_bystander(redirect_rig(alpha_deg, eta), bystander))
    expected = T * math.sqrt(1 + eta**2 + 2 * eta * math.cos(math.radians(alpha_deg)))
    assert res.anchors["R"].force_N == pytest.approx(expected, rel=REL), f"α={alpha_deg} η={eta}"
    # haul: the hauled leg carries T, the leg to the tied end ηT
    assert rigs.tension(res, "r", 1) == pytest.approx(T, rel=REL)
    assert rigs.tension(res, "r", 0) == pytest.approx(eta * T, rel=REL)
    # the resultant's direction is the vector sum of the two leg pulls
    vec = T * unit(-alpha_deg / 2) + eta * T * unit(alpha_deg / 2)
    diff = math.radians(res.anchors["R"].direction_deg) - math.atan2(vec[1], vec[0])
    assert abs((diff + math.pi) % (2 * math.pi) - math.pi) < 1e-7, f"direction {res.anchors['R'].direction_deg}°"


@BYSTANDER
@pytest.mark.parametrize("alpha_deg", [60.0, 120.0])
def test_lowering_over_a_redirect_swaps_which_leg_is_lighter(alpha_deg, bystander):
    # Lowering the rope runs toward the tied end: that leg carries T/η (check-values.md).
    eta = 0.8
    res = solved(maybe_bystander(redirect_rig(alpha_deg, eta, motion="lower"), bystander))
    assert rigs.tension(res, "r", 0) == pytest.approx(T / eta, rel=REL)
    expected = T * math.sqrt(1 + eta**-2 + 2 / eta * math.cos(math.radians(alpha_deg)))
    assert res.anchors["R"].force_N == pytest.approx(expected, rel=REL)


@pytest.mark.parametrize("force_dir", [200.0, 250.0, 300.0])
def test_free_load_swings_into_line_and_loads_redirect_by_2t_cos_half_angle(force_dir):
    # A free load on a rope over a frictionless redirect hangs in the line of its force;
    # rope tension = W and R = 2W cos(α/2), α between that line and the other leg.
    w = 1200.0
    pts = [rigs.load("M", 2.0, -9.0, fixed=False, label="free load"), rigs.anchor("R", 0, 0), rigs.anchor("B", 10.0, 3.0)]
    ropes = [rigs.rope("r", ["M", ("R", "pulley", "pul"), "B"], slack_m=0.3)]
    rig = rigs.make_rig(pts, ropes, [rigs.force("M", w, force_dir)], hardware=[rigs.pulley("pul", 1.0)], motion="hold")
    res = solved(rig)
    m = rigs.xy(res, "M")
    assert math.degrees(math.atan2(m[1], m[0])) % 360 == pytest.approx(force_dir, abs=1e-6), "load hangs in its force line"
    for seg in res.segments_of("r"):
        assert seg.tension_N == pytest.approx(w, rel=REL)
    alpha = math.radians(force_dir) - math.atan2(3.0, 10.0)
    alpha = abs((alpha + math.pi) % (2 * math.pi) - math.pi)
    assert res.anchors["R"].force_N == pytest.approx(2 * w * math.cos(alpha / 2), rel=REL)


def two_leg_rig(alpha_deg: float, w: float, ea: float):
    """Master point M hanging h = 2 m below two anchors spread to included angle α, loaded with W."""
    h = 2.0
    s = h * math.tan(math.radians(alpha_deg / 2))
    pts = [rigs.anchor("A1", -s, 0), rigs.anchor("A2", s, 0), rigs.free("M", 0, -h, label="master point")]
    ropes = [rigs.rope("s1", ["M", "A1"]), rigs.rope("s2", ["M", "A2"])]
    return rigs.make_rig(pts, ropes, [rigs.force("M", w, 270.0)], motion="hold", ea=ea), s, h


@pytest.mark.parametrize(
    "beta_deg, published",
    [
        (60.0, 1.155),  # ASME B30.9 load-angle factor, β = 60° (check-values.md)
        (45.0, 1.414),  # β = 45°
        (30.0, 2.000),  # β = 30° (included angle 120°, the recommended limit)
    ],
)
def test_two_leg_anchor_leg_force_follows_asme_b30_9_load_angle_factor(beta_deg, published):
    w = 1000.0
    alpha = 180.0 - 2.0 * beta_deg  # included angle between legs
    rig, _, _ = two_leg_rig(alpha, w, ea=rigs.STIFF_EA)
    res = solved(rig)
    for sid, aid in (("s1", "A1"), ("s2", "A2")):
        leg = rigs.tension(res, sid, 0)
        # ASME B30.9 quotes three decimals
        assert leg / (w / 2) == pytest.approx(published, abs=6e-4), f"{sid}: factor {leg / (w / 2)} vs {published}"
        # and exactly W/(2 cos(α/2)) with a practically rigid sling (check-values.md)
        assert leg == pytest.approx(w / (2 * math.cos(math.radians(alpha / 2))), rel=1e-5)
        assert res.anchors[aid].force_N == pytest.approx(leg, rel=REL)


@pytest.mark.parametrize("alpha_deg", [30.0, 90.0, 120.0, 150.0])
@pytest.mark.parametrize("w_over_ea", [1e-3, 2e-2])
def test_stretchy_two_leg_anchor_matches_brentq_reference(alpha_deg, w_over_ea):
    # Elastic slings: M drops by δ until 2T (h+δ)/l = W with T = EA(l/l0 - 1); solved with
    # brentq here; then leg = W / (2 cos(α'/2)) at the stretched angle α' (check-values.md).
    ea = 2.0e4
    w = w_over_ea * ea
    rig, s, h = two_leg_rig(alpha_deg, w, ea)
    l0 = math.hypot(s, h)

    def g(d: float) -> float:
        ll = math.hypot(s, h + d)
        return 2 * ea * (ll / l0 - 1) * (h + d) / ll - w

    d = brentq(g, 0.0, 10 * h, xtol=1e-15, rtol=1e-15)
    ll = math.hypot(s, h + d)
    t_ref = ea * (ll / l0 - 1)
    res = solved(rig)
    np.testing.assert_allclose(rigs.xy(res, "M"), [0.0, -h - d], atol=1e-6 * h)
    half_angle = math.atan2(s, h + d)
    for sid in ("s1", "s2"):
        assert rigs.tension(res, sid, 0) == pytest.approx(t_ref, rel=1e-6)
        assert rigs.tension(res, sid, 0) == pytest.approx(w / (2 * math.cos(half_angle)), rel=1e-6)
