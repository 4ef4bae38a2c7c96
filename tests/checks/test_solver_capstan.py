"""Rope over an edge: the solver against the Euler–Eytelwein (capstan) equation.

T_high / T_low = e^(μφ), φ the wrap angle in radians, taken from the drawn or solved
geometry (check-values.md "Capstan"; μ values measured for kernmantle rope, R. Delaney,
Physics for Roping Technicians).  Expected values are computed here with math only.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solver import equilibrium
from tests import rigs

solve = equilibrium.solve

F = 600.0  # N, haul force
REL = 1e-7


def unit(deg: float) -> np.ndarray:
    return np.array([math.cos(math.radians(deg)), math.sin(math.radians(deg))])


def edge_rig(mu: float, wrap_deg: float, motion: str = "haul"):
    """Rope tied at L, over an edge at E (the origin), hauled at H; the rope turns by wrap_deg at E."""
    h = 8.0 * unit(-wrap_deg)
    pts = [rigs.anchor("L", -10.0, 0.0), rigs.anchor("E", 0.0, 0.0, label="edge"), rigs.haul("H", *h, F)]
    ropes = [rigs.rope("r", ["L", ("E", "edge", "edg"), ("H", "hauled")])]
    return rigs.make_rig(pts, ropes, hardware=[rigs.edge("edg", mu)], motion=motion)


# "bystander": the same rig plus an unrelated free point elsewhere (tests/rigs.py).  Without
# it every point of these rigs is fixed; solver/equilibrium.py at 30892e4 raised
# "ValueError: zero-size array to reduction operation maximum" there whenever a pass had
# friction (solve must never raise); fixed by b3538ae, kept as a guard.
BYSTANDER = pytest.mark.parametrize("bystander", [False, True], ids=["all-fixed", "bystander"])


def maybe_bystander(rig, bystander: bool):
    return rigs.with_bystander(rig) if bystander else rig


def solved(rig):
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    return res


@pytest.mark.parametrize("mu", [0.14, 0.25, 0.36, 0.44])  # Delaney: aluminium bar, steel tube, timber, concrete
@pytest.mark.parametrize("wrap_deg", [30.0, 90.0, 135.0, 180.0])
@BYSTANDER
def test_hauling_over_an_edge_follows_capstan_equation(mu, wrap_deg, bystander):
    # Euler–Eytelwein: T_high / T_low = e^(μφ); hauling, the haul side is the high side.
    res = solved(maybe_bystander(edge_rig(mu, wrap_deg), bystander))
    t_low, t_high = rigs.tension(res, "r", 0), rigs.tension(res, "r", 1)
    expected = math.exp(mu * math.radians(wrap_deg))
    assert t_high == pytest.approx(F, rel=REL)
    assert t_high / t_low == pytest.approx(expected, rel=REL), f"μ={mu} φ={wrap_deg}°: expected {expected}, got {t_high / t_low}"
    assert res.anchors["L"].force_N == pytest.approx(F / expected, rel=REL)
    # the edge carries the vector sum of both legs
    vec = t_low * unit(180.0) + t_high * unit(-wrap_deg)
    assert res.anchors["E"].force_N == pytest.approx(float(np.linalg.norm(vec)), rel=REL)


@pytest.mark.parametrize("mu, wrap_deg", [(0.44, 90.0), (0.19, 180.0)])
@BYSTANDER
def test_lowering_over_an_edge_puts_the_high_side_at_the_tied_end(mu, wrap_deg, bystander):
    # Lowering, the rope runs toward the tied end, which becomes the high side: T_L = F e^(μφ).
    res = solved(maybe_bystander(edge_rig(mu, wrap_deg, motion="lower"), bystander))
    assert rigs.tension(res, "r", 0) / rigs.tension(res, "r", 1) == pytest.approx(
        math.exp(mu * math.radians(wrap_deg)), rel=REL
    )


@BYSTANDER
def test_ninety_degree_concrete_edge_roughly_doubles_the_haul(bystander):
    # μ = 0.44 concrete (Delaney) over a 90° edge: e^(0.44 π/2) = 1.996; "a 90° concrete
    # edge roughly doubles the haul force" (common practice, no source).
    res = solved(maybe_bystander(edge_rig(0.44, 90.0), bystander))
    ratio = rigs.tension(res, "r", 1) / rigs.tension(res, "r", 0)
    assert ratio == pytest.approx(1.996, abs=1e-3)
    assert ratio == pytest.approx(2.0, abs=0.01)


@BYSTANDER
def test_edge_in_hold_is_frictionless(bystander):
    # rig-format.md: in hold all passes are frictionless.
    res = solved(maybe_bystander(edge_rig(0.44, 90.0, motion="hold"), bystander))
    assert rigs.tension(res, "r", 0) == pytest.approx(rigs.tension(res, "r", 1), rel=1e-9)


@pytest.mark.parametrize("force_dir", [240.0, 280.0])
@pytest.mark.parametrize("mu", [0.25, 0.44])
def test_wrap_angle_comes_from_the_solved_geometry(force_dir, mu):
    # A free load M hangs over the edge E from a rope tied at anchor B.  M swings into the
    # line of its force, so the wrap at E is the turn between that line and the leg to B;
    # hauling (rope travelling M -> E -> B) the B side carries W e^(μφ) (capstan).
    w = 1000.0
    b = np.array([9.0, 2.0])
    pts = [rigs.load("M", 1.0, -6.0, fixed=False, label="load over the edge"), rigs.anchor("E", 0, 0), rigs.anchor("B", *b)]
    ropes = [rigs.rope("r", ["M", ("E", "edge", "edg"), "B"], slack_m=0.2)]
    rig = rigs.make_rig(pts, ropes, [rigs.force("M", w, force_dir)], hardware=[rigs.edge("edg", mu)], motion="haul")
    res = solved(rig)
    m = rigs.xy(res, "M")
    assert math.degrees(math.atan2(m[1], m[0])) % 360 == pytest.approx(force_dir, abs=1e-6)
    incoming = -m / np.linalg.norm(m)  # M -> E
    outgoing = b / np.linalg.norm(b)  # E -> B
    wrap = math.acos(float(np.clip(incoming @ outgoing, -1.0, 1.0)))
    assert rigs.tension(res, "r", 0) == pytest.approx(w, rel=REL)
    assert rigs.tension(res, "r", 1) == pytest.approx(w * math.exp(mu * wrap), rel=REL)
    assert res.deflection_deg["r@E"] == pytest.approx(math.degrees(wrap), abs=1e-6)
