"""Drag steps start from a secant prediction of the last two solutions, and fall back when it misleads."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from sketchpad.document import Document
from sketchpad.live_solve import SolveScheduler, moved_points, predicted_start, warm_start
from solver.equilibrium import solve
from solver.result import Result
from tests.sketchpad.test_live_solve import redirect_rig


def _drag(doc: Document, sched: SolveScheduler, steps: int, dy: float = 0.2) -> None:
    """Preview the haul point a little further each step and solve it as the coalescing timer would."""
    for k in range(steps):
        h = doc.rig.point("H")
        doc.preview(doc.rig.moved("H", h.x, h.y + dy))
        sched._change_gap_ms = 1.0  # changes streaming: a drag (the timer measures this in the app)
        sched.fire()


def test_moved_points_names_what_moved_between_two_rigs():
    rig = redirect_rig()
    assert moved_points(rig, rig) == frozenset()
    assert moved_points(rig, rig.moved("H", 10.0, 11.0)) == {"H"}


def test_the_prediction_is_twice_the_last_position_less_the_one_before():
    r0, r1, r2 = redirect_rig(10.0), redirect_rig(10.5), redirect_rig(11.0)
    s0, s1 = solve(r0), solve(r1)
    assert s0.ok and s1.ok
    plain = warm_start(r2, r1, s1)
    pred = predicted_start(r2, plain, r1, r0, s0)
    jx, jy = s1.points["J"]
    bx, by = s0.points["J"]
    assert pred == {"J": (2 * jx - bx, 2 * jy - by)}


def test_no_prediction_when_other_points_moved_or_nothing_is_known():
    r0, r1 = redirect_rig(10.0), redirect_rig(10.5)
    s0, s1 = solve(r0), solve(r1)
    plain = warm_start(r1.moved("A", 0.5, 10.0), r1, s1)
    assert predicted_start(r1.moved("A", 0.5, 10.0), plain, r1, r0, s0) is None  # the anchor, not the haul, moved now
    r2 = redirect_rig(11.0)
    assert predicted_start(r2, warm_start(r2, r1, s1), r1, None, None) is None
    assert predicted_start(r2, warm_start(r2, r1, s1), r1, r0, replace(s0, status="diverged")) is None


def test_a_drag_passes_the_secant_start_from_its_third_step_and_lands_on_the_same_equilibrium(qtbot):
    doc = Document(redirect_rig())
    starts, results = [], []

    def quick(rig, start=None):
        starts.append(None if start is None else dict(start))
        results.append(solve(rig, start=start))
        return results[-1]

    sched = SolveScheduler(doc, quick=quick, analyse=lambda rig, start=None: solve(rig, start=start))
    sched.settle_timer.setInterval(600_000)
    sched.solve_now()  # the settled answer (full analysis path)
    _drag(doc, sched, 4)
    assert all(r.ok for r in results) and len(results) == 4
    # steps 1 and 2 start at the last answer; from step 3 the hand starts at 2 x last - the one before
    assert starts[1]["J"] == tuple(results[0].points["J"])
    for k in (2, 3):
        (x1, y1), (x0, y0) = results[k - 1].points["J"], results[k - 2].points["J"]
        assert starts[k]["J"] == (2 * x1 - x0, 2 * y1 - y0)
    # the equilibrium does not depend on the start (this statics has one answer): same as a plain warm start
    plain = solve(doc.rig, start={"J": tuple(results[2].points["J"])})
    assert np.allclose(plain.points["J"], results[3].points["J"], atol=1e-9)
    assert [s.tension_N for s in plain.segments] == pytest.approx([s.tension_N for s in results[3].segments], rel=1e-9)
    sched.close()


def test_a_misleading_prediction_is_solved_again_from_the_last_answer(qtbot):
    doc = Document(redirect_rig())
    calls = []

    def quick(rig, start=None):
        calls.append(start)
        if len(calls) >= 3 and len(calls) % 2 == 1:  # every predicted start fails, as a bad start could
            return Result(status="diverged", message="no equilibrium found")
        return solve(rig, start=start)

    sched = SolveScheduler(doc, quick=quick, analyse=lambda rig, start=None: solve(rig, start=start))
    sched.settle_timer.setInterval(600_000)
    sched.solve_now()
    _drag(doc, sched, 3)
    assert sched.result.ok, sched.result.message
    assert calls[-1] == warm_start(doc.rig, sched.before_good_rig, sched.before_good)
    sched.close()



def test_a_drag_step_shows_the_live_actual_mechanical_advantage_and_the_ideal_returns_at_the_pause(qtbot):
    from pathlib import Path

    from sketchpad.overlay import summary_lines
    from solver.rigfile import load_rig

    rig = load_rig(Path(__file__).resolve().parents[2] / "samples" / "raft-3to1-redirect.rig.json")
    doc = Document(rig)
    sched = SolveScheduler(doc)  # the app's own quick (drag) and full (pause) solves
    sched.settle_timer.setInterval(600_000)
    settled = sched.solve_now()
    assert settled.ok and settled.ma_ideal is not None
    h = rig.point("H1")
    doc.preview(rig.moved("H1", h.x - 0.5, h.y + 0.3))
    sched._change_gap_ms = 1.0
    sched.fire()
    drag = sched.result
    assert drag.ok and not sched.settled and drag.ma_ideal is None
    line = next(t for t in summary_lines(doc.rig, drag) if t.startswith("MA "))
    assert line == f"MA nominal when still · ideal when still · actual {drag.ma_actual:.2f}:1"
    sched._settle()  # the pause: the full analysis brings the ideal back
    assert sched.settled and sched.result.ma_ideal is not None
    assert f"ideal {sched.result.ma_ideal:.2f}:1" in next(t for t in summary_lines(doc.rig, sched.result)
                                                        if t.startswith("MA "))
    sched.close()


def test_moved_points_and_warm_start_by_identity_equal_the_tables_of_every_point():
    """The pairwise shortcut (a drag step shares every Point object but the moved one) gives what tables of
    every point by id give, also when points are reordered, added or removed."""
    import dataclasses

    from sketchpad.live_solve import moved_points, warm_start
    from solver.equilibrium import solve
    from tests.bench.fifty_ropes import fifty_rope_rig

    def tables_moved(before, after):
        old = {p.id: (p.x, p.y) for p in before.points}
        new = {p.id: (p.x, p.y) for p in after.points}
        return frozenset(pid for pid in old.keys() | new.keys() if old.get(pid) != new.get(pid))

    def tables_start(rig, good_rig, good):
        old = {p.id: (p.x, p.y) for p in good_rig.points}
        return {p.id: tuple(good.points[p.id]) for p in rig.points
                if not p.is_fixed and p.id in good.points and old.get(p.id) == (p.x, p.y)} or None

    rig = fifty_rope_rig()
    good = solve(rig)
    h, g = rig.point("H4"), rig.point("G2")
    dragged = rig.moved("H4", h.x + 1.0, h.y).moved("G2", g.x, g.y - 0.5)
    same_place = dataclasses.replace(rig, points=tuple(dataclasses.replace(p) for p in rig.points))  # equal copies
    reordered = dataclasses.replace(dragged, points=tuple(reversed(dragged.points)))
    fewer = dataclasses.replace(dragged, points=dragged.points[:-3])
    for after in (dragged, same_place, reordered, fewer, rig):
        assert moved_points(rig, after) == tables_moved(rig, after)
        assert moved_points(after, rig) == tables_moved(after, rig)
        assert warm_start(after, rig, good) == tables_start(after, rig, good)
    assert moved_points(rig, dragged) == {"H4", "G2"}
