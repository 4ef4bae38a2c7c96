"""Ready-made systems: what they add, that they solve, and the MA they deliver.

Reference values are computed here from the T-method (check-values.md, "Pulley friction
and actual mechanical advantage", derived): with pulleys of efficiency eta and the haul
strand parallel to the load line, 2:1 = 1 + eta, 3:1 = 1 + eta + eta^2, 5:1 = sum eta^k,
compound = product of its stages.  Rigs embed a linear rope and an eta = 0.9 pulley
(tests/rigs.py), so nothing depends on the library values.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solver.errors import RigModelError
from solver.model import Point
from solver.templates import TEMPLATES, new_ids, place_template
from tests import rigs

ETA = 0.9
EA = 1.0e5  # N, linear test rope
HAUL_N = 600.0


def t_method(ma: str, eta: float) -> float:
    """Actual MA by the T-method (check-values.md, derived), written out per system."""
    z = 1 + eta + eta**2
    return {
        "2:1": 1 + eta,
        "3:1": z,
        "4:1": (1 + eta) ** 2,  # compound 2:1 on 2:1: product of the stages
        "5:1": sum(eta**k for k in range(5)),
        "6:1": (1 + eta) * z,
        "9:1": z * z,
        "redirect": eta,  # one pulley between the load and the haul team
    }[ma]


MA_SYSTEMS = ("2:1", "3:1", "4:1", "5:1", "6:1", "9:1", "redirect")


def site(load_xy=(0.0, 0.0), anchor_xy=(0.0, 20.0), extra=()) -> "rigs.Rig":
    """A bare site: a fixed load, one anchor (plus extra anchors), test rope and eta pulley embedded."""
    pts = [rigs.load("L", *load_xy), rigs.anchor("A", *anchor_xy)]
    pts += [rigs.anchor(f"A{i + 2}", *xy) for i, xy in enumerate(extra)]
    return rigs.make_rig(pts, [], hardware=[rigs.pulley("p", ETA)], ea=EA)


def place(rig, name, **kw):
    kw.setdefault("material", "lin")
    kw.setdefault("hardware", "p")
    t = TEMPLATES.get(name)
    if t is not None and t.ma_ideal is not None:
        kw.setdefault("haul_force_N", HAUL_N)
    return place_template(rig, name, **kw)


# --- what a template adds (no solver needed) -------------------------------------------


@pytest.mark.parametrize("name", MA_SYSTEMS + ("vector-pull", "vector-pull-capture"))
def test_template_adds_valid_ropes_on_existing_or_new_points(name):
    before = site()
    after = place(before, name, load_id="L", anchor_id="A")
    pts, ropes = new_ids(before, after)
    assert ropes, "a template must add at least one rope"
    assert before.points == after.points[: len(before.points)], "existing points are kept unchanged"
    ids = {p.id for p in after.points}
    for r in after.ropes:
        assert all(ps.at in ids for ps in r.path)
        assert r.path[0].how == "tied"
        assert r.path[-1].how in ("tied", "hauled")
        assert all(ps.how in ("tied", "pulley", "sliding", "capture") for ps in r.path[1:-1])
        assert all(ps.hardware == "p" for ps in r.path if ps.how in ("pulley", "capture"))
    assert len(ids) == len(after.points), "ids stay unique"


def test_three_to_one_is_a_z_on_a_grab_halfway_to_the_anchor():
    after = place(site(), "3:1", load_id="L", anchor_id="A")
    (rope,) = after.ropes
    g = rope.path[1].at
    assert [(p.at, p.how) for p in rope.path] == [("L", "tied"), (g, "tied"), ("A", "capture"), (g, "pulley"),
                                                   (rope.path[-1].at, "hauled")]
    assert rope.path[2].grab == "prusik-3-wrap"  # the kit's progress capture holds with a prusik
    assert after.point(g).xy == pytest.approx((0.0, 10.0))  # grab_fraction 0.5 of 20 m
    # haul team 5 m beyond the anchor on the load-anchor line, pulling the set force
    h = after.point(rope.path[-1].at)
    assert (h.kind, h.xy, h.haul_force) == ("haul", pytest.approx((0.0, 25.0)), HAUL_N)


def test_grab_fraction_and_haul_direction_scale_with_the_site():
    after = place(site(anchor_xy=(30.0, 0.0)), "2:1", load_id="L", anchor_id="A", grab_fraction=0.25,
                  haul_direction_deg=90.0, haul_distance_m=4.0)
    grab = next(p for p in after.points if p.label == "rope grab")
    haul = next(p for p in after.points if p.kind == "haul")
    assert grab.xy == pytest.approx((7.5, 0.0))
    assert haul.xy == pytest.approx((30.0, 4.0))


def test_fresh_ids_do_not_clash_when_placed_twice():
    rig = place(site(), "3:1", load_id="L", anchor_id="A")
    rig2 = place(rig, "3:1", load_id="L", anchor_id="A")
    assert len({p.id for p in rig2.points}) == len(rig2.points)
    assert len({r.id for r in rig2.ropes}) == len(rig2.ropes) == 2


def test_team_defaults_to_enough_haulers_for_the_required_force_at_t_method_ma():
    rig = site()
    rig = rig.with_point(Point("L", "load", 0.0, 0.0, fixed=True, required_N=3000.0))
    after = place_template(rig, "3:1", load_id="L", anchor_id="A", material="lin", hardware="p")
    h = next(p for p in after.points if p.kind == "haul")
    # 3000 N / (2.71 x 220 N) = 5.03 -> 6 haulers (T-method at eta 0.9; 220 N each: common practice,
    # no source); the ideal 3:1 would have said 5
    assert (h.team, h.force_per_person_N) == (math.ceil(3000.0 / ((1 + ETA + ETA**2) * 220.0)), 220.0) == (6, 220.0)


@pytest.mark.parametrize(
    "kwargs, words",
    [
        (dict(name="7:1", load_id="L", anchor_id="A"), "no ready-made system"),
        (dict(name="3:1", load_id="nope", anchor_id="A"), "not in the drawing"),
        (dict(name="3:1", anchor_id="A"), "needs a load"),
        (dict(name="3:1", load_id="L", anchor_id="A", grab_fraction=0.99), "rope grab"),
        (dict(name="anchor-shared", load_id="L", anchor_id="A"), "more anchor"),
        (dict(name="tensioned-line", anchor_id="A", extra_anchor_ids=("A",)), "picked twice"),
        (dict(name="3:1", load_id="L", anchor_id="L"), "same point"),
    ],
)
def test_bad_picks_are_refused_in_words(kwargs, words):
    kwargs = dict(kwargs)
    name = kwargs.pop("name")
    with pytest.raises(RigModelError, match=words):
        place(site(), name, **kwargs)


def test_coincident_load_and_anchor_is_refused():
    with pytest.raises(RigModelError, match="same place"):
        place(site(anchor_xy=(0.0, 0.0)), "3:1", load_id="L", anchor_id="A")


def test_unknown_library_hardware_is_refused_before_building():
    with pytest.raises(RigModelError):
        place_template(site(), "3:1", load_id="L", anchor_id="A", material="lin", hardware="no-such-pulley")


def test_every_template_has_a_description_and_what_it_needs():
    for t in TEMPLATES.values():
        assert len(t.description) > 40 and t.title and t.needs
        assert t.extra_anchors[0] <= t.extra_anchors[1]


# --- solved end to end ------------------------------------------------------------------

def solved(rig):
    from solver import equilibrium

    res = equilibrium.solve(rig)
    assert res.ok, rigs.describe(res)
    return res


@pytest.mark.parametrize("name", MA_SYSTEMS)
def test_template_delivers_t_method_ma_with_90pct_pulleys(name):
    rig = place(site(), name, load_id="L", anchor_id="A")
    res = solved(rig)
    expected = t_method(name, ETA)
    # T-method (check-values.md, derived): 2:1 1.9, 3:1 2.710, 4:1 3.61, 5:1 4.095, 6:1 5.149, 9:1 7.344
    assert res.ma_actual == pytest.approx(expected, rel=1e-6), (name, res.ma_actual, expected)
    assert res.ma_ideal == pytest.approx(TEMPLATES[name].ma_ideal, rel=1e-9), (name, res.ma_ideal)
    if name != "redirect":
        # force delivered to the load = actual MA x haul force
        assert res.loads["L"].force_N == pytest.approx(expected * HAUL_N, rel=1e-6)


def test_t_method_reference_values_match_check_values():
    # the quoted values in check-values.md, so the reference function itself is checked
    assert t_method("3:1", 0.9) == pytest.approx(2.710, abs=5e-4)
    assert t_method("5:1", 0.9) == pytest.approx(4.095, abs=5e-4)
    assert t_method("6:1", 0.9) == pytest.approx(5.149, abs=5e-4)


@pytest.mark.parametrize("name", ("3:1", "6:1", "9:1", "5:1"))
@pytest.mark.parametrize("angle, shift", [(37.0, (12.0, -40.0)), (200.0, (-5.0, 3.0)), (291.0, (0.0, 0.0))])
def test_template_ma_does_not_depend_on_where_it_is_placed(name, angle, shift):
    c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
    L = np.array(shift)
    A = L + 14.0 * np.array([c, s])  # a shorter span, turned and moved
    rig = place(site(tuple(L), tuple(A)), name, load_id="L", anchor_id="A")
    res = solved(rig)
    assert res.ma_actual == pytest.approx(t_method(name, ETA), rel=1e-6)
    # the load is pulled toward the anchor
    assert (res.loads["L"].direction_deg - angle + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=1e-6)


def test_vector_pull_template_solves_to_two_force_node_statics():
    rig = place(site(), "vector-pull", load_id="L", anchor_id="A", pull_force_N=300.0)
    res = solved(rig)
    v = next(p.id for p in rig.points if p.kind == "point")
    hand, L, A = rigs.xy(res, v), rigs.xy(res, "L"), rigs.xy(res, "A")
    t1, t2 = (s.tension_N for s in res.segments)
    assert t1 == pytest.approx(t2, rel=1e-6)  # sliding hand: same tension both sides
    # each side makes theta with the original line; T = P / (2 sin theta) (check-values.md, statics)
    th1 = math.atan2(abs(hand[0] - L[0]), hand[1] - L[1])
    th2 = math.atan2(abs(hand[0] - A[0]), A[1] - hand[1])
    assert th1 == pytest.approx(th2, rel=1e-6)
    assert t1 == pytest.approx(300.0 / (2 * math.sin(th1)), rel=1e-6)
    assert hand[0] < 0  # default pull is to the left of the load->anchor line


def test_vector_pull_with_capture_holds_the_line_at_the_grab():
    rig = place(site(), "vector-pull-capture", load_id="L", anchor_id="A", pull_force_N=300.0,
                haul_at=(6.0, 10.0))
    res = solved(rig)
    line = next(r for r in rig.ropes if r.label == "vector-pull line")
    cord = next(r for r in rig.ropes if r.label.startswith("capture cord"))
    c = line.path[-1].at
    assert rig.point(c).xy == pytest.approx((0.0, 19.5))
    # the capture point balances line against cord: equal tensions along one straight pull
    t_line_last = [s for s in res.segments if s.rope == line.id][-1].tension_N
    t_cord = [s for s in res.segments if s.rope == cord.id][0].tension_N
    assert t_cord == pytest.approx(t_line_last, rel=1e-6)
    assert rigs.xy(res, next(p.id for p in rig.points if p.label.startswith("hand")))[0] > 0  # toward the puller
    assert any(p.kind == "person" for p in rig.points)


def test_redirect_anchor_takes_the_resultant_of_both_legs():
    rig = place(site(), "redirect", load_id="L", anchor_id="A")  # haul team 5 m to the left: 90 degree turn
    res = solved(rig)
    alpha = math.radians(90.0)  # included angle between the legs as drawn (load below, team to the side)
    # R = T sqrt(1 + eta^2 + 2 eta cos alpha) (check-values.md, derived), T the haul force
    expected = HAUL_N * math.sqrt(1 + ETA**2 + 2 * ETA * math.cos(alpha))
    assert res.anchors["A"].force_N == pytest.approx(expected, rel=1e-6)


def test_two_point_load_sharing_legs_follow_the_sling_angle():
    # symmetric anchors 4 m apart, load straight below: leg = W / (2 cos(alpha/2)) (check-values.md, ASME B30.9)
    rig = place(site((0.0, 0.0), (-2.0, 20.0), extra=[(2.0, 20.0)]), "anchor-shared", load_id="L",
                anchor_id="A", extra_anchor_ids=("A2",), pretension_N=1500.0, sling_material="lin")
    res = solved(rig)
    m = next(p.id for p in rig.points if p.label == "master point")
    M = rigs.xy(res, m)
    main = next(r.id for r in rig.ropes if r.label.startswith("main"))
    w = rigs.tension(res, main, 0)
    alpha = 2 * math.atan2(2.0, 20.0 - M[1])  # included angle at the solved master point
    legs = [s.tension_N for s in res.segments if s.rope != main]
    assert legs == pytest.approx([w / (2 * math.cos(alpha / 2))] * 2, rel=1e-6)
    assert 1000.0 < w <= 1500.0  # about the set tension, a little lost as the slings stretch


def test_self_equalising_master_slides_to_equal_angles_off_centre():
    # anchors at different heights: the master point slides until both legs carry one tension
    rig = place(site((0.0, 0.0), (-3.0, 20.0), extra=[(2.0, 22.0)]), "anchor-equalising", load_id="L",
                anchor_id="A", extra_anchor_ids=("A2",), pretension_N=1200.0)
    res = solved(rig)
    (sling,) = [r for r in rig.ropes if r.label == "self-equalising sling"]
    t = [s.tension_N for s in res.segments if s.rope == sling.id]
    assert t[0] == pytest.approx(t[1], rel=1e-9)
    assert rigs.free_point_residuals(rig, res)  # sanity: there is a free point
    for r in rigs.free_point_residuals(rig, res).values():
        assert np.hypot(*r) <= 1e-6 * rigs.largest_force(rig, res)


def test_three_point_equalising_sling_loads_the_middle_anchor_twice():
    rig = place(site((0.0, 0.0), (-3.0, 20.0), extra=[(0.0, 20.5), (3.0, 20.0)]), "anchor-equalising",
                load_id="L", anchor_id="A", extra_anchor_ids=("A2", "A3"), pretension_N=1200.0)
    res = solved(rig)
    # one tension in the whole sling (sliding everywhere); the middle anchor holds two strands
    (sling,) = [r for r in rig.ropes if r.label == "self-equalising sling"]
    ts = [s.tension_N for s in res.segments if s.rope == sling.id]
    assert max(ts) == pytest.approx(min(ts), rel=1e-9)
    assert res.anchors["A2"].force_N > 1.5 * max(res.anchors["A"].force_N, res.anchors["A3"].force_N)


def test_tensioned_line_holds_its_pretension():
    rig = place(site((0.0, 0.0), (0.0, 20.0), extra=[(25.0, 20.0)]), "tensioned-line", anchor_id="A",
                extra_anchor_ids=("A2",), pretension_N=2500.0)
    res = solved(rig)
    (seg,) = res.segments
    assert seg.tension_N == pytest.approx(2500.0, rel=1e-9)
    assert res.anchors["A"].force_N == pytest.approx(2500.0, rel=1e-9)


def test_library_specs_give_the_quoted_3_to_1_at_95pct():
    # default rope kern-11 (non-linear stretch) and pulley-large (eta 0.95 in the library);
    # T-method 1 + 0.95 + 0.95^2 = 2.853 (check-values.md)
    rig = rigs.Rig(points=(rigs.load("L", 3.0, -1.0), rigs.anchor("A", -9.0, 17.0)))
    rig = place_template(rig, "3:1", load_id="L", anchor_id="A", haul_force_N=500.0)
    res = solved(rig)
    eta = 0.95
    assert res.ma_actual == pytest.approx(1 + eta + eta**2, rel=1e-6)
    assert res.ma_actual == pytest.approx(2.853, abs=5e-4)


@pytest.mark.parametrize("name", ("4:1", "6:1", "9:1"))
def test_compound_on_its_own_anchor_solves_and_loses_only_to_geometry(name):
    # second stage on an anchor off the line: the stages no longer pull in line, so the
    # delivered MA can only fall below the in-line T-method value (triangle inequality on each
    # stage: the magnitude of a sum of strand pulls is at most the sum of their tensions)
    rig = place(site(extra=[(3.0, 24.0)]), name, load_id="L", anchor_id="A", extra_anchor_ids=("A2",))
    res = solved(rig)
    assert 0.8 * t_method(name, ETA) < res.ma_actual <= t_method(name, ETA) * (1 + 1e-9)
    for r in rigs.free_point_residuals(rig, res).values():
        assert np.hypot(*r) <= 1e-6 * rigs.largest_force(rig, res)
