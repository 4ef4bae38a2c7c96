"""The failure scan on the samples and small rigs: one entry per component, the remaining rig, the command."""

from __future__ import annotations

import json
import math
from dataclasses import replace

import pytest
from shapely.geometry import Point as ShPoint

from solver.cli import main
from solver.failure_rig import Breaker, run_lengths
from solver.failure_warnings import people_at_risk, plan_zones
from solver.failures import components, scan
from solver.model import Rig
from solver.rigfile import load_rig
from tests.conftest import SAMPLES
from tests.rigs import anchor, force, free, load, make_rig, rope

SAMPLE_FILES = sorted(SAMPLES.glob("*.rig.json"))


def _count_components(rig: Rig) -> int:
    anchors = sum(1 for p in rig.points if p.kind == "anchor" and p.is_fixed)
    middles = sum(len(r.path) - 2 for r in rig.ropes)
    pieces = sum(len(r.path) - 1 for r in rig.ropes)
    return anchors + middles + pieces


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_every_sample_scans_one_entry_per_component_with_solved_or_named_outcomes(path):
    rig = load_rig(path)
    s = scan(rig)
    assert s.ok, s.reason
    assert len(s.failures) == _count_components(rig)
    assert len({f.component.id for f in s.failures}) == len(s.failures)
    for f in s.failures:
        assert f.status in ("holds", "runs free")
        if f.status == "holds":
            assert f.after.ok
            # records named as the intact rig names them
            ropes = {r.id: r for r in rig.ropes}
            for seg in f.after.segments:
                path_ = ropes[seg.rope].path
                assert path_[seg.index].at == seg.from_point
        else:
            assert f.unheld and all(u.words for u in f.unheld)
        assert f.message.startswith("If ")


def test_a_grab_letting_go_keeps_the_rope_length_of_both_runs():
    # Hooke's law: a linear rope pretensioned to P as drawn keeps P once the two runs become one,
    # since the unstretched lengths add (24 m / (1 + P/EA)); the hand held by the grab runs free.
    ea, p = 1.0e5, 500.0
    rig = make_rig([load("L", 0, 0), free("V", 0, 16), anchor("A", 0, 24)],
                   [rope("line", ["L", "V", "A"], pretension_N=p)], forces=[force("V", 400.0, 0.0)],
                   motion="hold", ea=ea)
    f = next(f for f in scan(rig).failures if f.component.id == "line@V")
    assert f.status == "runs free" and [u.point for u in f.unheld] == ["V"]
    (seg,) = f.after.segments
    assert (seg.from_point, seg.to_point) == ("L", "A")
    assert seg.tension_N == pytest.approx(p, rel=1e-9)
    assert sum(run_lengths(rig).values()) == pytest.approx(24.0 / (1 + p / ea), rel=1e-12)


def test_raft_grab_letting_go_leaves_a_one_to_one_through_both_redirects():
    # T-method (check-values.md): hauling through two pulleys of efficiency 0.95 (library pulley-large)
    # the load gets P * 0.95^2 (the sample's current taken off: the rope's drag would add to the load)
    from dataclasses import replace as rep

    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    rig = rep(rig, site=rep(rig.site, features=tuple(rep(f, flow=None) for f in rig.site.features)))
    f = next(f for f in scan(rig).failures if f.component.id == "main@G1")
    assert f.status == "holds"
    haul = rig.point("H1").haul_force
    assert f.after.loads["L1"].force_N == pytest.approx(haul * 0.95 ** 2, rel=1e-6)
    assert [(s.from_point, s.to_point) for s in f.after.segments] == [("L1", "A2"), ("A2", "A1"), ("A1", "H1")]


def test_a_cut_piece_of_the_hauled_run_leaves_the_haul_team_unheld():
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    f = next(f for f in scan(rig).failures if f.component.id == "main#4")
    assert f.status == "runs free"
    assert [u.point for u in f.unheld] == ["H1"]
    assert not f.after.segments


def test_a_rig_that_does_not_solve_gets_no_scan_and_says_why():
    rig = make_rig([anchor("A", 0, 0), free("F", 5, 0), free("G", 10, 0)], [rope("r", ["A", "F"])],
                   forces=[force("G", 500.0, 90.0)])
    s = scan(rig)
    assert not s.ok and not s.failures
    assert "does not hold as drawn" in s.reason and "G" in s.reason


def test_breaker_frees_an_anchor_into_a_point_without_strength():
    rig = load_rig(SAMPLES / "two-point-anchor.rig.json")
    intact = scan(rig).intact
    rem = Breaker(rig, intact.points).anchor("A1")
    assert not rem.rig.has_point("A1")  # its sling whipped off, so nothing is left there
    assert [lo.what for lo in rem.loose] == ["rope"]
    assert {r.id.split("~")[0] for r in rem.rig.ropes} == {"s2", "main"}


def test_plan_zones_are_the_failure_areas_and_the_recoil_bands():
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    s = scan(rig)
    zones = plan_zones(s)
    kinds = {z.kind for z in zones}
    assert kinds == {"failure", "recoil"}
    assert all(z.label.startswith("if ") for z in zones if z.kind == "failure")
    assert sum(1 for z in zones if z.kind == "failure") == sum(1 for f in s.failures if not f.zone.is_empty)


def test_a_person_in_a_redirects_flight_is_warned_with_that_failure():
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    s = scan(rig)
    f = next(f for f in s.failures if f.component.id == "A2")
    inside = f.zone.representative_point()
    # move the safety officer into the area the boulder redirect's failure sweeps, out of every other
    others = [g.zone for g in s.failures if g.component.id != "A2"]
    spot = next((pt for pt in (ShPoint(x, y) for x in range(-20, 20) for y in range(-5, 30))
                 if f.zone.contains(pt) and not any(z.contains(pt) for z in others)), inside)
    moved = rig.with_point(replace(rig.point("P1"), x=spot.x, y=spot.y))
    warnings = people_at_risk(replace(s, rig=moved))
    texts = [w.message for w in warnings if w.subject.startswith("P1,")]
    assert any('"bank boulder" anchor lets go' in t and "safety officer" in t for t in texts), texts


def test_failures_command_json_has_the_contract_fields(capsys):
    assert main(["failures", str(SAMPLES / "raft-3to1-redirect.rig.json"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert len(data["failures"]) == _count_components(load_rig(SAMPLES / "raft-3to1-redirect.rig.json"))
    for entry in data["failures"]:
        assert set(entry) >= {"component", "kind", "status", "anchors", "loads", "segments", "peak_force_N",
                              "peak_at", "zone"}
        assert entry["status"] in ("holds", "runs free")
        for ring in entry["zone"]:
            assert len(ring) >= 4 and ring[0] == ring[-1] and all(len(p) == 2 for p in ring)
        assert (entry["peak_force_N"] is None) == (entry["peak_at"] is None)
    ids = {e["component"] for e in data["failures"]}
    assert {"A1", "A2", "main@A2", "main@G1", "main@G1#2", "main#0", "main#4"} <= ids
    assert "estimates without damping" in data["shock_caution"]


def test_failures_command_prints_rows_in_the_units_asked_for(capsys):
    assert main(["failures", str(SAMPLES / "two-point-anchor.rig.json"), "--units", "imperial"]) == 0
    out = capsys.readouterr().out
    assert "sling leg" in out and " lbf" in out and " ft" in out and " kN" not in out
    assert "Planning aid only" in out and "estimates without damping" in out
    assert "Ropewright's own choice" in out


def test_failures_command_exit_codes(tmp_path, capsys):
    bad = tmp_path / "bad.rig.json"
    bad.write_text("{not json")
    assert main(["failures", str(bad)]) == 2
    loose = {"format": "ropewright-rig", "version": 1,
             "points": [{"id": "A1", "kind": "anchor", "x": 0, "y": 0}, {"id": "F1", "kind": "point", "x": 5, "y": 0},
                        {"id": "F2", "kind": "point", "x": 10, "y": 0}],
             "forces": [{"at": "F2", "magnitude_N": 500, "direction_deg": 90}],
             "ropes": [{"id": "r", "material": "kern-11", "path": [{"at": "A1"}, {"at": "F1"}]}]}
    path = tmp_path / "loose.rig.json"
    path.write_text(json.dumps(loose))
    assert main(["failures", str(path)]) == 3
    assert "fix the rig first" in capsys.readouterr().err


def test_components_name_passes_like_the_solver_does():
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    ids = [c.id for c in components(rig)]
    assert ids[:2] == ["A1", "A2"]
    assert "main@G1" in ids and "main@G1#2" in ids
    solved = scan(rig).intact
    assert {k for k in solved.deflection_deg} == {c.id for c in components(rig) if "@" in c.id}


def test_scan_is_pure_of_qt():
    import subprocess
    import sys

    code = ("import sys; from solver.failures import scan; from solver.rigfile import load_rig; "
            f"scan(load_rig({str(SAMPLES / 'vector-pull.rig.json')!r})); "
            "sys.exit(1 if [m for m in sys.modules if m.startswith(('PySide6', 'shiboken6'))] else 0)")
    assert subprocess.run([sys.executable, "-c", code]).returncode == 0


def test_swing_sector_reaches_the_mirror_position():
    from solver.failure_zones import swing_sector

    # a swing from 45 deg on one side runs through the bottom to 45 deg on the other (undamped): a quarter circle
    sector = swing_sector((0.0, 0.0), (5.0, -5.0), (0.0, -math.sqrt(50.0)))
    assert sector.contains(ShPoint(-4.0, -4.5)) and not sector.contains(ShPoint(-5.5, -4.0))
    assert sector.area == pytest.approx(0.5 * 50.0 * math.pi / 2, rel=1e-2)  # a quarter circle of r^2 = 50



@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_the_rebuilt_rig_with_nothing_let_go_solves_to_the_intact_state(path):
    # ropes split at their tied passes with each run's length kept are the same ropes: same tensions
    from solver.equilibrium import solve

    rig = load_rig(path)
    intact = solve(rig)
    rem = Breaker(rig, intact.points).nothing()
    again = solve(rem.rig, start=rem.start)
    assert again.ok, again.message
    by_id = dict(zip(rem.strand_ids, rem.strands))
    got = {(by_id[s.rope].rope.id, by_id[s.rope].passes[s.index][0]): s.tension_N for s in again.segments}
    want = {(s.rope, s.index): s.tension_N for s in intact.segments}
    assert got.keys() == want.keys()
    from solver.water import in_water

    # in moving water a bowed rope is cut afresh along its new chord: the same rope to the accuracy of the
    # cut (tests/checks/test_water.py::test_segment_count_is_enough), not to round-off
    rel = 1e-3 if in_water(rig) else 1e-6
    for k, t in want.items():
        assert got[k] == pytest.approx(t, rel=rel, abs=1e-6), k


def _two_systems_rig():
    """The raft sample with the two-point anchor sample beside it (ids prefixed): two independent parts."""
    from dataclasses import replace as rep

    raft, other = load_rig(SAMPLES / "raft-3to1-redirect.rig.json"), load_rig(SAMPLES / "two-point-anchor.rig.json")
    pts = tuple(rep(p, id="b" + p.id, x=p.x + 40.0) for p in other.points)
    ropes = tuple(rep(r, id="b" + r.id, path=tuple(rep(ps, at="b" + ps.at) for ps in r.path)) for r in other.ropes)
    return rep(raft, points=raft.points + pts, ropes=raft.ropes + ropes,
               materials=raft.materials + tuple(m for m in other.materials if m.id not in {x.id for x in raft.materials}))


@pytest.mark.parametrize("which", ["raft", "both"])
def test_solving_only_the_parts_a_failure_reaches_gives_the_whole_rigs_numbers(which):
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json") if which == "raft" else _two_systems_rig()
    fast, whole = scan(rig), scan(rig, by_parts=False)
    assert [f.component.id for f in fast.failures] == [f.component.id for f in whole.failures]
    for a, b in zip(fast.failures, whole.failures):
        assert a.status == b.status, a.component.id
        if not a.holds:
            continue
        ta = {(s.rope, s.index): s.tension_N for s in a.after.segments}
        tb = {(s.rope, s.index): s.tension_N for s in b.after.segments}
        assert ta.keys() == tb.keys(), a.component.id
        for k in ta:
            assert ta[k] == pytest.approx(tb[k], rel=1e-6, abs=1e-6), (a.component.id, k)
        assert a.after.anchors.keys() == b.after.anchors.keys()
        for k, an in a.after.anchors.items():
            assert an.force_N == pytest.approx(b.after.anchors[k].force_N, rel=1e-6, abs=1e-6), (a.component.id, k)
        assert (a.peak is None) == (b.peak is None)
        if a.peak is not None:  # the whole rig's peak may be a piece the failure never reaches
            if which == "raft":
                assert a.peak.force_N == pytest.approx(b.peak.force_N, rel=1e-6)
            else:
                assert a.peak.force_N <= b.peak.force_N * (1 + 1e-9)
