"""Drag estimate and haul team planning against the drag equation and plain arithmetic.

Drag equation F = 1/2 rho C_d A v^2 (check-values.md, "Moving water"); C_d values from
C. Matthews, Aeronautical Engineer's Data Book, drag table: flat plate normal to the
flow 1.17 (square) to 1.98 (long), open half-cylinder facing the flow 2.30.  The
reference force is computed here independently as the dynamic pressure q = rho v^2 / 2
times the drag area C_d A, integrated from the pressure written as a kinetic energy
density with scipy.integrate.quad (d(q)/dv = rho v), not with project code.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from solver.errors import RigModelError
from solver.hauling import DEFAULT_PER_PERSON_N, haul_plan, haulers_needed
from solver.loads import DRAG_SHAPES, EXTRA_KEY, LoadEstimate, apply_load_estimate, drag_force
from solver.model import Point, Rig


def reference_drag(v: float, area: float, cd: float, rho: float = 1000.0) -> float:
    """F = C_d A q with q = integral of rho u du from 0 to v (= rho v^2 / 2), by quadrature."""
    q, _ = quad(lambda u: rho * u, 0.0, v, epsabs=0.0, epsrel=1e-13)
    return cd * area * q


def test_drag_coefficients_are_the_published_table_values():
    # C. Matthews, Aeronautical Engineer's Data Book (via check-values.md)
    assert DRAG_SHAPES["flat-plate-square"].cd == 1.17
    assert DRAG_SHAPES["flat-plate-long"].cd == 1.98
    assert DRAG_SHAPES["half-cylinder-open"].cd == 2.30
    for s in DRAG_SHAPES.values():
        assert "Matthews" in s.source
        assert s.cd in (1.17, 1.98, 2.30), f"{s.key} must map to a tabulated value"
    # a shape that is not literally in the table says what it was taken to be
    assert "half-cylinder" in DRAG_SHAPES["raft-broadside"].assumption


def test_raft_broadside_in_2_m_per_s_current():
    # drag equation: 0.5 * 1000 * 2.30 * 1.5 m^2 * (2 m/s)^2 = 6900 N (check-values.md)
    f = drag_force(2.0, 1.5, DRAG_SHAPES["raft-broadside"].cd)
    assert f == pytest.approx(reference_drag(2.0, 1.5, 2.30), rel=1e-12)
    assert f == pytest.approx(6900.0, rel=1e-12)


@settings(max_examples=100, deadline=None)
@given(
    v=st.floats(0.05, 6.0),
    area=st.floats(0.05, 10.0),
    cd=st.sampled_from([1.17, 1.98, 2.30]),
    rho=st.floats(990.0, 1030.0),
)
def test_drag_force_matches_the_drag_equation(v, area, cd, rho):
    # F = 1/2 rho C_d A v^2 (drag equation), reference by quadrature of the dynamic pressure
    assert drag_force(v, area, cd, rho) == pytest.approx(reference_drag(v, area, cd, rho), rel=1e-10)


@settings(max_examples=50, deadline=None)
@given(v=st.floats(0.1, 4.0), area=st.floats(0.1, 5.0))
def test_doubling_the_current_quadruples_the_force(v, area):
    # F grows with v^2 (check-values.md, "Moving water")
    assert drag_force(2 * v, area, 1.98) == pytest.approx(4 * drag_force(v, area, 1.98), rel=1e-12)
    assert drag_force(v, 2 * area, 1.98) == pytest.approx(2 * drag_force(v, area, 1.98), rel=1e-12)


@pytest.mark.parametrize("bad", [dict(speed_m_s=-1.0), dict(area_m2=math.nan), dict(cd=-0.1), dict(rho=math.inf)])
def test_drag_refuses_bad_numbers_in_words(bad):
    args = dict(speed_m_s=1.0, area_m2=1.0, cd=1.17) | bad
    with pytest.raises(RigModelError, match="zero or more"):
        drag_force(**args)


def test_load_estimate_sets_required_force_and_keeps_its_assumptions():
    rig = Rig(points=(Point("L1", "load", 0.0, 0.0, label="pinned raft", extra={"keep": 1}),))
    est = LoadEstimate(speed_m_s=1.5, area_m2=2.0, shape="flat-plate-long")
    out = apply_load_estimate(rig, "L1", est)
    p = out.point("L1")
    expected = reference_drag(1.5, 2.0, 1.98)  # 4455 N
    assert p.required_N == pytest.approx(expected, rel=1e-12)
    kept = p.extra[EXTRA_KEY]
    assert kept["force_N"] == pytest.approx(expected, rel=1e-12)
    assert kept["speed_m_s"] == 1.5 and kept["cd"] == 1.98
    assert "1/2 rho Cd A v^2" in kept["assumptions"] and "Matthews" in kept["assumptions"]
    assert p.extra["keep"] == 1  # other extras survive
    assert rig.point("L1").required_N is None  # the original rig is not changed


def test_hand_cd_and_extra_factor_are_stated():
    est = LoadEstimate(speed_m_s=1.0, area_m2=1.0, shape="raft-broadside", cd=1.5, factor=1.2)
    assert est.force_N == pytest.approx(reference_drag(1.0, 1.0, 1.5) * 1.2, rel=1e-12)
    assert "entered by hand" in est.assumptions and "1.2" in est.assumptions


def test_estimate_goes_only_on_a_load():
    rig = Rig(points=(Point("A1", "anchor", 0.0, 0.0),))
    with pytest.raises(RigModelError, match="not a load"):
        apply_load_estimate(rig, "A1", LoadEstimate(1.0, 1.0))
    with pytest.raises(RigModelError, match="not in the drawing"):
        apply_load_estimate(rig, "L9", LoadEstimate(1.0, 1.0))
    with pytest.raises(RigModelError, match="Unknown shape"):
        LoadEstimate(1.0, 1.0, shape="submarine").force_N


# --- haul team -------------------------------------------------------------------------


def test_haulers_for_a_raft_on_a_3_to_1_with_90pct_pulleys():
    # 6900 N through 2.710:1 (T-method, check-values.md) at 220 N each (common practice, no source):
    # 6900 / (2.71 * 220) = 11.57 -> 12 haulers
    ma = 1 + 0.9 + 0.81
    assert haulers_needed(6900.0, ma) == math.ceil(6900.0 / (ma * 220.0)) == 12
    plan = haul_plan(6900.0, ma)
    assert plan.haulers == 12 and plan.delivered_N >= 6900.0
    assert plan.delivered_N - ma * 220.0 < 6900.0  # one fewer would not be enough
    assert "12 haulers" in plan.text()


@settings(max_examples=100, deadline=None)
@given(req=st.floats(0.0, 50000.0), ma=st.floats(0.3, 12.0), per=st.floats(50.0, 900.0))
def test_haulers_needed_is_the_smallest_team_that_is_enough(req, ma, per):
    n = haulers_needed(req, ma, per)
    assert n * per * ma >= req * (1 - 1e-9)
    assert n == 0 or (n - 1) * per * ma < req


def test_default_per_person_force_is_0_22_kN():
    assert DEFAULT_PER_PERSON_N == 220.0  # common practice, no source (check-values.md)


@pytest.mark.parametrize("args", [(1000.0, 0.0), (1000.0, math.nan), (-5.0, 2.0), (1000.0, 2.0, 0.0)])
def test_haul_planning_refuses_nonsense(args):
    with pytest.raises(RigModelError):
        haulers_needed(*args)


def test_pull_needed_for_a_solved_3_to_1_matches_its_actual_ma():
    from solver import equilibrium
    from solver.pull_needed import need_for_load
    from solver.templates import place_template
    from tests import rigs

    rig = rigs.make_rig([rigs.load("L", 0.0, 0.0, required_N=6900.0), rigs.anchor("A", 0.0, 20.0)], [],
                        hardware=[rigs.pulley("p", 0.9)])
    rig = place_template(rig, "3:1", load_id="L", anchor_id="A", material="lin", hardware="p")
    res = equilibrium.solve(rig)
    assert res.ok, res.message
    need = need_for_load(rig, res, "L")
    # an in-line 3:1 keeps its geometry, so the solved pull is 6900 N / 2.710 (T-method, check-values.md)
    # and 12 pullers at 220 N (common practice, no source)
    assert need.pull_needed_N == pytest.approx(6900.0 / 2.71, rel=1e-3) and need.pullers_needed == 12
    # the template sized its own team the same way, from the pulley's efficiency
    assert next(p.team for p in rig.points if p.kind == "haul") == 12