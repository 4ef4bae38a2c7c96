"""Weak links (solver.weak_links): a knot's efficiency in every margin of the pieces ending there; grabs that slip.

Efficiencies: check-values.md "Knots and grabs" (figure-8 loop 75-80 %, bowline 65-75 %,
common practice, from memory; the low end is used).  Held force of a grab: statics of the
tied pass (the difference of the tensions either side), worked by hand below.
"""

from __future__ import annotations

import json
from dataclasses import replace

import pytest

from solver.analysis import analyse
from solver.errors import RigFileError
from solver.model import Hardware, Material, Pass, Point, Rig, Rope, Rigging, Settings
from solver.rigfile import dumps_rig, loads_rig
from solver.weak_links import TERMINATIONS, grab_holds, weak_links

ROPE = Material(id="k11", kind="rope", mbs_N=30000.0, stretch=((3000.0, 0.03),), label="11 mm rope")
PULLEY = Hardware(id="pul", kind="pulley", efficiency=0.9, mbs_N=36000.0, size_m=0.1, label="rescue pulley")
GRAB = Hardware(id="pr", kind="grab", slip_N=7000.0, mbs_N=20000.0, label="3-wrap prusik")


def pulley_rig(pull: float, term: str | None) -> Rig:
    """A fixed load hauled through a pulley at a fixed anchor; the rope tied to the load with ``term``."""
    pts = (Point("L", "load", 0.0, 0.0, label="raft"), Point("A", "anchor", 0.0, 20.0, capacity_N=1e9),
           Point("H", "haul", 5.0, 20.0, force_N=pull, label="haul team"))
    rope = Rope("m", "k11", (Pass("L", termination=term), Pass("A", "pulley", "pul"), Pass("H", "hauled")))
    return Rig(points=pts, ropes=(rope,), materials=(ROPE,), hardware=(PULLEY,))


def test_figure_8_loop_takes_a_quarter_off_the_margin_of_the_piece_ending_there():
    # the load piece carries 0.9 x pull (T-method, check-values.md) = 2500 N: plain rope SF 30/2.5 = 12:1 (fine);
    # with a figure-8 loop at the load (75 %, from memory) its strength is 22.5 kN: SF 9:1 < 10:1
    pull = 2500.0 / 0.9
    plain = analyse(pulley_rig(pull, None))
    assert not [w for w in plain.warnings if w.code.startswith("rope-")]
    knot = analyse(pulley_rig(pull, "figure-8-loop"))
    seg = knot.segments_of("m")
    assert seg[0].tension_N == pytest.approx(2500.0, rel=1e-9)
    assert seg[0].utilization == pytest.approx(2500.0 * 10 / (30000.0 * 0.75), rel=1e-9)
    assert seg[1].utilization == pytest.approx(pull * 10 / 30000.0, rel=1e-9)  # the haul side has no knot
    ws = [w for w in knot.warnings if w.code == "rope-margin"]
    assert len(ws) == 1 and "9.0:1" in ws[0].message and "figure-8 loop" in ws[0].message


def test_every_termination_keeps_a_share_of_mbs_and_says_where_it_comes_from():
    assert TERMINATIONS["figure-8-loop"].efficiency == 0.75 and TERMINATIONS["bowline"].efficiency == 0.65
    for t in TERMINATIONS.values():
        assert 0 < t.efficiency <= 1 and "from memory" in t.source


def grab_rig(pull: float) -> Rig:
    """Main line L -> A pretensioned to 500 N, held at A by a rope grab; the haul side beyond it pulled."""
    pts = (Point("L", "load", 0.0, 0.0), Point("A", "anchor", 0.0, 20.0, capacity_N=1e9, label="alder"),
           Point("H", "haul", 0.0, 30.0, force_N=pull, label="haul team"))
    rope = Rope("m", "k11", (Pass("L"), Pass("A", hardware="pr"), Pass("H", "hauled")),
                rigged=Rigging(pretension_N=500.0), label="main line")
    return Rig(points=pts, ropes=(rope,), materials=(ROPE,), hardware=(GRAB,), settings=Settings(motion="hold"))


@pytest.mark.parametrize("pull, slips", [(7000.0, False), (8000.0, True)])
def test_grab_slips_when_the_difference_of_the_tensions_beside_it_passes_its_slip_force(pull, slips):
    # hand: the tied run L-A keeps its 500 N pretension (both ends fixed), the hauled side carries the pull;
    # the grab holds the difference, pull - 500 N: 6.5 kN (holds) or 7.5 kN (> 7 kN: slides)
    res = analyse(grab_rig(pull))
    (g,) = grab_holds(grab_rig(pull), res)
    assert g.held_N == pytest.approx(pull - 500.0, rel=1e-6)
    ws = [w for w in res.warnings if w.code == "grab-slips"]
    assert bool(ws) is slips
    if slips:
        assert "7.50 kN" in ws[0].message and "7.00 kN" in ws[0].message
        assert f"margin {7000.0 / 7500.0:.2f}" in ws[0].message and "designed slip point" in ws[0].message


def test_weak_links_list_each_knot_and_grab_with_the_figure_used():
    rig = grab_rig(8000.0)
    rope = rig.ropes[0]
    rig = rig.with_rope(replace(rope, path=(replace(rope.path[0], termination="bowline"),) + rope.path[1:]))
    links = weak_links(rig, analyse(rig))
    kinds = {(w.kind, w.at): w for w in links}
    assert kinds[("termination", "L")].efficiency == 0.65
    assert kinds[("termination", "L")].strength_N == pytest.approx(0.65 * 30000.0)
    assert kinds[("grab", "A")].slip_N == 7000.0 and kinds[("grab", "A")].force_N == pytest.approx(7500.0, rel=1e-6)


def test_rig_file_keeps_terminations_and_grabs_and_refuses_misplaced_ones():
    rig = grab_rig(8000.0)
    rope = rig.ropes[0]
    rig = rig.with_rope(replace(rope, path=(replace(rope.path[0], termination="sewn-eye"),) + rope.path[1:]))
    text = dumps_rig(rig)
    back = loads_rig(text)
    assert back.ropes[0].path[0].termination == "sewn-eye"
    assert next(h for h in back.hardware if h.id == "pr").slip_N == 7000.0
    data = json.loads(text)
    data["ropes"][0]["path"][0]["termination"] = "granny-knot"
    with pytest.raises(RigFileError) as exc:
        loads_rig(json.dumps(data))
    assert "termination" in str(exc.value)
    data["ropes"][0]["path"][0].pop("termination")
    data["ropes"][0]["path"][1]["how"] = "sliding"
    with pytest.raises(RigFileError) as exc:
        loads_rig(json.dumps(data))
    assert "rope grab" in str(exc.value)
    data["ropes"][0]["path"][1]["how"] = "tied"
    data["hardware"] = [{"id": "pr", "kind": "grab", "mbs_N": 20000, "label": "no slip given"}]
    with pytest.raises(RigFileError) as exc:
        loads_rig(json.dumps(data))
    assert "slip" in str(exc.value)


def test_a_grab_that_would_slide_first_is_what_stops_the_pull_needed():
    # the 3:1 sample with its rope grab given a low slip force (1.5 kN, demo figure): the grab holds the
    # difference of the main line's tensions either side; hauling hard enough for 3 kN at the raft makes
    # it hold more than 1.5 kN, so it slides before the raft gets what it needs
    from pathlib import Path

    from solver.rigfile import load_rig

    rig = load_rig(Path(__file__).resolve().parents[2] / "samples" / "raft-3to1-redirect.rig.json")
    weak = Hardware(id="weak-grab", kind="grab", slip_N=1500.0, mbs_N=20000.0, label="weak grab")
    rope = rig.ropes[0]
    path = tuple(replace(p, hardware="weak-grab") if p.at == "G1" and p.how == "tied" else p for p in rope.path)
    rig = replace(rig.with_rope(replace(rope, path=path)), hardware=rig.hardware + (weak,))
    rig = rig.with_point(replace(rig.point("L1"), required_N=3000.0))
    res = analyse(rig)
    need = res.needs["L1"]
    assert need.pull_needed_N is None and need.limit == "grab-slips" and need.limit_subject == "G1"
    assert need.limit_strength_N == 1500.0 and need.limit_force_N > 1500.0
    msg = next(w.message for w in res.warnings if w.code == "load-stuck")
    assert "weak grab" in msg and "slides" in msg


def test_cli_table_lists_each_weak_link_with_the_figure_its_margin_used():
    from solver.cli_solve import format_result

    rig = grab_rig(8000.0)
    rope = rig.ropes[0]
    rig = rig.with_rope(replace(rope, path=(replace(rope.path[0], termination="bowline"),) + rope.path[1:]))
    text = format_result(rig, analyse(rig), "m", "kN")
    table = text[text.index("Weak links"):]
    # bowline 65 % of 30 kN = 19.5 kN (check-values.md, from memory); the grab holds 8 - 0.5 = 7.5 kN > 7 kN
    assert "65% of MBS = 19.5 kN" in table and "slips at 7.00 kN" in table and "7.50 kN (slides)" in table
