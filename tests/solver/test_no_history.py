"""The solver's answers never depend on what was solved before (a project rule: no history dependence).

For every sample: the plain solve, the full analysis (its pull-needed search included), the danger zones
and the failure scan (each failure's remaining-rig Result, its area and the parts of that area) made after
a varied history -- other samples solved, a live drag of moved copies warm-started on the live trail, a
first scan and a force sweep of the same rig, solves on a second thread -- are bit for bit (repr of
every Result, WKB of every geometry) what the same calls give after ``memo.forget_all()`` (a fresh
process's state).  A rig in moving water is the case that once failed: its warm-started failure solves
started from the bows and cut-part lengths the former solves had left behind, and the second scan's
areas differed from the first's by ~1e-14 m^2.
"""

from __future__ import annotations

import threading

import pytest

from solver import memo
from solver.analysis import analyse
from solver.danger import danger_zones
from solver.equilibrium import solve
from solver.failures import scan
from solver.rigfile import load_rig
from solver.sweep import sweep
from tests.solver.test_golden_results import SAMPLES

SAMPLE_FILES = sorted(SAMPLES.glob("*.rig.json"))


def fingerprint(rig) -> dict[str, object]:
    """Every number the calls a non-drag caller makes give, as exact text (repr of floats, WKB of geometries)."""
    result = solve(rig)
    sc = scan(rig, result)
    return {
        "solve": repr(result),
        "analyse": repr(analyse(rig)),
        "danger": [(z.kind, z.subject, z.geometry.wkb_hex) for z in danger_zones(rig, result)],
        "scan": [(repr(f.after), f.effect, f.message, f.zone.wkb_hex, [p.geometry.wkb_hex for p in f.zone_parts])
                 for f in sc.failures],
    }


def _moved(rig, dx: float):
    """``rig`` with its first fixed point moved by (dx, dx/2) m: one step of a drag."""
    pid = next(p.id for p in rig.points if p.is_fixed)
    p = rig.point(pid)
    return rig.moved(pid, p.x + dx, p.y + 0.5 * dx)


def _history(rig, others) -> None:
    """A varied history: other samples, a live drag on the live trail, a plain warm drag, a first scan and
    analysis, a force sweep, and solves on a second thread."""
    for other in others:
        solve(other)
    res = solve(rig)
    for k in range(1, 6):  # the live drag: warm steps on the live trail, as the sketchpad makes them
        res = solve(_moved(rig, 0.03 * k), start=res.points, ideal=False, trail=memo.LIVE_TRAIL)
    for k in range(1, 4):  # a warm drag with no trail
        res = solve(_moved(rig, -0.02 * k), start=res.points)
    fingerprint(rig)
    anchor = next(p for p in rig.points if p.is_fixed)
    sweep(rig, f"point:{anchor.id}.x", [anchor.x + 0.1, anchor.x + 0.2])
    worker = threading.Thread(target=lambda: [solve(_moved(o, 0.05)) for o in (rig, *others)])
    worker.start()
    worker.join()


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name.removesuffix(".rig.json"))
def test_answers_do_not_depend_on_what_was_solved_before(path):
    rigs = {p: load_rig(p) for p in SAMPLE_FILES}
    rig = rigs[path]
    memo.forget_all()
    fresh = fingerprint(rig)
    memo.forget_all()
    _history(rig, [r for p, r in rigs.items() if p != path])
    again = fingerprint(rig)
    assert again == fresh, [k for k in fresh if again[k] != fresh[k]]
    assert fingerprint(rig) == fresh  # and once more, right after
    memo.forget_all()


def test_a_second_scan_in_one_process_is_the_first():
    """The colleague's case: the raft's failure scan run twice in a row gives the same areas, bit for bit."""
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    memo.forget_all()
    first = scan(rig, solve(rig))
    second = scan(rig, solve(rig))
    assert [f.zone.wkb for f in first.failures] == [f.zone.wkb for f in second.failures]
    assert [repr(f.after) for f in first.failures] == [repr(f.after) for f in second.failures]


def test_the_live_trail_is_the_only_one_a_solve_reads():
    """A live drag on the live trail moves where the drag's next step starts, never what a solve without it gives."""
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    memo.forget_all()
    start = solve(rig).points
    plain = repr(solve(_moved(rig, 0.05), start=start))
    res = solve(rig, trail=memo.LIVE_TRAIL)
    for k in range(1, 4):
        res = solve(_moved(rig, 0.02 * k), start=res.points, trail=memo.LIVE_TRAIL)
    assert memo.LIVE_TRAIL.states(), "the live drag keeps its steps"
    assert repr(solve(_moved(rig, 0.05), start=start)) == plain
    memo.forget_all()
    assert memo.LIVE_TRAIL.states() == ()


def test_a_trail_seeded_from_a_result_starts_every_hidden_point_on_that_result_s_rope():
    """The failure scan's and pull-needed search's start in moving water: each hidden point at its place along the
    drawn piece, moved onto the bowed rope of the Result they start from (it lies on that polyline, to round-off)."""
    from shapely.geometry import LineString, Point

    from solver.water import _plan
    from solver.water_site import flow_field
    from solver.water_trail import bow_start, seeded

    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    result = solve(rig)
    plan = _plan(rig, flow_field(rig))
    at = {**{p.id: p.xy for p in plan.rig.points}, **result.points}
    start = bow_start(seeded(result), plan.chains, at)
    bowed = [w for w in result.water.ropes if w.bowed]
    assert bowed and len(start) == sum(len(c.hidden) for c in plan.chains)
    for w in bowed:
        rope = LineString(w.polyline)
        chord = LineString([w.polyline[0], w.polyline[-1]])
        chain = next(c for c in plan.chains if (c.rope, c.piece) == (w.rope, w.index))
        for h in chain.hidden:
            assert rope.distance(Point(start[h])) < 1e-9
        assert max(chord.distance(Point(start[h])) for h in chain.hidden) > 0.01  # bowed, not on the chord
    assert bow_start(seeded(None), plan.chains, at) == {}
