"""Gear list and rope budget (solver.gear), roles (solver.roles), strand counts per run, and the new rig-file fields."""

from __future__ import annotations

import json
import math
from dataclasses import replace

import pytest
from shapely.geometry import Point as ShapelyPoint

from solver.analysis import analyse
from solver.danger import danger_zones
from solver.errors import RigFileError
from solver.gear import gear_list, rope_budget, short_ropes
from solver.model import Point
from solver.nominal_ma import strand_count
from solver.rigfile import dumps_rig, load_rig, loads_rig, rig_to_dict
from solver.roles import placements
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"

#: Counted by hand from each sample file with the rule in solver/gear.py's docstring (one item per
#: connection): pulleys, captures, rope grabs, carabiners, slings, {material: ropes}.
HAND_COUNTS = {
    # z: L1 end, grab at G1, pulley A1, pulley G1, T1 end; c: A3 end, pulley T1 -> 7 carabiners; sling at A1
    "compound-2on3.rig.json": (3, 0, 1, 7, 1, {"kern-12.5": 1, "kern-11": 1}),
    # main: L1 end, pulley A2, grab at G1, pulley A1, pulley G1 -> 5 carabiners; slings at A2 and A1
    "raft-3to1-redirect.rig.json": (3, 0, 1, 5, 2, {"kern-11": 1}),
    # main: L1 end, pulley M1; s1 and s2: both ends tied -> 6; the two webbing slings drawn
    "two-point-anchor.rig.json": (1, 0, 0, 6, 2, {"webbing-25": 2, "kern-11": 1}),
    # main1: L1 end, grab at G1, capture at A1 (its sheave and its grab), pulley at G1 -> 5 carabiners;
    # grabs: the one at G1 and the capture's; a sling at A1 for the capture
    "raft-three-strokes.rig.json": (2, 1, 2, 5, 1, {"kern-11": 1}),
    # line: both ends tied; the hand (sliding, no hardware) takes no carabiner
    "vector-pull.rig.json": (0, 0, 0, 2, 0, {"kern-11": 1}),
}


@pytest.mark.parametrize("name", sorted(HAND_COUNTS))
def test_gear_totals_equal_a_hand_count(name):
    rig = load_rig(SAMPLES / name)
    g = gear_list(rig, analyse(rig))
    pulleys, captures, grabs, carabiners, slings, ropes = HAND_COUNTS[name]
    assert (g.pulleys, g.captures, g.grabs, g.carabiners, g.slings) == (pulleys, captures, grabs, carabiners, slings)
    assert {k.material: k.count for k in g.ropes} == ropes
    assert sum(n for _, n in g.pulley_specs) == g.pulleys


def test_rope_budget_is_the_solved_path_plus_two_tails():
    rig = load_rig(RAFT)
    res = analyse(rig)
    (b,) = rope_budget(rig, res)
    # independent: walk the rope through the solved points (not the segments' own lengths), along the
    # current's bow where the solver bowed a wet piece (its polyline through the hidden points)
    pos = res.points
    path = [pos[ps.at] for ps in rig.rope("main").path]
    bows = {w.index: w.polyline for w in res.water.ropes if w.rope == "main" and w.bowed}
    assert bows  # the raft's main line lies in the current
    walked = 0.0
    for i, (a, b2) in enumerate(zip(path, path[1:])):
        line = bows.get(i, (a, b2))
        walked += sum(math.dist(p, q) for p, q in zip(line, line[1:]))
    assert b.stretched_m == pytest.approx(walked, rel=1e-9)
    assert b.tails_m == pytest.approx(2 * rig.settings.tail_m)
    assert b.carried_m == 60.0 and b.reaches
    short = replace(rig, ropes=(replace(rig.rope("main"), length_m=40.0),))
    (sb,) = short_ropes(short, res)
    assert sb.short_m == pytest.approx(b.needed_m - 40.0)
    no_length = replace(rig, ropes=(replace(rig.rope("main"), length_m=None),))
    assert rope_budget(no_length, res)[0].reaches is None and short_ropes(no_length, res) == []


def test_rope_budget_uses_the_drawing_when_the_solve_failed():
    rig = load_rig(RAFT)
    from solver.result import Result

    (b,) = rope_budget(rig, Result(status="diverged"))
    pts = {p.id: (p.x, p.y) for p in rig.points}
    path = [pts[ps.at] for ps in rig.rope("main").path]
    assert b.stretched_m == pytest.approx(sum(math.dist(a, c) for a, c in zip(path, path[1:])))


def test_tail_setting_changes_what_is_needed():
    rig = load_rig(RAFT)
    res = analyse(rig)
    longer = replace(rig, settings=replace(rig.settings, tail_m=3.0))
    assert rope_budget(longer, res)[0].needed_m - rope_budget(rig, res)[0].needed_m == pytest.approx(2 * (3.0 - 1.0))


def test_a_person_inside_a_zone_is_found_and_one_outside_is_clear():
    rig = load_rig(RAFT)
    res = analyse(rig)
    zone = next(z for z in danger_zones(rig, res) if z.kind == "bight")
    inside = zone.geometry.representative_point()
    person = Point("P9", "person", float(inside.x), float(inside.y), label="spotter", role="upstream spotter")
    rig2 = rig.with_point(person)
    res2 = analyse(rig2)
    by_id = {p.point: p for p in placements(rig2, res2)}
    assert by_id["P9"].in_zone and by_id["P9"].role == "upstream spotter"
    assert zone.geometry.contains(ShapelyPoint(person.x, person.y))
    assert not by_id["P1"].in_zone and by_id["P1"].role == "safety officer"
    assert "from" in by_id["P1"].where  # distance and bearing from the nearest anchor, load or haul team


def test_strand_count_gives_each_run_its_multiple_of_the_haul_force():
    # T-method, frictionless pulley statics worked by hand (each run one tension; a travelling
    # point balanced): a Z gives 3T on the load run; a 2:1 on a 3:1 gives 2T on the Z's run, 6T on the load.
    raft = strand_count(load_rig(RAFT))
    assert raft.ma == 3.0
    assert raft.run_units[("main", 0)] == pytest.approx(3.0) and raft.run_units[("main", 1)] == pytest.approx(1.0)
    comp = strand_count(load_rig(SAMPLES / "compound-2on3.rig.json"))
    assert comp.ma == 6.0
    assert comp.run_units[("z", 0)] == pytest.approx(6.0)
    assert comp.run_units[("z", 1)] == pytest.approx(2.0)
    assert comp.run_units[("c", 0)] == pytest.approx(1.0)


def test_new_fields_round_trip_and_bad_ones_are_named():
    rig = load_rig(RAFT)
    framed = replace(rig, print_frame=(-20.0, -5.0, 10.0, 25.0), settings=replace(rig.settings, tail_m=1.5))
    d = rig_to_dict(framed)
    assert d["print_frame"] == {"x0": -20.0, "y0": -5.0, "x1": 10.0, "y1": 25.0}
    again = loads_rig(dumps_rig(framed))
    assert again.print_frame == framed.print_frame and again.settings.tail_m == 1.5
    assert again.rope("main").length_m == 60.0 and again.point("P1").role == "safety officer"
    assert rig_to_dict(rig).get("print_frame") is None
    bad = dict(d)
    bad["points"] = [dict(p, role="safety officer") if p["id"] == "A1" else p for p in d["points"]]
    with pytest.raises(RigFileError) as e:
        loads_rig(json.dumps(bad))
    assert "role" in str(e.value) and "alder" in str(e.value)
    flat = dict(d, print_frame={"x0": 1, "y0": 1, "x1": 1, "y1": 5})
    with pytest.raises(RigFileError) as e2:
        loads_rig(json.dumps(flat))
    assert "print frame" in str(e2.value)
    unknown_role = dict(d)
    unknown_role["points"] = [dict(p, role="cook") if p["id"] == "P1" else p for p in d["points"]]
    with pytest.raises(RigFileError):
        loads_rig(json.dumps(unknown_role))
