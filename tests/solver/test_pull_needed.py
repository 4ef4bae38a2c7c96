"""The pull really needed (solver.pull_needed): found by solving the rig, checked by re-solving and by hand.

Sources: T-method arithmetic and the vector-pull statics of check-values.md; the
self-consistent elastic vector pull (Irvine, *Cable Structures*, ch. 1) solved here
independently with scipy.optimize.brentq.
"""

from __future__ import annotations

import json
import math
from dataclasses import replace
from pathlib import Path

import pytest
from scipy.optimize import brentq

from solver.analysis import analyse
from solver.equilibrium import solve
from solver.model import Force, Hardware, Material, Pass, Point, Rig, Rope, Rigging, Settings
from solver.pull_needed import need_for_load
from solver.rigfile import load_rig

SAMPLES = Path(__file__).resolve().parents[2] / "samples"
EA = 100_000.0  # N: a linear rope, strain 1 % at 1 kN
LINEAR = Material(id="lin", kind="rope", mbs_N=30000.0, stretch=((EA * 0.01, 0.01),), label="linear rope")
PULLEY = Hardware(id="pul", kind="pulley", efficiency=0.9, mbs_N=36000.0, size_m=0.1, label="rescue pulley")


def _rig_at(rig: Rig, pull: float) -> Rig:
    """``rig`` with its one pulling force or haul team set to ``pull`` N (what a rigger would re-enter)."""
    if rig.forces:
        return replace(rig, forces=(replace(rig.forces[0], magnitude_N=pull),))
    h = next(rig.points_of_kind("haul"))
    return rig.with_point(replace(h, force_N=pull, team=None, force_per_person_N=None))


def vector_rig(required: float, pull: float = 100.0, capacity: float | None = None,
               material: Material = LINEAR) -> Rig:
    """A hand-tight line 20 m long from a fixed load to an anchor, pulled sideways at mid-span through a ring."""
    pts = (Point("L", "load", 0.0, 0.0, required_N=required, label="raft"),
           Point("A", "anchor", 0.0, 20.0, capacity_N=capacity, label="alder"),
           Point("V", "point", 0.0, 10.0, label="hand"))
    rope = Rope("line", material.id, (Pass("L"), Pass("V", "sliding"), Pass("A")))
    return Rig(points=pts, ropes=(rope,), materials=(material,),
               forces=(Force("V", pull, 0.0, "sideways pull"),), settings=Settings(motion="hold"))


def pulley_rig(required: float, motion: str = "haul", team: int = 2) -> Rig:
    """A fixed load hauled through one pulley at a fixed anchor: no point moves."""
    pts = (Point("L", "load", 0.0, 0.0, required_N=required, label="raft"),
           Point("A", "anchor", 0.0, 20.0, capacity_N=1e9),
           Point("H", "haul", 5.0, 20.0, team=team, force_per_person_N=220.0, label="haul team"))
    rope = Rope("m", "lin", (Pass("L"), Pass("A", "pulley", "pul"), Pass("H", "hauled")))
    return Rig(points=pts, ropes=(rope,), materials=(LINEAR,), hardware=(PULLEY,), settings=Settings(motion=motion))


@pytest.mark.parametrize("motion, factor", [("haul", 0.9), ("hold", 1.0), ("lower", 1 / 0.9)])
def test_a_pulley_at_a_fixed_anchor_needs_required_over_its_ratio(motion, factor):
    # T-method (check-values.md): hauling, the load gets eta x pull; lowering, pull / eta; holding, frictionless
    need = analyse(pulley_rig(2500.0, motion)).needs["L"]
    assert need.pull_needed_N == pytest.approx(2500.0 / factor, rel=1e-3)
    assert need.pullers_needed == math.ceil(need.pull_needed_N / 220.0)
    assert need.short_N == pytest.approx(2500.0 - 440.0 * factor, rel=1e-9)


def test_vector_pull_sample_the_straight_line_guess_falls_short_and_the_solved_pull_does_not():
    rig = load_rig(SAMPLES / "vector-pull.rig.json")
    res = analyse(rig)
    need = res.needs["L1"]
    # the old rule, required / current MA at 220 N a person: 3 pullers promised 2.01 kN ...
    guess = math.ceil(2000.0 / (res.ma_actual * 220.0))
    assert guess == 3 and guess * 220.0 * res.ma_actual == pytest.approx(2010.0, abs=10.0)
    # ... solving the rig at that pull gives about 1.64 kN (the MA falls as the line comes into line)
    at_guess = solve(_rig_at(rig, guess * 220.0)).loads["L1"].force_N
    assert at_guess == pytest.approx(1640.0, abs=15.0)
    # the solved pull: re-solving there gives the required force within 0.5 %
    again = solve(_rig_at(rig, need.pull_needed_N)).loads["L1"].force_N
    assert again == pytest.approx(2000.0, rel=0.005)
    assert need.pullers_needed == math.ceil(need.pull_needed_N / 220.0) > guess


@pytest.mark.parametrize("required", [500.0, 1000.0, 3000.0])
def test_vector_pull_pull_needed_matches_the_self_consistent_elastic_solution(required):
    # check-values.md, vector pull: T = P / (2 sin theta) and 1 + T/EA = 1/cos theta (linear rope, hand-tight
    # as drawn; Irvine, Cable Structures, ch. 1).  The load end of the line carries T.  Solved by hand here:
    theta = brentq(lambda t: (1.0 / math.cos(t) - 1.0) * EA - required, 1e-9, math.pi / 2 - 1e-9, xtol=1e-14)
    pull = 2.0 * required * math.sin(theta)
    need = analyse(vector_rig(required)).needs["L"]
    assert need.pull_needed_N == pytest.approx(pull, rel=2e-3)
    assert need.pullers_needed == math.ceil(pull / 220.0)


def test_a_load_already_given_enough_needs_less_pull_than_drawn():
    rig = vector_rig(300.0, pull=200.0)
    res = analyse(rig)
    need = res.needs["L"]
    assert need.short_N == 0.0 and need.pull_needed_N < 200.0
    assert solve(_rig_at(rig, need.pull_needed_N)).loads["L"].force_N == pytest.approx(300.0, rel=0.005)
    assert "load-stuck" not in {w.code for w in res.warnings}


def test_anchor_that_would_fail_first_is_named():
    # the anchor takes the line tension T (it is the line's end): 1.5 kN capacity fails before 2 kN reaches the load
    need = analyse(vector_rig(2000.0, capacity=1500.0)).needs["L"]
    assert need.pull_needed_N is None and need.pullers_needed is None
    assert need.limit == "anchor-fails" and need.limit_subject == "A"
    assert need.limit_force_N > 1500.0 == need.limit_strength_N


def test_rope_that_would_break_first_is_named_with_its_knot():
    # MBS 2.4 kN x 75 % (figure-8 loop at the load, check-values.md "Knots and grabs", from memory) = 1.8 kN < 2 kN
    weak = replace(LINEAR, id="cord", mbs_N=2400.0)
    rig = vector_rig(2000.0, material=weak)
    rope = rig.ropes[0]
    rig = rig.with_rope(replace(rope, path=(replace(rope.path[0], termination="figure-8-loop"),) + rope.path[1:]))
    res = analyse(rig)
    need = res.needs["L"]
    assert need.limit == "rope-fails" and need.limit_subject == "line"
    assert need.limit_strength_N == pytest.approx(1800.0)
    msg = next(w.message for w in res.warnings if w.code == "load-stuck")
    assert "No pull gets it there" in msg and "1.80 kN" in msg


@pytest.mark.parametrize("motion", ["hold", "lower", "haul"])
def test_a_short_load_is_warned_in_every_motion_with_the_pull_it_needs(motion):
    rig = pulley_rig(2500.0, motion)
    res = analyse(rig)
    ws = [w for w in res.warnings if w.code == "load-stuck"]
    assert len(ws) == 1 and ws[0].subject == "L"
    assert "total pull of" in ws[0].message and "pullers" in ws[0].message


def test_json_loads_carry_required_short_pull_and_pullers():
    rig = vector_rig(2000.0, capacity=1500.0)
    data = json.loads(json.dumps(analyse(rig).to_json()))
    load = data["loads"]["L"]
    assert load["required_N"] == 2000.0 and load["short_N"] > 0
    assert load["pull_needed_N"] is None and load["pullers_needed"] is None
    assert load["pull_limit"]["kind"] == "anchor-fails"
    ok = json.loads(json.dumps(analyse(pulley_rig(600.0, team=4)).to_json()))["loads"]["L"]  # 880 N x 0.9 > 600 N
    assert ok["short_N"] == 0.0 and ok["pull_needed_N"] == pytest.approx(600.0 / 0.9, rel=1e-3)
    assert ok["pullers_needed"] == math.ceil(600.0 / 0.9 / 220.0)


def test_nothing_is_solved_for_a_load_without_a_required_force():
    rig = vector_rig(2000.0)
    rig = rig.with_point(replace(rig.point("L"), required_N=None))
    res = analyse(rig)
    assert res.needs == {} and res.to_json()["loads"]["L"]["pull_needed_N"] is None


def test_a_handful_of_solves_and_never_on_a_drag_step():
    calls = []

    def counting(*args, **kwargs):
        calls.append(kwargs)
        return solve(*args, **kwargs)

    rig = load_rig(SAMPLES / "vector-pull.rig.json")
    need = need_for_load(rig, solve(rig), "L1", solve=counting)
    assert need.pull_needed_N is not None and len(calls) <= 12
    assert all(c.get("start") for c in calls[1:]), "each solve after the first starts from a solved geometry"
    # the live drag step solves the equilibrium alone (sketchpad.live_solve._default_quick): no loads' needs
    assert solve(rig, ideal=False).needs == {}


def test_two_blocking_that_comes_first_is_named():
    # a 3:1 on a soft rope (EA 9 kN) with its grab drawn 1 m below the anchor pulley: the grab jams at the
    # pulley's size (0.1 m) once the load rope has stretched 0.9 m, T = 9 kN x 0.9 / 19 = 426 N (Hooke); a
    # stronger haul only swings the jammed pair over its anchor, T at most 9 kN x 1.1 / 19 = 521 N, so 1 kN
    # at the load is out of reach.  The team's 440 N swings it part way (tests/solver/test_pass_order.py)
    from tests.solver.test_pass_order import hooke, pair_at_rest
    from solver.templates import place_template

    soft = Material(id="soft", kind="rope", mbs_N=30000.0, stretch=((900.0, 0.1),), label="soft rope")
    rig = Rig(points=(Point("L1", "load", 0.0, 0.0, required_N=1000.0), Point("A1", "anchor", 0.0, 20.0)),
              materials=(soft,))
    rig = place_template(rig, "3:1", load_id="L1", anchor_id="A1", haul_at=(0.0, 26.0), hardware="pulley-large")
    rig = replace(rig, ropes=tuple(replace(r, material="soft") for r in rig.ropes)).moved("G1", 0.0, 19.0)
    res = analyse(rig)
    rest = pair_at_rest((0.0, 20.0), (0.0, 0.0), (0.0, 26.0), res.haul["H1"], 900.0 / 0.1, 19.0)[0]  # either mirror image
    assert res.loads["L1"].force_N == pytest.approx(hooke(9000.0, math.hypot(*rest), 19.0), rel=1e-4)
    need = res.needs["L1"]
    assert need.pull_needed_N is None and need.limit == "two-blocked"
    assert "two-blocks" in next(w.message for w in res.warnings if w.code == "load-stuck")


def test_a_load_more_pull_cannot_reach_says_the_mechanism_stops_giving():
    # the load hangs on its own pretensioned line (500 N); the haul pulls the far side of a knot at the
    # anchor, so no pull changes what the load gets (statics: the fixed anchor takes the difference)
    pts = (Point("L", "load", 0.0, 0.0, required_N=600.0), Point("A", "anchor", 0.0, 20.0, capacity_N=1e9),
           Point("H", "haul", 0.0, 30.0, force_N=300.0))
    rope = Rope("m", "lin", (Pass("L"), Pass("A"), Pass("H", "hauled")), rigged=Rigging(pretension_N=500.0))
    res = analyse(Rig(points=pts, ropes=(rope,), materials=(LINEAR,)))
    need = res.needs["L"]
    assert res.loads["L"].force_N == pytest.approx(500.0, rel=1e-9)
    assert need.pull_needed_N is None and need.limit == "ma-collapses"


def test_an_anchor_rated_by_working_load_stops_the_pull_at_that_load_and_says_so():
    # a working load is the most the anchor may take (solver.capacity): the pull stops there too
    rig = vector_rig(2000.0, capacity=1500.0)
    rig = rig.with_point(replace(rig.point("A"), capacity_kind="working"))
    res = analyse(rig)
    assert res.needs["L"].limit == "anchor-fails"
    assert "rated working load of 1.50 kN" in next(w.message for w in res.warnings if w.code == "load-stuck")


def test_a_load_on_a_pretensioned_line_with_nothing_pulling_says_no_pull_can_be_worked_out():
    pts = (Point("L", "load", 0.0, 0.0, required_N=900.0), Point("A", "anchor", 0.0, 20.0))
    rope = Rope("m", "lin", (Pass("L"), Pass("A")), rigged=Rigging(pretension_N=500.0))
    res = analyse(Rig(points=pts, ropes=(rope,), materials=(LINEAR,)))
    assert res.needs["L"].limit == "no-pull" and res.needs["L"].pull_needed_N is None
    assert "no pull can be worked out" in next(w.message for w in res.warnings if w.code == "load-stuck")


def test_a_rig_that_stops_solving_inside_the_bracket_is_named_not_passed_to_the_root_finder():
    from solver.result import Result

    rig = pulley_rig(2500.0, "hold")  # frictionless: the load gets the pull itself (440 N today)

    def failing_between(r, **kwargs):
        pull = next(r.points_of_kind("haul")).force_N
        if 441.0 < pull < 2624.0:  # inside the bracket [440, 1.05 x 2500] the first guess makes
            return Result(status="diverged", message="no equilibrium (test)", subject="H")
        return solve(r, **kwargs)

    need = need_for_load(rig, solve(rig), "L", solve=failing_between)
    assert need.pull_needed_N is None and need.limit == "stops-holding"
    assert need.limit_message == "no equilibrium (test)" and 441.0 < need.limit_pull_N < 2624.0
