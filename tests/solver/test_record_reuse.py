"""Records kept from the last Result of the same structure (a drag step) equal records built afresh."""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from solver import memo
from solver.equilibrium import solve
from tests import rigs
from tests.bench.fifty_ropes import fifty_rope_rig
from tests.bench.test_bench_solver import vector_pull_rig


def _fresh(rig, start, ideal=False):
    """The same solve with nothing kept from an earlier Result."""
    memo.forget_results()
    return solve(rig, start=start, ideal=ideal)


def test_drag_steps_keep_the_records_of_the_still_part_and_equal_a_fresh_build():
    rig = fifty_rope_rig()
    h = rig.point("H4")
    last, start, kept = None, None, 0
    for i in range(8):
        moved = rig.moved("H4", h.x + 1.5 * math.sin(0.3 * i), h.y + 1.5 * math.cos(0.3 * i))
        got = solve(moved, start=start, ideal=False)
        want = _fresh(moved, start)
        assert got.ok and got == want  # every segment, anchor and load equal to records built afresh
        if i >= 2:  # (the step after the cold solve still settles the other systems to the last digits)
            same = [s for s, t in zip(got.segments, last.segments) if s is t]
            # what the drag does not move (the nine other systems, system 4's tag line on its own hand)
            # is bit for bit the same: its records are kept...
            assert same and all(s.rope not in ("main4", "sa4", "sb4", "tie4") for s in same)
            kept += len(same)
            # ...and the dragged system's pieces are new records
            assert all(s is not t for s, t in zip(got.segments, last.segments) if s.rope in ("main4", "sa4"))
            assert got.anchors["R0"] is last.anchors["R0"] and got.anchors["R4"] is not last.anchors["R4"]
            assert got.points["G0"] is last.points["G0"] and got.points["G4"] is not last.points["G4"]
            assert got.deflection_deg["main0@R0"] is last.deflection_deg["main0@R0"]
            assert got.loads["L0"] is last.loads["L0"] and got.loads["L4"] is not last.loads["L4"]
            assert got.haul is last.haul  # the same hauls, the same haul forces
        solve(moved, start=start, ideal=False)  # the records made again for this rig: the next step is what counts
        last = solve(moved, start=start, ideal=False)
        start = {pid: xy for pid, xy in last.points.items() if pid != "H4"}
    assert kept > 100


def test_a_new_safety_factor_or_anchor_capacity_is_never_read_from_kept_records():
    rig = fifty_rope_rig()
    first = solve(rig)
    # same structure, other safety factor: every utilization scales with it
    sf = rig.settings.min_safety_factor
    stricter = dataclasses.replace(rig, settings=dataclasses.replace(rig.settings, min_safety_factor=2 * sf))
    res = solve(stricter)
    for a, b in zip(first.segments, res.segments):
        assert math.isclose(b.utilization, 2 * a.utilization, rel_tol=1e-12, abs_tol=1e-15)
    # same structure, one anchor rated differently: its record says so
    pts = tuple(dataclasses.replace(p, capacity_N=5000.0) if p.id == "R3" else p for p in rig.points)
    rated = dataclasses.replace(rig, points=pts)
    res = solve(rated)
    assert res.anchors["R3"].capacity_N == 5000.0
    assert math.isclose(res.anchors["R3"].utilization, res.anchors["R3"].force_N * sf / 5000.0, rel_tol=1e-12)
    assert res == _fresh(rated, None, ideal=True)


def test_a_new_haul_force_is_never_read_from_the_kept_haul_forces():
    rig = fifty_rope_rig()
    first = solve(rig)
    pts = tuple(dataclasses.replace(p, force_N=450.0) if p.id == "H3" else p for p in rig.points)
    res = solve(dataclasses.replace(rig, points=pts))
    assert res.haul is not first.haul
    assert res.haul["H3"] == 450.0 and res.haul["H2"] == 600.0  # the haul points' own forces (fifty_rope_rig)


def test_a_few_rows_are_made_afresh_and_enough_rows_are_kept():
    # a handful of records costs less to make than to compare, so a small rig keeps nothing...
    kept = memo.LastRows()
    key = (("P1", "P2"), 1.5)
    few = np.arange(2.0 * (memo.MIN_ROWS - 1)).reshape(-1, 2)
    kept.keep(key, few, list(range(len(few))))
    assert kept.changed(key, few) == (None, None)
    # ...while a rig with enough rows hands on the values of its unchanged rows
    rows = np.arange(2.0 * memo.MIN_ROWS).reshape(-1, 2)
    values = list(range(len(rows)))
    kept.keep(key, rows, values)
    moved_rows = rows.copy()
    moved_rows[3, 1] = -moved_rows[3, 1]
    old, moved = kept.changed(key, moved_rows)
    assert old is values and moved.tolist() == [i == 3 for i in range(len(rows))]


def test_a_small_rig_swept_by_its_force_equals_fresh_solves():
    # the vector-pull sweep (3 points, 2 pieces: below MIN_ROWS) read step by step against solves with nothing kept
    start = None
    for p in (20.0, 400.0, 401.0, 1500.0):
        got = solve(vector_pull_rig(p), start=start)
        assert got.ok and got == _fresh(vector_pull_rig(p), start, ideal=True)
        start = rigs.start_from(got)
