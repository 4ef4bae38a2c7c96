"""The haul plan's behaviour: strokes, resets, what stops a haul (in words, naming the stroke), the CLI."""

from __future__ import annotations

import io
import json
from dataclasses import replace
from pathlib import Path

import pytest

from solver import cli
from solver.haul_plan import plan_haul
from solver.model import Hardware, Pass
from solver.rigfile import load_rig, save_rig
from solver.templates import place_template
from tests.rigs import anchor, free, haul, load, make_rig, pulley, rope

SAMPLE = Path(__file__).resolve().parents[2] / "samples" / "raft-three-strokes.rig.json"
EA = 2.0e5


def z_with_capture(required=3000.0, grab_at=10.0, cap_kN=None, ea=EA):
    """3:1 in line with a frictionless capture at the anchor: load 0, grab ``grab_at``, anchor 20, team 25 m."""
    grab = Hardware("g", "grab", mbs_N=1e12, slip_N=1e9, label="grab")
    a = anchor("A", 0, 20, capacity_N=cap_kN * 1000 if cap_kN else None)
    return make_rig([load("L", 0, 0, required_N=required), free("G", 0, grab_at), a, haul("H", 0, 25, 100.0)],
                    [rope("m", ["L", "G", Pass("A", "capture", "pul", grab="g"), ("G", "pulley", "pul"),
                                ("H", "hauled")])],
                    hardware=[pulley("pul", 1.0), grab], ea=ea)


def test_strokes_add_up_and_the_capture_keeps_the_stretch_between_strokes():
    plan = plan_haul(z_with_capture(), travel_m=2.0, throw_m=1.5)
    assert plan.ok, plan.message
    assert plan.load_travel_m == pytest.approx(2.0, abs=1e-6)
    assert plan.resets == len(plan.strokes) - 1 >= 2
    # after the first stroke the capture holds: the next stroke loses far less rope to stretch
    assert plan.strokes[1].stretch_m < 0.5 * plan.strokes[0].stretch_m
    # each row: rope paid in = ideal MA x load travel + what stretch took (the row's own definition)
    for s in plan.strokes:
        assert s.paid_in_m == pytest.approx(3.0 * s.load_travel_m + s.stretch_m, abs=1e-9)
    # the anchor pulley carries two strands of the 3:1 while hauling (2 x F/3 at breakout, frictionless)
    # and the whole held force at a reset: the plan names the larger (statics of the pulley)
    assert plan.peak_anchor == "A"
    assert plan.peak_anchor_N >= max(2 * 3000.0 / 3, *(s.capture_N for s in plan.strokes if s.reset)) * (1 - 1e-7)
    # the frames run monotonically through the haul, one per step plus the start and each reset
    paid = [f.paid_in_m for f in plan.frames]
    assert paid == sorted(paid) and paid[-1] == pytest.approx(plan.paid_in_m)


def test_the_travelling_grab_goes_back_to_its_starting_spacing_at_each_reset():
    plan = plan_haul(z_with_capture(), travel_m=2.0, throw_m=1.5)
    for f in plan.frames:
        if f.phase == "reset":
            assert f.points["A"][1] - f.points["G"][1] == pytest.approx(10.0, abs=1e-3)


def test_a_stroke_ends_two_blocked_at_the_chosen_spacing():
    # grab 2 m from the anchor pulley, 3:1: the grab reaches 0.5 m spacing after about 4.5 m of rope
    plan = plan_haul(z_with_capture(required=500.0, grab_at=18.0, ea=1e8), travel_m=3.0, throw_m=10.0,
                     spacing_m=0.5)
    assert plan.ok, plan.message
    first = plan.strokes[0]
    assert first.ended_by == "two-blocked"
    assert first.paid_in_m == pytest.approx(3 * 1.5, rel=1e-3)  # rope travel = MA x grab travel (1.5 m)
    assert any("two-blocked" in w for w in plan.warnings)


@pytest.mark.parametrize("edit, words", [
    (lambda r: r.without_point("H"), "no rope is hauled"),
    (lambda r: replace(r, points=tuple(replace(p, kind="point", fixed=True) if p.id == "L" else p
                                       for p in r.points)), "no load"),
])
def test_a_rig_that_cannot_be_hauled_says_why(edit, words):
    plan = plan_haul(edit(z_with_capture()), travel_m=1.0)
    assert plan.status == "invalid" and words in plan.message
    assert not plan.strokes


@pytest.mark.parametrize("throw", [0.0, -1.0])
def test_a_throw_of_zero_or_less_is_refused(throw):
    plan = plan_haul(z_with_capture(), travel_m=1.0, throw_m=throw)
    assert plan.status == "invalid" and "throw" in plan.message and plan.subject == "throw"


def test_a_load_that_would_pass_its_anchor_stops_with_partial_strokes():
    # 1:1 through the capture: the load is 20 m from the anchor and asked to come 30 m
    grab = Hardware("g", "grab", mbs_N=1e12, slip_N=1e9)
    rig = make_rig([load("L", 0, 0, required_N=500.0), anchor("A", 0, 20, label="alder"), haul("H", 0, 24, 100)],
                   [rope("r", ["L", Pass("A", "capture", "pul", grab="g"), ("H", "hauled")])],
                   hardware=[pulley("pul", 1.0), grab], ea=1e8)
    plan = plan_haul(rig, travel_m=30.0, throw_m=4.0)
    assert plan.status == "unreachable"
    assert "would pass 'alder'" in plan.message and plan.message.startswith("stroke ")
    assert plan.strokes and 19.0 < plan.load_travel_m < 20.0


def test_every_stroke_two_blocked_at_once_is_unreachable():
    # no capture, and the grab starts 0.25 m from the anchor pulley: the stretch takes more rope than
    # the grab can travel, and with nothing to keep it every stroke starts again from nothing
    rig = z_with_capture(required=3000.0, grab_at=19.75)
    main = rig.ropes[0]
    rig = rig.with_rope(replace(main, path=tuple(replace(p, how="pulley", grab=None) if p.how == "capture" else p
                                                 for p in main.path)))
    plan = plan_haul(rig, travel_m=1.0, throw_m=3.0, spacing_m=0.2)
    assert plan.status == "unreachable"
    assert plan.message.startswith("stroke 1:") and "two-blocked before the load moved" in plan.message
    assert len(plan.strokes) == 1 and plan.load_travel_m == 0.0  # the stroke made is still reported


def test_a_system_two_blocked_before_the_first_stroke_is_unreachable():
    plan = plan_haul(z_with_capture(grab_at=19.85), travel_m=1.0, throw_m=3.0, spacing_m=0.2)
    assert plan.status == "unreachable" and plan.message.startswith("stroke 1:")
    assert "two-blocked before the first stroke" in plan.message


def test_an_anchor_that_would_fail_first_is_named_with_its_stroke():
    # the anchor pulley takes two strands of the 3:1: about 2/3 of the 3 kN needed, above 1.5 kN
    plan = plan_haul(z_with_capture(required=3000.0, cap_kN=1.5), travel_m=1.0, throw_m=3.0)
    assert plan.status == "unreachable"
    assert "anchor 'A' would fail first" in plan.message and plan.message.startswith("stroke 1:")


def kit(name: str):
    """Kit system ``name`` from the load at the origin to an anchor 20 m north, a 2 kN stuck load, 4 haulers."""
    from solver.model import Point, Rig

    base = Rig(points=(Point("L", "load", 0, 0, required_N=2000.0), Point("A", "anchor", 0, 20)))
    return place_template(base, name, load_id="L", anchor_id="A", team=4)


def test_kit_three_to_one_with_capture_hauls_on_library_specs():
    plan = plan_haul(kit("3:1"), travel_m=1.0, throw_m=3.0)
    assert plan.ok, plan.message
    assert plan.ma_ideal == pytest.approx(3.0, rel=1e-3)
    assert plan.paid_in_before_move_m is not None and plan.paid_in_before_move_m > 0


def test_sample_hauls_in_three_strokes_and_the_cli_prints_it(capsys):
    rig = load_rig(SAMPLE)
    travel = rig.extra["haul_plan"]["travel_m"]
    plan = plan_haul(rig, travel_m=travel, throw_m=rig.extra["haul_plan"]["throw_m"])
    assert plan.ok and len(plan.strokes) == 3, plan.message
    code = cli.main(["haul", str(SAMPLE), "--travel", f"{travel}m", "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert code == 0
    for key in ("status", "message", "paid_in_before_move_m", "load_travel_m", "resets", "strokes", "cautions"):
        assert key in doc
    assert set(doc["strokes"][0]) >= {"paid_in_m", "load_travel_m", "haul_force_max_N", "stretch_m", "capture_N"}
    assert doc["resets"] == 2 and doc["load_travel_m"] == pytest.approx(travel)


def test_cli_reads_distances_with_units_and_prints_a_table(capsys):
    code = cli.main(["haul", str(SAMPLE), "--travel", "3ft", "--units", "imperial"])
    out = capsys.readouterr().out
    assert code == 0
    assert "rope paid in" in out and "resets:" in out and " ft" in out and "Planning aid" in out


def test_cli_exit_codes_follow_solve(tmp_path, capsys):
    assert cli.main(["haul", str(SAMPLE), "--travel", "1", "--throw", "0"]) == 2
    assert cli.main(["haul", str(SAMPLE), "--travel", "six metres"]) == 2
    far = cli.main(["haul", str(SAMPLE), "--travel", "40m"])
    err = capsys.readouterr().err
    assert far == 3 and "stroke" in err
    bad = tmp_path / "no-haul.rig.json"
    rig = load_rig(SAMPLE)
    save_rig(rig.without_point(next(p.id for p in rig.points if p.kind == "haul")), bad)
    assert cli.main(["haul", str(bad), "--travel", "1m"]) == 3
    assert "no rope is hauled" in capsys.readouterr().err


def test_lengths_handed_to_the_solver_equal_the_same_lengths_rigged_as_slack():
    # solver.run_lengths sets unstretched lengths on a copy of the cached compiled rig: the result
    # must equal a fresh solve of the same rig with those lengths rigged as slack (rig-format.md)
    from solver.equilibrium import solve
    from solver.haul_strands import as_rig, lengths, strands_of
    from solver.model import Rigging

    rig = z_with_capture()
    strands = strands_of(rig)
    strands = [replace(s, L0=s.L0 - (0.4 if s.role == "haul" else 0.0)) for s in strands]
    pos = {p.id: (p.x, p.y) for p in rig.points}
    solvable = as_rig(rig, strands, pos, rig.point("L"), None)
    fast = solve(solvable, unstretched_m=lengths(strands))
    slack = replace(solvable, ropes=tuple(replace(r, rigged=Rigging(slack_m=st.L0 - st.drawn_length(pos)))
                                          for r, st in zip(solvable.ropes, strands)))
    fresh = solve(slack)
    assert fast.ok and fresh.ok
    assert [s.tension_N for s in fast.segments] == pytest.approx([s.tension_N for s in fresh.segments], rel=1e-9)
    assert fast.points["G"] == pytest.approx(fresh.points["G"], abs=1e-9)
    # and the cached compiled rig is untouched: other lengths in between leave the first answer as it was
    other = {k: v - 0.3 for k, v in lengths(strands).items()}
    assert solve(solvable, unstretched_m=other).segments[-1].tension_N > fast.segments[-1].tension_N
    again = solve(solvable, unstretched_m=lengths(strands))
    assert [s.tension_N for s in again.segments] == [s.tension_N for s in fast.segments]


def test_a_length_the_solver_cannot_use_is_named():
    from solver.equilibrium import solve
    from solver.haul_strands import as_rig, strands_of

    rig = z_with_capture()
    strands = strands_of(rig)
    pos = {p.id: (p.x, p.y) for p in rig.points}
    r = solve(as_rig(rig, strands, pos, rig.point("L"), None), unstretched_m={strands[1].key: -1.0})
    assert r.status == "invalid" and "no rope left" in r.message and r.subject == strands[1].key


def test_without_a_capture_each_reset_lets_everything_go_slack_and_slides_the_grabs_back():
    rig = z_with_capture(grab_at=12.0)
    main = rig.ropes[0]
    rig = rig.with_rope(replace(main, path=tuple(replace(p, how="pulley", grab=None) if p.how == "capture" else p
                                                 for p in main.path)))
    plan = plan_haul(rig, travel_m=1.5, throw_m=2.0)
    assert plan.ok, plan.message
    assert any("no progress capture" in w for w in plan.warnings)
    resets = [f for f in plan.frames if f.phase == "reset"]
    assert resets and all(f.points["G"] == pytest.approx((0.0, 12.0)) for f in resets)
    assert all(s.capture_N is None for s in plan.strokes) and plan.to_json()["strokes"][0]["capture_N"] is None
    # nothing keeps the stretch, so every stroke loses about the same rope to it again
    full = [s for s in plan.strokes if s.ended_by == "throw"]
    assert len(full) >= 2 and full[1].stretch_m == pytest.approx(full[0].stretch_m, rel=0.05)


def test_compound_from_the_kit_resets_its_grab_to_the_starting_spacing():
    rig = kit("6:1")
    plan = plan_haul(rig, travel_m=0.5, throw_m=3.0)
    assert plan.ok, plan.message
    assert plan.ma_ideal == pytest.approx(6.0, rel=1e-3)
    grab = rig.ropes[0].path[1].at
    start = rig.point(grab).y
    for f in plan.frames:
        if f.phase == "reset":
            assert f.points[grab][1] == pytest.approx(start, abs=2e-3)


def test_progress_bar_is_drawn_only_on_a_terminal():
    from solver.cli_haul import _Bar

    class Stream(io.StringIO):
        def __init__(self, tty: bool) -> None:
            super().__init__()
            self.tty = tty

        def isatty(self) -> bool:
            return self.tty

    for tty in (True, False):
        stream = Stream(tty)
        bar = _Bar(stream)
        for k in range(11):
            bar(k / 10)
        bar.done()
        assert ("100%" in stream.getvalue()) is tty


def test_a_free_load_hangs_first_then_moves_at_once_with_rope_travel_three_times_its_travel():
    # elevation: a 100 kg load hanging on a kit 3:1 (free: it moves as soon as rope is paid in).  Once it
    # hangs, the rope's stretch changes only with the friction of the motion, so rope travel stays close
    # to ideal MA x load travel (check-values.md "Pulley friction ...": rope travel = MA x load travel)
    from solver.model import Point, Rig

    base = Rig(points=(Point("L", "load", 0, 0, fixed=False, mass_kg=100.0), Point("A", "anchor", 0, 20)),
               view="elevation")
    rig = place_template(base, "3:1", load_id="L", anchor_id="A", team=4)
    plan = plan_haul(rig, travel_m=1.5, throw_m=3.0)
    assert plan.ok, plan.message
    assert plan.paid_in_before_move_m == 0.0 and plan.ma_ideal == pytest.approx(3.0, rel=1e-6)
    assert plan.paid_in_m == pytest.approx(3.0 * 1.5, rel=0.05)
    # the capture holds the load's weight while the team resets (100 kg x standard gravity)
    assert plan.strokes[0].capture_N == pytest.approx(100.0 * 9.80665, rel=1e-3)


def test_kit_four_to_one_captures_on_its_tended_tail_and_keeps_what_each_stroke_gained():
    # the 4:1 (2:1 on 2:1) holds on the main line's tail through the capture at the anchor; with the
    # capture keeping the stretch, a stroke brings the load farther than the same system without one
    rig = kit("4:1")
    tail = next(r for r in rig.ropes if any(p.how == "capture" for p in r.path))
    with_capture = plan_haul(rig, travel_m=1.0, throw_m=3.0)
    assert with_capture.ok, with_capture.message
    assert all(s.capture_N and s.capture_N > 0 for s in with_capture.strokes if s.reset)
    bare = rig.without_rope(tail.id)
    without = plan_haul(bare, travel_m=1.0, throw_m=3.0)
    assert without.ok, without.message
    assert with_capture.strokes[1].load_travel_m > 1.5 * without.strokes[1].load_travel_m


def test_a_haul_that_never_moves_the_load_says_how_much_rope_one_pull_would_need():
    rig = load_rig(SAMPLE.parent / "raft-3to1-redirect.rig.json")  # no capture; 3 m of throw is not enough
    plan = plan_haul(rig, travel_m=2.0, throw_m=3.0)
    assert plan.status == "unreachable" and plan.message.startswith("stroke 1:")
    one_pull = plan_haul(rig, travel_m=0.01, throw_m=30.0)
    assert one_pull.ok and one_pull.paid_in_before_move_m > 3.0
    assert f"first move after {one_pull.paid_in_before_move_m:.2f} m of rope" in plan.message


def test_cli_takes_throw_and_spacing_from_the_rigs_planned_haul_unless_given(tmp_path, capsys):
    from solver.haul_settings import HaulSettings, with_haul_settings

    path = tmp_path / "planned.rig.json"
    save_rig(with_haul_settings(load_rig(SAMPLE), HaulSettings(1.0, 1.5, 0.3)), path)
    assert cli.main(["haul", str(path), "--travel", "0.5", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["throw_m"] == pytest.approx(1.5)
    assert cli.main(["haul", str(path), "--travel", "0.5", "--throw", "2m", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["throw_m"] == pytest.approx(2.0)
