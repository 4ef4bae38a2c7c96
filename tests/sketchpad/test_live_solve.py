"""Live solving: coalesced, warm-started, stale answers dropped, failures named, never a crash."""

from __future__ import annotations

import threading
from dataclasses import replace

import pytest

from sketchpad.document import Document
from sketchpad.live_solve import MAX_DELAY_MS, SolveScheduler, failure_text, subject_keys, warm_start
from solver.analysis import analyse
from solver.result import Result
from tests import rigs


def redirect_rig(haul_y: float = 10.0):
    """Load L pulled through a pulley on anchor A by a haul team H (ideal pulley), plus a free hand J
    on a second tensioned line so the rig has a free point to warm-start."""
    pts = [rigs.load("L", 0, 0), rigs.anchor("A", 0, 10), rigs.haul("H", 10, haul_y, 500.0),
           rigs.anchor("B", -10, 5), rigs.anchor("C", 10, 5), rigs.free("J", 0, 5)]
    ropes = [rigs.rope("main", ["L", ("A", "pulley", "pul"), ("H", "hauled")]),
             rigs.rope("line", ["B", ("J", "sliding"), "C"], pretension_N=300.0)]
    return rigs.make_rig(pts, ropes, forces=[rigs.force("J", 100.0, 90.0)], hardware=[rigs.pulley("pul", 1.0)])


@pytest.fixture
def doc(qtbot):
    d = Document(redirect_rig())
    yield d


def test_many_changes_within_the_delay_are_solved_once_for_the_latest_revision(doc, qtbot):
    calls = []

    def counting(rig, start=None):
        calls.append(rig)
        return analyse(rig, start=start)

    s = SolveScheduler(doc, analyse=counting, delay_ms=20)
    for k in range(15):  # a drag: 15 previews with no event loop in between
        doc.preview(doc.rig.moved("H", 10.0, 10.0 + 0.1 * k))
    with qtbot.waitSignal(s.result_ready, timeout=2000) as got:
        pass
    assert len(calls) == 1, f"{len(calls)} solves for one burst of changes"
    assert got.args[0].revision == doc.revision
    assert calls[0] is doc.rig
    s.close()


def test_coalescing_delay_is_clamped_to_30_ms(doc):
    s = SolveScheduler(doc, delay_ms=500)
    assert 0 <= s.timer.interval() <= MAX_DELAY_MS
    s.close()


def test_warm_start_uses_last_good_positions_except_for_a_dragged_free_point():
    rig = redirect_rig()
    good = analyse(rig)
    assert good.ok, good.message
    moved_anchor = rig.moved("A", 1.0, 10.0)
    start = warm_start(moved_anchor, rig, good)
    assert start == {"J": tuple(good.points["J"])}  # fixed points never warm-started
    dragged_hand = rig.moved("J", 0.5, 5.5)
    assert warm_start(dragged_hand, rig, good) is None
    assert warm_start(rig, rig, replace(good, status="diverged")) is None


def test_scheduler_passes_the_warm_start_to_the_solver(doc, qtbot):
    starts = []

    def recording(rig, start=None):
        starts.append(start)
        return analyse(rig, start=start)

    s = SolveScheduler(doc, analyse=recording)
    first = s.solve_now()
    assert first.ok and starts[-1] is None
    doc.apply(doc.rig.moved("H", 11.0, 10.0), "move haul")
    with qtbot.waitSignal(s.result_ready, timeout=2000):
        pass
    assert starts[-1] == {"J": tuple(first.points["J"])}
    s.close()


def test_a_result_for_an_old_revision_is_dropped_and_the_new_one_delivered(doc, qtbot):
    """Background mode: the document changes while the worker solves; only the current revision is shown."""
    gate = threading.Event()
    seen = []

    def slow(rig, start=None):
        gate.wait(2.0)
        return analyse(rig, start=start)

    s = SolveScheduler(doc, analyse=slow, background_after_ms=0.0)
    s.background = True
    s.result_ready.connect(lambda r: seen.append(r.revision))
    doc.apply(doc.rig.moved("H", 10.0, 11.0), "move 1")
    qtbot.waitUntil(lambda: s._in_flight is not None, timeout=2000)
    stale_rev = s._in_flight
    doc.apply(doc.rig.moved("H", 10.0, 12.0), "move 2")  # arrives while the worker is busy
    gate.set()
    qtbot.waitUntil(lambda: bool(seen) and seen[-1] == doc.revision, timeout=4000)
    assert stale_rev not in seen
    assert s.stale_dropped >= 1
    assert s.result.revision == doc.revision
    assert s.rig is doc.rig
    s.close()


def test_a_solver_that_raises_becomes_a_named_failure_and_keeps_the_last_good_result(doc, qtbot):
    mode = {"boom": False}

    def flaky(rig, start=None):
        if mode["boom"]:
            raise ZeroDivisionError("float division by zero")
        return analyse(rig, start=start)

    s = SolveScheduler(doc, analyse=flaky)
    good = s.solve_now()
    assert good.ok
    mode["boom"] = True
    doc.apply(doc.rig.moved("H", 12.0, 10.0), "move")
    with qtbot.waitSignal(s.result_ready, timeout=2000) as got:
        pass
    failed = got.args[0]
    assert not failed.ok and failed.status == "diverged"
    assert "ZeroDivisionError" in failed.message
    assert s.last_good is good
    assert s.result is failed
    s.close()


def test_a_rig_that_cannot_hold_names_the_point_in_the_failure_text(doc):
    """A free point that no rope reaches cannot be held: the failure names it."""
    pts = [rigs.anchor("A", 0, 0), rigs.anchor("B", 10, 0), rigs.free("K", 5, 3, label="swimmer")]
    rig = rigs.make_rig(pts, [rigs.rope("r", ["A", "B"])], forces=[rigs.force("K", 200.0, 90.0)])
    doc.replace_all(rig)
    s = SolveScheduler(doc)
    res = s.solve_now()
    assert not res.ok
    assert res.subject == "K"
    text = failure_text(res, rig)
    assert "swimmer" in text and res.message in text
    s.close()


def test_results_of_a_replaced_document_never_arrive(doc, qtbot):
    s = SolveScheduler(doc)
    doc.apply(doc.rig.moved("H", 10.0, 11.0), "move")
    doc.replace_all(redirect_rig(haul_y=12.0))  # new file before the timer fired
    with qtbot.waitSignal(s.result_ready, timeout=2000) as got:
        pass
    assert got.args[0].revision == doc.revision
    assert s.solve_count == 1
    s.close()


def test_subject_keys_map_warning_subjects_to_canvas_items():
    rig = redirect_rig()
    assert subject_keys(rig, "A") == [("point", "A")]
    assert subject_keys(rig, "main") == [("rope", "main")]
    assert subject_keys(rig, "main@A") == [("point", "A")]
    assert subject_keys(rig, "main@A#2") == [("point", "A")]
    assert subject_keys(rig, "J,A,B") == [("point", "J"), ("point", "A"), ("point", "B")]
    assert subject_keys(rig, "nothing") == []


class _Clock:
    """A clock the test moves by hand (seconds), standing in for ``time.perf_counter``."""

    def __init__(self) -> None:
        self.now = 1000.0

    def __call__(self) -> float:
        return self.now


def test_a_slow_solve_is_timed_by_the_scheduler_clock_and_moves_later_solves_to_the_background(doc):
    clock = _Clock()

    def slow(rig, start=None):
        clock.now += 0.2  # this solve takes 200 ms by the scheduler's clock
        return analyse(rig, start=start)

    s = SolveScheduler(doc, analyse=slow, background_after_ms=120.0, clock=clock)
    s.fire()
    assert s.last_solve_ms == pytest.approx(200.0)
    assert s.background
    assert isinstance(s.result, Result) and s.result.ok
    s.close()


def test_a_quick_solve_stays_in_the_gui_thread(doc):
    clock = _Clock()

    def quick(rig, start=None):
        clock.now += 0.005
        return analyse(rig, start=start)

    s = SolveScheduler(doc, analyse=quick, background_after_ms=120.0, clock=clock)
    s.fire()
    assert s.last_solve_ms == pytest.approx(5.0)
    assert not s.background
    s.close()
