"""Person warnings that follow the zones drawn: the quick fixed bight before a scan, the failure scan's areas after.

The fixed bight shape and its reach are the project's own choice (solver.danger, no source); the
failure areas are computed by letting each component go (solver.failures).  These tests hold the
swap to geometry computed here with shapely, never to hard-coded answers.
"""

from __future__ import annotations

from dataclasses import replace

from shapely.geometry import Point as ShPoint
from shapely.ops import unary_union

from solver.analysis import analyse
from solver.danger import danger_zones
from solver.failures import Scan, scan
from solver.rigfile import load_rig
from solver.scan_warnings import QUICK_ESTIMATE_NOTE, quick_bight_warnings, scanned_result
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"
#: Inside the area the bank-boulder anchor's failure sweeps (the rope grab is pulled across), 2.3 m clear of
#: the fixed bight shapes and recoil bands (found with shapely's polylabel on the raft sample's zones).
IN_FAILURE_AREA_ONLY = (-6.76, 11.71)


def _raft_with_officer_at(x: float, y: float):
    rig = load_rig(RAFT)
    return rig.with_point(replace(rig.point("P1"), x=x, y=y))


def _person_warnings(result, pid: str):
    return [w for w in result.warnings if w.subject.split(",")[0] == pid and w.code.startswith("person-in")]


def test_a_person_in_a_computed_area_outside_the_fixed_bight_gets_the_failure_named_warning():
    rig = _raft_with_officer_at(*IN_FAILURE_AREA_ONLY)
    intact = analyse(rig)
    here = ShPoint(*IN_FAILURE_AREA_ONLY)
    # the premise, from the quick shapes themselves: outside every bight and recoil band
    assert not any(z.geometry.contains(here) for z in danger_zones(rig, intact))
    assert not _person_warnings(intact, "P1"), "the quick checks see nobody there"
    s = scan(rig, intact)
    sweeping = [f for f in s.failures if f.zone.contains(here)]
    assert "A2" in {f.component.id for f in sweeping}
    ws = _person_warnings(scanned_result(intact, s), "P1")
    assert {w.subject for w in ws} == {f"P1,{f.component.id}" for f in sweeping}
    a2 = next(w for w in ws if w.subject == "P1,A2")
    assert a2.code == "person-in-failure-zone" and a2.severity == "danger"
    assert a2.message.startswith('If the "bank boulder" anchor lets go, ')
    assert "where safety officer stands" in a2.message


def test_a_person_in_the_fixed_bight_loses_the_quick_warning_and_gets_only_what_the_scan_computes():
    rig0 = load_rig(RAFT)
    intact0 = analyse(rig0)
    bight = next(z for z in danger_zones(rig0, intact0) if z.kind == "bight" and z.subject == "A2")
    recoil = unary_union([z.geometry for z in danger_zones(rig0, intact0) if z.kind == "recoil"])
    spot = bight.geometry.difference(recoil.buffer(0.3)).representative_point()
    rig = _raft_with_officer_at(spot.x, spot.y)
    intact = analyse(rig)
    quick = quick_bight_warnings(rig, intact)
    assert [w.subject for w in quick] == ["P1,A2"] and all(w in intact.warnings for w in quick)
    assert QUICK_ESTIMATE_NOTE in quick[0].message and "`ropewright failures`" in quick[0].message
    full = scan(rig, intact)
    # A scan without the bank boulder's own failures (anchor and its redirect): the officer stands in the
    # fixed bight but outside every area this scan computes, so no computed-zone warning, and no quick one.
    partial = Scan(rig, intact, tuple(f for f in full.failures if f.component.id not in ("A2", "main@A2")))
    assert not any(f.zone.contains(spot) for f in partial.failures)
    after = scanned_result(intact, partial)
    assert not _person_warnings(after, "P1")
    assert [w for w in after.warnings if w not in quick] == list(after.warnings)
    # the full scan: the areas that do sweep the spot, and only those, are named
    named = {w.subject for w in _person_warnings(scanned_result(intact, full), "P1")}
    assert named == {f"P1,{f.component.id}" for f in full.failures if f.zone.contains(spot)}


def test_every_samples_fixed_bight_lies_inside_its_computed_failure_areas():
    # so swapping the quick warnings for the computed ones never drops a person the quick shape warned
    for path in sorted(SAMPLES.glob("*.rig.json")):
        rig = load_rig(path)
        intact = analyse(rig)
        s = scan(rig, intact)
        bights = unary_union([z.geometry for z in danger_zones(rig, intact) if z.kind == "bight"])
        areas = unary_union([f.zone for f in s.failures if not f.zone.is_empty])
        assert bights.difference(areas).area < 1e-6, path.name


def test_without_a_scan_the_result_keeps_its_quick_warnings():
    rig = _raft_with_officer_at(*IN_FAILURE_AREA_ONLY)
    intact = analyse(rig)
    assert scanned_result(intact, None) is intact
    assert scanned_result(intact, Scan(rig, intact, (), reason="the rig does not hold")) is intact


def test_solve_says_its_zones_are_the_quick_estimate_and_points_to_failures(capsys):
    from solver.cli import main

    assert main(["solve", str(RAFT)]) == 0
    out = capsys.readouterr().out
    assert "Danger zones checked here" in out and QUICK_ESTIMATE_NOTE in out
