"""Each safety-check code is produced by a minimal rig/result and not produced when safe.

Results are built by hand (drawn geometry, chosen tensions) so the checks are tested
independently of the solver; a few tests at the end run end-to-end through
``solver.analysis.analyse``.  Specs are embedded in the rigs (no library needed).
"""

from __future__ import annotations

import math
import sys
import types
from dataclasses import replace

import pytest

from solver.checks import CODES, OVERPULL_FACTOR, pass_loads, run_checks
from solver.model import Display, Feature, Hardware, Material, Pass, Point, Rig, Rope, Settings, Site
from solver.result import AnchorResult, HoldRange, Result, SegmentResult, Warning_

ROPE = Material(id="k11", kind="rope", mbs_N=30000.0, stretch=((3000.0, 0.03),), label="11 mm rope")
SLING = Material(id="web", kind="sling", mbs_N=18000.0, stretch=((1800.0, 0.02),), label="tubular webbing")
BIG = Material(id="big", kind="rope", mbs_N=1e12, stretch=((1e5, 0.01),))
PULLEY = Hardware(id="pul", kind="pulley", efficiency=0.9, mbs_N=36000.0, size_m=0.1, label="rescue pulley")
EDGE = Hardware(id="edg", kind="edge", friction_coefficient=0.44, label="concrete edge")


def codes(ws) -> list[str]:
    return [w.code for w in ws]


def hand_result(rig: Rig, tensions: dict[tuple[str, int], float], **kw) -> Result:
    """An ok Result at the drawn geometry with the given piece tensions (N); other fields via kw."""
    pos = {p.id: (p.x, p.y) for p in rig.points}
    pos.update(kw.pop("points", {}))
    segs = []
    for rope in rig.ropes:
        for i in range(len(rope.path) - 1):
            a, b = rope.path[i].at, rope.path[i + 1].at
            t = tensions.get((rope.id, i), 0.0)
            segs.append(SegmentResult(rope.id, i, a, b, t, math.dist(pos[a], pos[b]), 0.0, 0.0))
    return Result(status="ok", points=pos, segments=tuple(segs), **kw)


def anchor_result(force: float, cap: float | None) -> AnchorResult:
    return AnchorResult(force_N=force, direction_deg=0.0, capacity_N=cap, utilization=None)


def line_rig(cap: float | None = 20000.0, material: Material = ROPE, **settings) -> Rig:
    """A load tied to one anchor 10 m away with one rope."""
    pts = (Point("L", "load", 0.0, 0.0, label="raft"), Point("A", "anchor", 0.0, 10.0, capacity_N=cap, label="alder"))
    rope = Rope("r", material.id, (Pass("L"), Pass("A")), label="main line")
    return Rig(points=pts, ropes=(rope,), materials=(material,), settings=Settings(**settings))


def test_every_code_has_a_meaning():
    assert all(isinstance(v, str) and v for v in CODES.values())


# --- anchors ------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "force, expected",
    # capacity 20 kN, safety factor 10 (common practice; check-values.md "Safety factors"):
    # 1.9 kN -> 10.5:1 fine; 2.1 kN -> 9.5:1 margin; 21 kN -> over capacity
    [(1900.0, []), (2100.0, ["anchor-margin"]), (21000.0, ["anchor-over"])],
)
def test_anchor_capacity_against_safety_factor(force, expected):
    rig = line_rig()
    res = hand_result(rig, {("r", 0): 1.0}, anchors={"A": anchor_result(force, 20000.0)})
    found = [c for c in codes(run_checks(rig, res)) if c.startswith("anchor")]
    assert found == expected


def test_anchor_over_is_danger_and_names_the_anchor_in_display_units():
    rig = replace(line_rig(), display=Display(length="ft", force="lbf"))
    res = hand_result(rig, {("r", 0): 1.0}, anchors={"A": anchor_result(21000.0, 20000.0)})
    w = next(w for w in run_checks(rig, res) if w.code == "anchor-over")
    assert w.severity == "danger" and w.subject == "A" and "alder" in w.message
    # 21 kN = 4721 lbf (NIST SP 811: 1 lbf = 4.4482216152605 N)
    assert f"{21000.0 / 4.4482216152605:,.0f} lbf".replace(",", "\u202f") in w.message  # thousands spaced


@pytest.mark.parametrize(
    "force, expected",
    # A rated working load of 2 kN (capacity_kind "working") already has its factor in it: no safety
    # factor is applied (rig-format.md additions). Worked by hand: 1.9 kN < 2 kN -> nothing, where the
    # same 2 kN read as a breaking strength gives 2 kN / 1.9 kN = 1.05:1 < 10:1, a margin warning;
    # 2.1 kN > 2 kN -> over, danger, either way.
    [(1900.0, []), (2100.0, ["anchor-over"])],
)
def test_a_working_load_capacity_warns_only_above_it(force, expected):
    rig = line_rig(cap=2000.0)
    rig = rig.with_point(replace(rig.point("A"), capacity_kind="working"))
    res = hand_result(rig, {("r", 0): 1.0}, anchors={"A": anchor_result(force, 2000.0)})
    found = [w for w in run_checks(rig, res) if w.code.startswith("anchor")]
    assert [w.code for w in found] == expected
    if found:
        assert "rated working load" in found[0].message and found[0].severity == "danger"
    strength = line_rig(cap=2000.0)  # the same number as a breaking strength: 2 kN / 10 = 0.2 kN allowed
    res_s = hand_result(strength, {("r", 0): 1.0}, anchors={"A": anchor_result(force, 2000.0)})
    assert [c for c in codes(run_checks(strength, res_s)) if c.startswith("anchor")] == \
        (["anchor-margin"] if force <= 2000.0 else ["anchor-over"])


def test_unrated_anchor_is_info_when_loaded_and_silent_when_not():
    rig = line_rig(cap=None)
    loaded = hand_result(rig, {("r", 0): 1.0}, anchors={"A": anchor_result(1000.0, None)})
    ws = [w for w in run_checks(rig, loaded) if w.code == "anchor-unrated"]
    assert len(ws) == 1 and ws[0].severity == "info"
    idle = hand_result(rig, {}, anchors={"A": anchor_result(0.0, None)})
    assert "anchor-unrated" not in codes(run_checks(rig, idle))


def test_hold_uses_the_high_end_of_the_anchor_range():
    rig = line_rig(motion="hold")
    nominal = {"A": anchor_result(1500.0, 20000.0)}
    res = hand_result(rig, {("r", 0): 1.0}, anchors=nominal)
    assert "anchor-margin" not in codes(run_checks(rig, res))
    held = replace(res, hold_anchor_range={"A": HoldRange(low=900.0, high=2500.0)})
    assert "anchor-margin" in codes(run_checks(rig, held))


# --- rope pieces ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    "tension, expected",
    # MBS 30 kN at 10:1: 2.9 kN fine, 3.1 kN margin, 31 kN over
    [(2900.0, []), (3100.0, ["rope-margin"]), (31000.0, ["rope-over"])],
)
def test_rope_piece_against_mbs_and_safety_factor(tension, expected):
    rig = line_rig(cap=1e9)
    res = hand_result(rig, {("r", 0): tension})
    assert [c for c in codes(run_checks(rig, res)) if c.startswith("rope")] == expected


def test_sling_margin_says_sling():
    rig = line_rig(cap=1e9, material=SLING)
    w = next(w for w in run_checks(rig, hand_result(rig, {("r", 0): 2000.0})) if w.code == "rope-margin")
    assert "sling" in w.message and "9.0:1" in w.message  # 18 kN / 2 kN


def test_unknown_material_is_reported_not_ignored():
    rig = replace(line_rig(cap=1e9), materials=())
    rig = replace(rig, ropes=(replace(rig.ropes[0], material="no-such-rope"),))
    assert "spec-unknown" in codes(run_checks(rig, hand_result(rig, {("r", 0): 500.0})))


# --- hardware -------------------------------------------------------------------------------


def redirect_rig(included_deg: float, material: Material = BIG) -> Rig:
    """A redirect pulley at anchor A (origin); legs 10 m long with the given included angle."""
    h = math.radians(included_deg) / 2
    pts = (
        Point("L", "load", 10 * math.sin(h), 10 * math.cos(h)),
        Point("A", "anchor", 0.0, 0.0, capacity_N=1e9, label="bank boulder"),
        Point("B", "anchor", -10 * math.sin(h), 10 * math.cos(h), capacity_N=1e9),
    )
    rope = Rope("r", material.id, (Pass("L"), Pass("A", "pulley", "pul"), Pass("B")), label="main line")
    return Rig(points=pts, ropes=(rope,), materials=(material,), hardware=(PULLEY,))


@pytest.mark.parametrize("included", [0.0, 60.0, 90.0, 120.0, 170.0])
def test_pulley_load_is_the_redirect_resultant(included):
    # redirect resultant, equal legs: R = 2 T cos(alpha/2) (check-values.md, "Anchors and redirects")
    rig = redirect_rig(max(included, 1e-9))
    res = hand_result(rig, {("r", 0): 1000.0, ("r", 1): 1000.0})
    (rope, k, at, f), = [x for x in pass_loads(rig, res) if x[2] == "A"]
    assert f == pytest.approx(2 * 1000.0 * math.cos(math.radians(included) / 2), abs=1e-6)


def test_pulley_load_with_unequal_legs():
    # legs T and eta*T: R = T sqrt(1 + eta^2 + 2 eta cos alpha) (check-values.md, derived)
    rig = redirect_rig(90.0)
    res = hand_result(rig, {("r", 0): 1000.0, ("r", 1): 900.0})
    f = next(x[3] for x in pass_loads(rig, res) if x[2] == "A")
    assert f == pytest.approx(1000.0 * math.sqrt(1 + 0.81 + 2 * 0.9 * math.cos(math.radians(90))))


def test_hardware_margin_uses_the_vector_sum_not_the_sum_of_tensions():
    # T = 2.6 kN per leg, pulley MBS 36 kN at 10:1:
    # at 90 deg R = 3.68 kN (x10 > 36 kN: margin); at 120 deg R = 2.6 kN (fine) although 2T = 5.2 kN
    t = {("r", 0): 2600.0, ("r", 1): 2600.0}
    at90 = redirect_rig(90.0)
    at120 = redirect_rig(120.0)
    assert "hardware-margin" in codes(run_checks(at90, hand_result(at90, t)))
    assert "hardware-margin" not in codes(run_checks(at120, hand_result(at120, t)))
    at0 = redirect_rig(1e-9)
    over = hand_result(at0, {("r", 0): 19000.0, ("r", 1): 19000.0})  # R = 38 kN > 36 kN
    w = next(w for w in run_checks(at0, over) if w.code == "hardware-over")
    assert w.severity == "danger" and w.subject == "r@A"


# --- slack, two-blocking --------------------------------------------------------------------


def test_slack_run_is_warned_and_taut_run_is_not():
    rig = line_rig(cap=1e9)
    assert "slack-run" in codes(run_checks(rig, hand_result(rig, {("r", 0): 0.0})))
    assert "slack-run" not in codes(run_checks(rig, hand_result(rig, {("r", 0): 50.0})))


def _travelling_pulley_rig(gap_m: float) -> Rig:
    """A 2:1: rope from anchor A down round a travelling pulley at free point T, back up to a hauled end."""
    pts = (
        Point("A", "anchor", 0.0, 10.0, capacity_N=1e9),
        Point("T", "point", 0.3, 10.0 - gap_m, label="travelling pulley"),
        Point("F", "anchor", 0.6, 10.0, capacity_N=1e9, label="fixed pulley"),
        Point("H", "haul", 0.6, 20.0, force_N=400.0),
    )
    rope = Rope("c", "big", (Pass("A"), Pass("T", "pulley", "pul"), Pass("F", "pulley", "pul"), Pass("H", "hauled")))
    return Rig(points=pts, ropes=(rope,), materials=(BIG,), hardware=(PULLEY,))


def test_two_blocked_when_pulleys_meet_and_not_when_apart():
    # pieces T-F shorter than the pulley size (0.1 m) + tolerance are two-blocked
    close = _travelling_pulley_rig(3.0).moved("T", 0.55, 10.0)  # 0.05 m from the fixed pulley F
    t = {("c", 0): 400.0, ("c", 1): 400.0, ("c", 2): 400.0}
    assert "two-blocked" in codes(run_checks(close, hand_result(close, t)))
    far = _travelling_pulley_rig(3.0)
    assert "two-blocked" not in codes(run_checks(far, hand_result(far, t)))


# --- abrasion --------------------------------------------------------------------------------


def abrasion_rig(edge_at: tuple[float, float] | None, feature_kind: str = "boulder") -> Rig:
    """Load at the origin, anchor 20 m north; a boulder square 8..10 m north straddles the line.

    With ``edge_at`` the rope goes over an edge pass at that point on its way to the anchor.
    """
    boulder = Feature("R1", feature_kind, polygon=((-1.0, 8.0), (1.0, 8.0), (1.0, 10.0), (-1.0, 10.0)), label="pin rock")
    pts = [Point("L", "load", 0.0, 0.0), Point("A", "anchor", 0.0, 20.0, capacity_N=1e9)]
    path = [Pass("L"), Pass("A")]
    if edge_at is not None:
        pts.append(Point("E", "anchor", *edge_at, label="rock lip"))
        path = [Pass("L"), Pass("E", "edge", "edg"), Pass("A")]
    rope = Rope("r", "big", tuple(path), label="main line")
    return Rig(points=tuple(pts), ropes=(rope,), materials=(BIG,), hardware=(EDGE,),
               site=Site(features=(boulder,)))


def test_rope_over_a_boulder_without_an_edge_is_abrasion():
    rig = abrasion_rig(None)
    ws = [w for w in run_checks(rig, hand_result(rig, {("r", 0): 1000.0})) if w.code == "abrasion"]
    # the line x = 0 crosses the 2 m square from y = 8 to y = 10
    assert len(ws) == 1 and ws[0].subject == "r,R1" and "pin rock" in ws[0].message and "2.00 m" in ws[0].message


def test_rope_over_a_boulder_at_an_edge_pass_is_not_abrasion():
    # the rope is drawn up onto the boulder's far lip (0, 10) as an edge pass, then on to the anchor
    rig = abrasion_rig(edge_at=(0.0, 10.0))
    res = hand_result(rig, {("r", 0): 1000.0, ("r", 1): 1200.0})
    assert "abrasion" not in codes(run_checks(rig, res))


def test_an_edge_pass_elsewhere_does_not_protect_the_boulder():
    rig = abrasion_rig(edge_at=(0.0, 5.0))  # the edge is 3 m short of the boulder
    res = hand_result(rig, {("r", 0): 1000.0, ("r", 1): 1200.0})
    ws = [w for w in run_checks(rig, res) if w.code == "abrasion"]
    assert len(ws) == 1 and "rock lip" in ws[0].message  # the E-A piece


def test_rope_beside_a_boulder_is_not_abrasion():
    rig = abrasion_rig(None).moved("L", 3.0, 0.0).moved("A", 3.0, 20.0)
    assert "abrasion" not in codes(run_checks(rig, hand_result(rig, {("r", 0): 1000.0})))


def test_rope_across_a_hazard_line_is_abrasion():
    fence = Feature("F1", "hazard", line=((-5.0, 5.0), (5.0, 5.0)), label="wire fence")
    rig = replace(abrasion_rig(None), site=Site(features=(fence,)))
    assert "abrasion" in codes(run_checks(rig, hand_result(rig, {("r", 0): 1000.0})))


def test_water_is_not_abrasive():
    water = Feature("W1", "water", polygon=((-5.0, 2.0), (5.0, 2.0), (5.0, 6.0), (-5.0, 6.0)))
    rig = replace(abrasion_rig(None), site=Site(features=(water,)))
    assert "abrasion" not in codes(run_checks(rig, hand_result(rig, {("r", 0): 1000.0})))


# --- hauling: overpull and a load not freed ------------------------------------------------------


def haul_rig(required: float | None, team: int = 4, per_person: float = 220.0, **settings) -> Rig:
    """A fixed load hauled through one anchor pulley (geometry only matters for names here)."""
    pts = (
        Point("L", "load", 0.0, 0.0, required_N=required, label="pinned raft"),
        Point("A", "anchor", 0.0, 20.0, capacity_N=1e9),
        Point("H", "haul", 5.0, 20.0, team=team, force_per_person_N=per_person, label="haul team"),
    )
    rope = Rope("m", "big", (Pass("L"), Pass("A", "pulley", "pul"), Pass("H", "hauled")))
    return Rig(points=pts, ropes=(rope,), materials=(BIG,), hardware=(PULLEY,), settings=Settings(**settings))


def haul_result(rig: Rig, delivered: float, ma_actual: float, ma_ideal: float) -> Result:
    return hand_result(rig, {("m", 0): delivered, ("m", 1): delivered},
                       loads={"L": anchor_result(delivered, None)}, haul={"H": 880.0},
                       ma_actual=ma_actual, ma_ideal=ma_ideal)


def test_overpull_when_team_times_ideal_ma_exceeds_twice_required():
    # 4 x 220 N x ideal MA 3 = 2640 N potential; limit 2 x required (rule in solver/checks.py)
    rig = haul_rig(required=1000.0)
    ws = [w for w in run_checks(rig, haul_result(rig, 2385.0, 2.71, 3.0)) if w.code == "overpull"]
    assert len(ws) == 1 and ws[0].subject == "L"
    assert 4 * 220.0 * 3.0 > OVERPULL_FACTOR * 1000.0
    safe = haul_rig(required=2000.0)  # limit 4000 N > 2640 N
    assert "overpull" not in codes(run_checks(safe, haul_result(safe, 2385.0, 2.71, 3.0)))


def test_overpull_uses_the_larger_of_nominal_and_ideal_ma():
    # A Z drawn at angles: ideal 2.2 at the drawn angles, nominal 3:1 by strand count. The overpull check
    # takes the more conservative (larger) one: 4 x 220 N x 3 = 2640 N > 2 x 1200 N = 2400 N (rule in
    # solver/checks.py, common practice, no source), while 4 x 220 N x 2.2 = 1936 N would pass.
    rig = haul_rig(required=1200.0)
    res = replace(haul_result(rig, 1500.0, 1.9, 2.2), ma_nominal=3.0)
    ws = [w for w in run_checks(rig, res) if w.code == "overpull"]
    assert len(ws) == 1 and "nominal MA 3.00" in ws[0].message and "2.64 kN" in ws[0].message
    assert "overpull" not in codes(run_checks(rig, haul_result(rig, 1500.0, 1.9, 2.2)))  # ideal alone: fine
    # the other way round (ideal above nominal, e.g. a vector-pull stage) the ideal is used
    res2 = replace(haul_result(rig, 1500.0, 1.9, 3.0), ma_nominal=2.0)
    assert "ideal MA 3.00" in next(w for w in run_checks(rig, res2) if w.code == "overpull").message


def test_overpull_limit_setting_overrides_the_rule():
    rig = haul_rig(required=2000.0, extra={"overpull_limit_N": 2500.0})
    assert "overpull" in codes(run_checks(rig, haul_result(rig, 2385.0, 2.71, 3.0)))


def test_overpull_limited_by_the_weakest_attachment_at_the_load():
    # no required force: the limit is the load rope's MBS / SF = 30 kN / 10 = 3 kN < 6 x 880 N
    rig = replace(haul_rig(required=None), materials=(ROPE,))
    rig = replace(rig, ropes=(replace(rig.ropes[0], material="k11"),))
    ws = [w for w in run_checks(rig, haul_result(rig, 4000.0, 4.5, 6.0)) if w.code == "overpull"]
    assert len(ws) == 1 and "working strength" in ws[0].message


def test_load_not_freed_says_the_pull_and_pullers_it_takes():
    # One pulley at a fixed anchor between a fixed load and the haul team: no point moves, so the load
    # gets eta x pull exactly (T-method, check-values.md): 2500 N needs 2500 / 0.9 = 2777.8 N of pull,
    # ceil(2777.8 / 220) = 13 pullers.  The pull is found by solving the rig (solver.pull_needed).
    from solver.analysis import analyse

    rig = haul_rig(required=2500.0)
    ws = [w for w in analyse(rig).warnings if w.code == "load-stuck"]
    assert len(ws) == 1
    assert "2.78 kN" in ws[0].message and f"{math.ceil(2500.0 / 0.9 / 220.0)} pullers" in ws[0].message


def test_load_freed_when_delivered_reaches_required():
    rig = haul_rig(required=2000.0)
    assert "load-stuck" not in codes(run_checks(rig, haul_result(rig, 2385.0, 2.71, 3.0)))


def test_no_overpull_check_while_holding_but_a_short_load_is_still_warned():
    rig = haul_rig(required=5000.0, motion="hold")
    found = codes(run_checks(rig, haul_result(rig, 2385.0, 2.71, 3.0)))
    assert "load-stuck" in found and "overpull" not in found


# --- failed solves and analyse ---------------------------------------------------------------------


def test_failed_result_skips_force_checks_but_checks_drawn_geometry():
    rig = abrasion_rig(None)
    rig = replace(rig, points=tuple(replace(p, capacity_N=None) if p.kind == "anchor" else p for p in rig.points))
    found = codes(run_checks(rig, Result(status="mechanism", message="T is not held", subject="T")))
    assert found[0] == "checks-skipped"
    assert "abrasion" in found and "anchor-unrated" in found
    assert not {"anchor-over", "rope-margin", "slack-run", "person-in-zone"} & set(found)


def test_analyse_puts_solver_warnings_first_and_keeps_failure_status(monkeypatch):
    rig = line_rig(cap=1e9)
    solver_w = Warning_("solver-note", "r", "from the solver", "info")
    fake = types.ModuleType("solver.equilibrium")
    fake.solve = lambda r, *, start=None, motion=None, trail=None: hand_result(r, {("r", 0): 0.0}, warnings=(solver_w,))
    monkeypatch.setitem(sys.modules, "solver.equilibrium", fake)
    from solver.analysis import analyse

    res = analyse(rig)
    assert res.ok and res.warnings[0] == solver_w and "slack-run" in codes(res.warnings)
    fake.solve = lambda r, *, start=None, motion=None, trail=None: Result(status="invalid", message="bad", subject="r")
    bad = analyse(rig)
    assert bad.status == "invalid" and bad.message == "bad" and codes(bad.warnings) == ["checks-skipped"]


def test_analyse_does_not_repeat_a_warning_the_solver_already_gave(monkeypatch):
    rig = line_rig(cap=1e9)
    dup = run_checks(rig, hand_result(rig, {("r", 0): 0.0}))
    fake = types.ModuleType("solver.equilibrium")
    fake.solve = lambda r, *, start=None, motion=None, trail=None: hand_result(r, {("r", 0): 0.0}, warnings=dup)
    monkeypatch.setitem(sys.modules, "solver.equilibrium", fake)
    from solver.analysis import analyse

    assert analyse(rig).warnings == dup


def test_geometric_two_block_check_defers_to_the_solver():
    close = _travelling_pulley_rig(3.0).moved("T", 0.55, 10.0)
    t = {("c", 0): 400.0, ("c", 1): 400.0, ("c", 2): 400.0}
    solver_says = Warning_("two-blocked", "T", "from the solver", "danger")
    res = hand_result(close, t, warnings=(solver_says,))
    assert "two-blocked" not in codes(run_checks(close, res))


# --- end to end through the solver -------------------------------------------------------------

STIFF = Material(id="stiff", kind="rope", mbs_N=1e12, stretch=((1e7, 0.01),))  # EA = 1e9 N


def _master_point_rig(included_deg: float, person_at=(0.0, -3.0)) -> Rig:
    """Master point M pulled down with 1 kN, held by two stiff legs tied to anchors at +-alpha/2 from +y."""
    from solver.model import Force

    h = math.radians(included_deg) / 2
    pts = (
        Point("A1", "anchor", -4 * math.sin(h), 4 * math.cos(h), capacity_N=2e4),
        Point("A2", "anchor", 4 * math.sin(h), 4 * math.cos(h), capacity_N=2e4),
        Point("M", "point", 0.0, 0.0, label="master point"),
        Point("P", "person", *person_at, label="rigger"),
    )
    legs = (Rope("s1", "stiff", (Pass("A1"), Pass("M"))), Rope("s2", "stiff", (Pass("A2"), Pass("M"))))
    return Rig(points=pts, ropes=legs, materials=(STIFF,),
               forces=(Force("M", 1000.0, 270.0),), settings=Settings(motion="hold"))


@pytest.mark.parametrize("included, warned", [(110.0, False), (130.0, True)])
def test_solved_two_leg_anchor_matches_asme_leg_factor_and_warns_over_120(included, warned):
    from solver.analysis import analyse

    res = analyse(_master_point_rig(included))
    assert res.ok, res.message
    # ASME B30.9 load-angle factor 1/sin(beta), beta each leg's angle from the horizontal: here the load
    # hangs straight down between symmetric legs, so beta = (180 - included) / 2 and leg = (W/2) / sin(beta)
    # (check-values.md, "Anchors and redirects"), W = 1 kN
    beta = math.radians((180.0 - included) / 2.0)
    leg_N = (1000.0 / 2.0) / math.sin(beta)
    for s in res.segments:
        assert s.tension_N == pytest.approx(leg_N, rel=1e-5)
    assert ("wide-anchor" in codes(res.warnings)) is warned
    if warned:
        from solver.units import format_force

        w = next(w for w in res.warnings if w.code == "wide-anchor")
        assert f"Now: {format_force(leg_N, 'kN')} to A1" in w.message


def test_solved_redirect_pulley_load_equals_the_solvers_anchor_resultant():
    from solver.equilibrium import solve

    pts = (
        Point("L", "load", 10.0, 0.0, fixed=False, label="raft"),
        Point("A", "anchor", 0.0, 0.0, capacity_N=1e9),
        Point("H", "haul", 0.0, 10.0, force_N=1000.0),
        Point("B", "anchor", 20.0, 0.0, capacity_N=1e9),
    )
    ropes = (
        Rope("m", "stiff", (Pass("L"), Pass("A", "pulley", "pul"), Pass("H", "hauled"))),
        Rope("b", "stiff", (Pass("L"), Pass("B"))),
    )
    rig = Rig(points=pts, ropes=ropes, materials=(STIFF,), hardware=(PULLEY,))
    res = solve(rig)
    assert res.ok, res.message
    f = next(x[3] for x in pass_loads(rig, res) if x[2] == "A")
    assert f == pytest.approx(res.anchors["A"].force_N, rel=1e-9)


def test_person_in_the_bight_of_a_solved_redirect_is_warned():
    from solver.analysis import analyse

    # a free load held back by a tie to B, hauled through a redirect at A (90 deg turn)
    pts = (
        Point("L", "load", 10.0, 0.0, fixed=False, label="raft"),
        Point("A", "anchor", 0.0, 0.0, capacity_N=2e4, label="boulder"),
        Point("H", "haul", 0.0, 10.0, force_N=1000.0, label="haul team"),
        Point("B", "anchor", 20.0, 0.0, capacity_N=2e4),
        Point("P", "person", 3.0, 3.0, label="rigger"),
    )
    ropes = (
        Rope("m", "stiff", (Pass("L"), Pass("A", "pulley", "pul"), Pass("H", "hauled"))),
        Rope("b", "stiff", (Pass("L"), Pass("B"))),
    )
    rig = Rig(points=pts, ropes=ropes, materials=(STIFF,), hardware=(PULLEY,))
    res = analyse(rig)
    assert res.ok, res.message
    ws = [w for w in res.warnings if w.code == "person-in-zone"]
    assert [w.subject for w in ws] == ["P,A"]
    safe = analyse(rig.moved("P", -5.0, -5.0))
    assert "person-in-zone" not in codes(safe.warnings)


def test_every_sample_analyses_with_known_codes():
    from solver.analysis import analyse
    from solver.danger import danger_zones
    from solver.rigfile import load_rig
    from tests.conftest import SAMPLES

    files = sorted(SAMPLES.glob("*.rig.json"))
    assert files
    for f in files:
        rig = load_rig(f)
        res = analyse(rig)
        assert res.ok, f"{f.name}: {res.message}"
        own = {w.code for w in run_checks(rig, res)}
        assert own <= set(CODES), f"{f.name}: {own - set(CODES)}"
        assert "checks-failed" not in {w.code for w in res.warnings}
        zones = danger_zones(rig, res)
        assert all(z.geometry.is_valid and z.geometry.area > 0 for z in zones)


def test_hold_uses_the_anchor_range_for_the_redirect_pulley_alone_on_it():
    # pulley MBS 36 kN at 10:1; solved legs 1.5 kN at 90 deg give R = 2.12 kN (fine), but static
    # friction allows the anchor (and so the pulley, the only thing on it) up to 3.7 kN
    rig = replace(redirect_rig(90.0), settings=Settings(motion="hold"))
    res = hand_result(rig, {("r", 0): 1500.0, ("r", 1): 1500.0})
    assert "hardware-margin" not in codes(run_checks(rig, res))
    held = replace(res, hold_anchor_range={"A": HoldRange(low=1800.0, high=3700.0)})
    assert "hardware-margin" in codes(run_checks(rig, held))


def test_capture_warnings_for_lowering_and_a_grab_below_the_held_force():
    # check-values.md "Knots and grabs": a 3-wrap prusik begins to slip around 7-9.5 kN (common practice);
    # a capture holding more than its grab's slip force slides instead of holding
    from solver.analysis import analyse
    from solver.model import Hardware, Pass, Point, Rig, Rope, Settings

    def rig_with(slip: float, motion: str = "haul") -> Rig:
        grab = Hardware("g", "grab", mbs_N=20000.0, slip_N=slip, label="test grab")
        return Rig(points=(Point("L", "load", 0, 0), Point("A", "anchor", 0, 10), Point("H", "haul", 0, 14, force_N=9000.0)),
                   ropes=(Rope("r", "kern-11", (Pass("L"), Pass("A", "capture", "pulley-large", grab="g"),
                                                 Pass("H", "hauled"))),),
                   hardware=(grab,), settings=Settings(motion=motion))

    codes = lambda rig: {w.code for w in analyse(rig).warnings}  # noqa: E731
    assert "capture-slips" in codes(rig_with(8000.0))  # 9 kN x 0.95 held > 8 kN
    assert "capture-slips" not in codes(rig_with(9500.0))
    assert "capture-lowering" in codes(rig_with(9500.0, "lower"))
    assert "capture-lowering" not in codes(rig_with(9500.0))
