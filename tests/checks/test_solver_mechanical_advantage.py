"""Mechanical advantage of drawn haul systems against the T-method (check-values.md).

Each system is drawn as a real rig on a line (stiff rope, points on the x axis, so
every leg is parallel and the T-method holds exactly): a fixed load, anchors, free
travelling pulleys / rope grabs and a haul team.  The expected values are computed
here from the T-method products and sums (1 + η + η², Σ ηᵏ, (1 + η)(1 + η + η²)),
never taken from the solver; published numbers are checked separately.
"""

from __future__ import annotations

import pytest

from solver import equilibrium
from tests import rigs

solve = equilibrium.solve

F = 500.0  # N, haul force
STIFF = rigs.STIFF_EA
REL = 1e-7


def system(kind: str, eta: float, motion: str):
    """A drawn haul system on the x axis; returns (rig, load id)."""
    pul = rigs.pulley("pul", eta)
    if kind == "2:1":
        # load L, travelling pulley P slung to it, rope tied at anchor A, through P, to the haulers
        pts = [rigs.load("L", 0, 0), rigs.free("P", 1, 0, label="travelling pulley"), rigs.anchor("A", 10, 0),
               rigs.haul("H", 12, 0, F)]
        ropes = [rigs.rope("sling", ["L", "P"]), rigs.rope("main", ["A", ("P", "pulley", "pul"), ("H", "hauled")])]
    elif kind == "3:1":
        # Z-rig: rope from the load through a grab G, round the anchor pulley, back to a pulley on G, out to the haulers
        pts = [rigs.load("L", 0, 0), rigs.free("G", 4, 0, label="rope grab"), rigs.anchor("A", 10, 0),
               rigs.haul("H", 14, 0, F)]
        ropes = [rigs.rope("z", ["L", "G", ("A", "pulley", "pul"), ("G", "pulley", "pul"), ("H", "hauled")])]
    elif kind == "5:1":
        # simple 5:1 block and tackle: rope tied at the travelling block B, A-B-A-B sheaves, haul leg off B
        pts = [rigs.load("L", 0, 0), rigs.free("B", 1, 0, label="travelling block"), rigs.anchor("A", 10, 0),
               rigs.haul("H", 14, 0, F)]
        ropes = [rigs.rope("sling", ["L", "B"]),
                 rigs.rope("t", ["B", ("A", "pulley", "pul"), ("B", "pulley", "pul"), ("A", "pulley", "pul"),
                                 ("B", "pulley", "pul"), ("H", "hauled")])]
    elif kind == "2:1 on 3:1":
        # compound: the Z-rig's tail is tied to the travelling pulley T of a 2:1 hauled from anchor A3
        pts = [rigs.load("L", 0, 0), rigs.free("G", 4, 0, label="rope grab"), rigs.anchor("A1", 10, 0),
               rigs.free("T", 12, 0, label="2:1 pulley"), rigs.anchor("A3", 20, 0), rigs.haul("H", 22, 0, F)]
        ropes = [rigs.rope("z", ["L", "G", ("A1", "pulley", "pul"), ("G", "pulley", "pul"), "T"]),
                 rigs.rope("c", ["A3", ("T", "pulley", "pul"), ("H", "hauled")])]
    else:  # pragma: no cover
        raise ValueError(kind)
    return rigs.make_rig(pts, ropes, hardware=[pul], motion=motion, ea=STIFF), "L"


def t_method(kind: str, eta: float, motion: str) -> float:
    """Actual MA by the T-method (check-values.md, derived).

    Raising: tension drops by η at each sheave from hauler to load; lowering it rises
    by 1/η, i.e. the same sums with η replaced by 1/η; hold is frictionless.
    """
    e = {"haul": eta, "lower": 1.0 / eta, "hold": 1.0}[motion]
    if kind == "2:1":
        return 1 + e
    if kind == "3:1":
        return 1 + e + e * e
    if kind == "5:1":
        return sum(e**k for k in range(5))
    if kind == "2:1 on 3:1":
        return (1 + e) * (1 + e + e * e)
    raise ValueError(kind)


IDEAL = {"2:1": 2.0, "3:1": 3.0, "5:1": 5.0, "2:1 on 3:1": 6.0}
KINDS = list(IDEAL)


def solved(rig):
    res = solve(rig)
    assert res.status == "ok", rigs.describe(res)
    return res


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("eta", [1.0, 0.9, 0.5])
@pytest.mark.parametrize("motion", ["haul", "lower"])
def test_drawn_system_delivers_t_method_force_to_load(kind, eta, motion):
    # T-method (check-values.md "Pulley friction and actual mechanical advantage", derived).
    rig, lid = system(kind, eta, motion)
    res = solved(rig)
    expected = t_method(kind, eta, motion)
    got = res.loads[lid].force_N / F
    assert got == pytest.approx(expected, rel=REL), f"{kind} η={eta} {motion}: expected MA {expected}, got {got}"
    # the load is pulled toward the anchors (+x)
    assert abs(((res.loads[lid].direction_deg + 180.0) % 360.0) - 180.0) < 1e-6
    if res.ma_actual is not None:
        assert res.ma_actual == pytest.approx(expected, rel=REL), f"ma_actual {res.ma_actual} vs T-method {expected}"
    assert res.ma_ideal == pytest.approx(IDEAL[kind], rel=REL), f"ideal MA {IDEAL[kind]}, got {res.ma_ideal}"
    assert res.haul["H"] == pytest.approx(F, rel=1e-12)


@pytest.mark.parametrize("kind", KINDS)
def test_frictionless_system_gives_exact_ideal_ma(kind):
    # Ideal MA of the drawn system (η = 1, parallel legs): 2, 3, 5, 6 exactly.
    rig, lid = system(kind, 1.0, "haul")
    res = solved(rig)
    assert res.loads[lid].force_N == pytest.approx(IDEAL[kind] * F, rel=1e-9)
    assert res.ma_ideal == pytest.approx(IDEAL[kind], rel=1e-9)


@pytest.mark.parametrize("kind", KINDS)
def test_hold_is_frictionless_and_gives_ideal_ma(kind):
    # rig-format.md: "In hold all passes are frictionless".
    rig, lid = system(kind, 0.5, "hold")
    res = solved(rig)
    assert res.loads[lid].force_N == pytest.approx(IDEAL[kind] * F, rel=REL)


@pytest.mark.parametrize(
    "kind, eta, published",
    [
        ("3:1", 0.90, 2.710),  # check-values.md: 3:1 (Z) = 1 + η + η², η = 0.90 -> 2.710
        ("3:1", 0.95, 2.853),  # check-values.md: η = 0.95 -> 2.853
        ("3:1", 0.50, 1.750),  # check-values.md: η = 0.50 -> 1.750
        ("5:1", 0.90, 4.095),  # check-values.md: 5:1 simple Σ η^k, η = 0.90 -> 4.095
        ("2:1 on 3:1", 0.90, 5.149),  # check-values.md: (1 + η)(1 + η + η²), η = 0.90 -> 5.149
    ],
)
def test_raising_matches_published_t_method_numbers(kind, eta, published):
    rig, lid = system(kind, eta, "haul")
    res = solved(rig)
    assert res.loads[lid].force_N / F == pytest.approx(published, abs=6e-4)


@pytest.mark.parametrize("eta", [0.9, 0.5])
def test_z_rig_tension_drops_by_eta_at_each_sheave_toward_the_load(eta):
    # T-method ladder (check-values.md): raising, the haul leg carries F, the next leg ηF,
    # the next η²F; the grab's tail to the load carries the sum.
    rig, _ = system("3:1", eta, "haul")
    res = solved(rig)
    legs = [rigs.tension(res, "z", i) for i in range(4)]
    expected = [F * (1 + eta + eta**2), eta**2 * F, eta * F, F]
    for i, (g, e) in enumerate(zip(legs, expected)):
        assert g == pytest.approx(e, rel=REL), f"piece {i}: expected {e} N, got {g} N"


@pytest.mark.parametrize("eta", [0.9, 0.5])
def test_z_rig_lowering_tension_rises_by_one_over_eta_toward_the_load(eta):
    # Lowering: the rope runs the other way and tension rises by 1/η per sheave toward the load.
    rig, _ = system("3:1", eta, "lower")
    res = solved(rig)
    expected = [F * (1 + 1 / eta + 1 / eta**2), F / eta**2, F / eta, F]
    for i, e in enumerate(expected):
        assert rigs.tension(res, "z", i) == pytest.approx(e, rel=REL), f"piece {i}"


@pytest.mark.parametrize("eta", [0.9])
def test_compound_tail_carries_the_two_to_one_output(eta):
    # Compound 2:1 on 3:1: the 2:1's travelling pulley delivers (1 + η)F to the Z-rig tail.
    rig, _ = system("2:1 on 3:1", eta, "haul")
    res = solved(rig)
    assert rigs.tension(res, "c", 0) == pytest.approx(eta * F, rel=REL)
    assert rigs.tension(res, "c", 1) == pytest.approx(F, rel=REL)
    assert rigs.tension(res, "z", 3) == pytest.approx((1 + eta) * F, rel=REL)
