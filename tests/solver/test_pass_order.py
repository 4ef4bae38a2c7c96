"""Passes stay in their order along their rope (solver.pass_order); a mechanism names the directions a point moves.

A 3:1 (Z) hauled until its rope grab runs into the anchor pulley: the grab must stop at the
pulley's size on the load side, never beyond it.  Hand checks (statics of a two-force member and
Hooke's law, any mechanics text):
* the load rope from the load to the grab is a tied run of unstretched length L0 (its drawn
  length) ending where the grab jams, 0.1 m (the pulley's size_m) short of the anchor:
  T = EA (l / L0 - 1) for the linear rope used here;
* the jammed grab and the anchor pulley act as one body: the pieces between them are inside it,
  so the anchor takes exactly the pull of the pieces leaving the pair, the load rope and the
  haul rope: R = T u(grab -> load) + P u(grab -> haul);
* the pair rests where the load rope and the haul strand turn it to (the strands between them
  pull along the radius): on the load side when the load rope pulls harder than the haul strand,
  swung over its anchor toward the haul when the haul pulls harder (a pulley clipped to an anchor
  turns to its load), in between when they are nearly equal (``pair_at_rest``).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from solver.equilibrium import solve
from solver.model import Force, Material, Pass, Point, Rig, Rope, Rigging
from solver.templates import place_template

SIZE = 0.1  # size_m of the library's large pulley: the closest the grab's pulley comes to the anchor's


def z_rig(ea: float, haul_at: tuple[float, float], grab_y: float | None, pull: float) -> Rig:
    """A 3:1 from a fixed load at (0, 0) to an anchor at (0, 20), rope of stiffness ``ea`` (N, linear)."""
    rope = Material(id="lin", kind="rope", mbs_N=1e9, stretch=((ea * 0.1, 0.1),), label="linear rope")
    rig = Rig(points=(Point("L1", "load", 0.0, 0.0), Point("A1", "anchor", 0.0, 20.0)), materials=(rope,))
    rig = place_template(rig, "3:1", load_id="L1", anchor_id="A1", haul_at=haul_at, hardware="pulley-large")
    rig = replace(rig, ropes=tuple(replace(r, material="lin") for r in rig.ropes))
    if grab_y is not None:
        rig = rig.moved("G1", 0.0, grab_y)
    h = next(rig.points_of_kind("haul"))
    return rig.with_point(replace(h, force_N=pull, team=None, force_per_person_N=None))


def pair_at_rest(anchor, load, haul, pull: float, ea: float, l0: float, r: float = SIZE) -> list[np.ndarray]:
    """Where a grab jammed at distance ``r`` from its anchor pulley rests, by hand: the positions on that circle
    where the pair's potential E = P |H - G| + EA (l - L0)^2 / (2 L0) is least (a linear rope, taut; haul
    ``pull`` P at ``haul``).  The strands between grab and pulley keep their length and pull along the radius,
    so only the haul strand and the load rope turn the pair; a stable rest is a minimum of the potential
    (Lagrange-Dirichlet, Bazant & Cedolin, Stability of Structures, from memory).  Both mirror images when
    the rig is symmetric.  Grid, then scipy.optimize.minimize_scalar."""
    a, ld, h = (np.asarray(v, dtype=float) for v in (anchor, load, haul))

    def at(th):
        return a + r * np.stack([np.cos(th), np.sin(th)], axis=-1)

    def energy(th):
        g = at(th)
        stretch = np.maximum(np.linalg.norm(g - ld, axis=-1) - l0, 0.0)
        return pull * np.linalg.norm(h - g, axis=-1) + ea * stretch**2 / (2.0 * l0)

    grid = np.linspace(-np.pi, np.pi, 7201)
    e = energy(grid)
    low = [k for k in range(1, len(grid) - 1) if e[k] <= e[k - 1] and e[k] <= e[k + 1]]
    step = grid[1] - grid[0]
    found = [minimize_scalar(energy, bounds=(grid[k] - step, grid[k] + step), method="bounded",
                             options={"xatol": 1e-12}) for k in low]
    best = min(f.fun for f in found)
    return [at(f.x) for f in found if f.fun <= best + 1e-9 * abs(best)]


def hooke(ea: float, l: float, l0: float) -> float:
    """Tension of a linear rope of stiffness ``ea`` (N) stretched from ``l0`` to ``l`` (m), Hooke's law."""
    return ea * (l / l0 - 1.0)


def jammed_pair_statics(rig: Rig, res) -> None:
    """The grab jammed at the anchor pulley: as one body with the anchor (module docstring)."""
    xy = {k: np.array(v) for k, v in res.points.items()}
    seg = {(s.rope, s.index): s for s in res.segments}
    rope_id = rig.ropes[0].id
    grab, load, haul = xy["G1"], xy["L1"], xy["H1"]
    t_load, t_haul = seg[(rope_id, 0)].tension_N, seg[(rope_id, 3)].tension_N
    expect = t_load * (load - grab) / np.linalg.norm(load - grab) + t_haul * (haul - grab) / np.linalg.norm(haul - grab)
    a = res.anchors["A1"]
    np.testing.assert_allclose([a.fx_N, a.fy_N], expect, atol=1e-6 * (t_load + t_haul))
    # the load gets the stretch of its rope to where the grab stopped (Hooke, linear rope)
    l0 = float(np.linalg.norm(np.array(rig.point("G1").xy) - np.array(rig.point("L1").xy)))
    assert res.loads["L1"].force_N == pytest.approx(rig.materials[0].stretch[0][0] / 0.1
                                                     * (np.linalg.norm(grab - load) / l0 - 1.0), rel=1e-6)
    assert ("two-blocked") in {w.code for w in res.warnings}


@pytest.mark.parametrize("ea", [9_000.0, 30_000.0, 200_000.0])  # soft (the reported case) to stiff
@pytest.mark.parametrize("grab_y", [15.0, 19.0, None])  # drawn near the anchor, or where the kit puts it
@pytest.mark.parametrize("pull", [4_000.0, 16_000.0])
def test_in_line_z_two_blocks_at_the_pulleys_size_on_the_side_the_pair_is_pulled(ea, grab_y, pull):
    rig = z_rig(ea, (0.0, 26.0), grab_y, pull)
    res = solve(rig)
    assert res.status == "ok", res.message
    grab = np.array(res.points["G1"])
    drawn = rig.point("G1").y  # the load rope's unstretched length: its drawn length
    if res.loads["L1"].force_N < 2.5 * pull:  # jammed: a free Z would deliver about 2.85 x the pull
        # hand: the grab rests SIZE from the anchor where the load rope and the haul strand turn the pair:
        # below it when the load rope pulls harder, swung over it toward the haul when the haul does
        rests = pair_at_rest((0.0, 20.0), (0.0, 0.0), (0.0, 26.0), pull, ea, drawn)
        assert min(np.linalg.norm(grab - g) for g in rests) <= 1e-4, (grab, rests)  # the penalty gives ~1e-5 m
        pulled_up = pull > hooke(ea, 20.0 + SIZE, drawn)  # the haul outpulls the load rope even swung over
        held_down = hooke(ea, 20.0 - SIZE, drawn) > pull  # the load rope outpulls the haul below the pulley
        if pulled_up or held_down:
            assert grab[0] == pytest.approx(0.0, abs=1e-9)
            assert grab[1] == pytest.approx(20.0 + SIZE if pulled_up else 20.0 - SIZE, abs=1e-4)
        assert res.loads["L1"].force_N == pytest.approx(hooke(ea, float(grab[1]), drawn), rel=1e-6)
        # the pair pulls the anchor toward whichever is harder: the load rope (south) or the haul (north)
        jammed_pair_statics(rig, res)
    else:
        assert grab[1] < 20.0 - SIZE


@pytest.mark.parametrize("ea, grab_y", [(9_000.0, 15.0), (9_000.0, 19.0), (200_000.0, 19.0)])  # each jams at 16 kN
@pytest.mark.parametrize("haul_at", [(3.0, 26.0), (-4.0, 30.0)])
def test_off_line_z_jams_at_the_pulleys_size_and_balances_as_one_body(ea, haul_at, grab_y):
    rig = z_rig(ea, haul_at, grab_y, 16_000.0)
    res = solve(rig)
    assert res.status == "ok", res.message
    grab, anchor = np.array(res.points["G1"]), np.array([0.0, 20.0])
    assert np.linalg.norm(grab - anchor) == pytest.approx(SIZE, abs=1e-4)  # the penalty gives ~1e-5 m
    jammed_pair_statics(rig, res)


def test_a_warm_started_sweep_never_carries_the_grab_through_the_pulley():
    # a soft rope hauled harder step by step, each solve from the last answer (as a sweep or a drag does):
    # jammed from about 430 N on; once the haul outpulls the load rope the pair swings over the anchor
    start = None
    for pull in np.geomspace(500.0, 40_000.0, 12):
        rig = z_rig(9_000.0, (0.0, 26.0), 19.0, float(pull))
        res = solve(rig, start=start)
        assert res.status == "ok", res.message
        grab = np.array(res.points["G1"])
        # never inside the pulley's size: the grab went round the anchor, not through it
        assert np.linalg.norm(grab - np.array([0.0, 20.0])) >= SIZE - 1e-4  # the penalty gives ~1e-5 m
        rests = pair_at_rest((0.0, 20.0), (0.0, 0.0), (0.0, 26.0), float(pull), 9_000.0, 19.0)
        if res.loads["L1"].force_N < 2.5 * pull:
            assert min(np.linalg.norm(grab - g) for g in rests) <= 1e-4, (pull, grab, rests)
        # never more than the rope can give with the grab swung over the pulley (Hooke, linear rope)
        assert res.loads["L1"].force_N <= hooke(9_000.0, 20.0 + SIZE + 1e-4, 19.0)
        cold = solve(rig)  # and what was solved before does not matter
        np.testing.assert_allclose(res.points["G1"], cold.points["G1"], atol=1e-6)
        start = {"G1": res.points["G1"]}


# --- mechanism messages name the real directions -----------------------------------------------------------

def _two_point_rig(ropes, forces=()) -> Rig:
    rope = Material(id="lin", kind="rope", mbs_N=30000.0, stretch=((1000.0, 0.01),), label="linear rope")
    pts = (Point("A", "anchor", 0.0, 0.0), Point("G1", "point", 0.0, 5.0), Point("B", "anchor", 0.0, 10.0))
    return Rig(points=pts, ropes=tuple(ropes), materials=(rope,), forces=tuple(forces))


def test_an_unloaded_point_on_a_slack_rope_is_free_in_every_direction():
    # a slack rope resists nothing: both zero-stiffness modes move the point (solver-notes.md, failures)
    rope = Rope("r1", "lin", (Pass("A"), Pass("G1")), rigged=Rigging(slack_m=0.5))
    res = solve(_two_point_rig([rope]))
    assert res.status == "mechanism" and res.subject == "G1"
    assert "is free in every direction" in res.message
    assert "north" not in res.message and "east" not in res.message


def test_a_point_between_two_hand_tight_ropes_can_move_only_across_them():
    # in line north-south and hand-tight: stiff along the line (EA), nothing across it (no tension)
    ropes = [Rope("r1", "lin", (Pass("A"), Pass("G1"))), Rope("r2", "lin", (Pass("G1"), Pass("B")))]
    res = solve(_two_point_rig(ropes))
    assert res.status == "mechanism" and "can move east–west" in res.message


def test_a_loaded_point_is_held_and_names_nothing():
    rope = Rope("r1", "lin", (Pass("A"), Pass("G1")))
    res = solve(_two_point_rig([rope], [Force("G1", 300.0, 45.0)]))
    assert res.status == "ok", res.message
    assert math.degrees(math.atan2(res.points["G1"][1], res.points["G1"][0])) == pytest.approx(45.0, abs=1e-9)
