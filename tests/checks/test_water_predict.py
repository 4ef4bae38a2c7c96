"""A warm water solve started from the extrapolated last two states (solver.water_predict) reaches the same equilibrium.

The reference for every comparison is an independent, tighter computation of the same equilibrium: a cold
solve (nothing remembered) whose outer rounds run plain to 1e-12 (drag, times the force scale, and spacing,
of the wet rope) instead of the solve's 1e-10 / 1e-9.  The warm answers must agree with it to 1e-8 of the
rig's size (positions) and of its largest tension (forces): the prediction changes only where the rounds
start, never where they stop.  The extrapolation factor is checked against its definition (a projection).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import solver.water as water
import solver.water_slide as water_slide
from solver import memo
from solver.equilibrium import solve
from solver.rigfile import load_rig
from solver.water_predict import WaterState, factor, predict
from tests.checks.test_water_runs import redirect, two_to_one

SAMPLES = Path(__file__).resolve().parents[2] / "samples"
REL = 1e-8


def forget_water() -> None:
    memo.forget_all()


def tight_cold(rig, monkeypatch):
    """The reference: a cold solve with plain rounds run to 1e-12 (nothing remembered, no prediction)."""
    forget_water()
    with monkeypatch.context() as m:
        m.setattr(water, "ROUND_REL", 1e-12)
        m.setattr(water, "MESH_REL", 1e-12)
        m.setattr(water_slide, "MESH_REL", 1e-12)
        ref = solve(rig, ideal=False)
    forget_water()
    assert ref.ok, ref.message
    return ref


def assert_same(a, b) -> None:
    """Same equilibrium to REL: every point (of the rig's size), every tension, every bowed rope's polyline."""
    span = max(max(abs(v) for xy in b.points.values() for v in xy), 1.0)
    for pid, xy in b.points.items():
        assert np.allclose(a.points[pid], xy, rtol=0, atol=REL * span), pid
    t_max = max(s.tension_N for s in b.segments)
    ta = np.array([s.tension_N for s in a.segments])
    tb = np.array([s.tension_N for s in b.segments])
    assert np.abs(ta - tb).max() <= REL * t_max
    for wa, wb in zip(a.water.ropes, b.water.ropes):
        assert np.abs(np.array(wa.polyline) - np.array(wb.polyline)).max() <= REL * span
        assert abs(wa.tension_in_N - wb.tension_in_N) <= REL * t_max
        assert abs(wa.tension_out_N - wb.tension_out_N) <= REL * t_max


def drag_sequence(rig, pid: str, moves):
    """Warm solves of ``rig`` with point ``pid`` dragged by each (dx, dy) in turn (as the live drag does), from
    nothing remembered."""
    forget_water()
    return drag_sequence_no_forget(rig, pid, moves)


# steady 2 cm steps (the prediction's case), then a turn back and a sideways jerk (where it must not mislead)
MOVES = [(0.02, 0.0)] * 4 + [(-0.03, 0.0), (0.0, 0.05), (0.02, 0.0)]


@pytest.mark.parametrize("sample, pid", [("raft-3to1-redirect.rig.json", "A2"),
                                         ("tethered-boat-eddy.rig.json", None)])
def test_warm_drag_steps_of_the_samples_equal_a_tight_cold_solve(sample, pid, monkeypatch):
    rig = load_rig(SAMPLES / sample)
    if pid is None:  # the first fixed point the wet rig has
        pid = next(p.id for p in rig.points if p.is_fixed)
    for moved, warm in drag_sequence(rig, pid, MOVES):
        assert_same(warm, tight_cold(moved, monkeypatch))


@pytest.mark.parametrize("make, pid", [(redirect, "H"), (two_to_one, "A")])
def test_warm_drag_steps_of_sliding_runs_equal_a_tight_cold_solve(make, pid, monkeypatch):
    # the redirect line and the 2:1 of test_water_runs (Irvine's checks there), dragged at one end
    rig = make()
    for moved, warm in drag_sequence(rig, pid, MOVES[:5]):
        assert_same(warm, tight_cold(moved, monkeypatch))


def test_a_steady_drag_settles_in_fewer_rounds_than_a_cold_solve():
    # the point of the prediction: steady 2 cm steps of the raft's redirect settle in at most 3 outer rounds
    # (4 without it, 6 cold): counted, not timed
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    steady = drag_sequence(rig, "A2", [(0.02, 0.0)] * 5)
    rounds = [r.water.rounds for _, r in steady[2:]]
    forget_water()
    assert max(rounds) <= 3 < solve(steady[-1][0]).water.rounds, rounds


def state(fixed, free=None, lengths=None) -> WaterState:
    return WaterState(dict(fixed), dict(free or {}), dict(lengths or {}))


def test_extrapolation_factor_is_the_projection_of_this_move_on_the_last():
    older = state({"A": (0.0, 0.0), "B": (5.0, 0.0)})
    newer = state({"A": (0.02, 0.0), "B": (5.0, 0.0)})

    def f(a_now, b_now=(5.0, 0.0), loads=()):
        return factor({"A": a_now, "B": b_now}, loads, older, newer)

    assert f((0.04, 0.0)) == pytest.approx(1.0)
    assert f((0.03, 0.0)) == pytest.approx(0.5)
    assert f((0.02, 0.05)) == 0.0  # sideways: nothing to continue
    assert f((0.0, 0.0)) == pytest.approx(-1.0)  # undone: back to the older state
    assert f((-1.0, 0.0)) == -1.0 and f((1.0, 0.0)) == 1.5  # long jumps: clipped
    assert factor({"A": (0.04, 0.0)}, (), older, newer) == 0.0  # other points: no factor
    assert factor({"A": (0.04, 0.0), "B": (5.0, 0.0)}, (), older, older) == 0.0  # nothing moved then
    assert f((0.04, 0.0), loads=(1.0,)) == 0.0  # other loads: no factor
    # the fixed points stay and the loads change (the pull-needed search): the loads' projection
    pulls = [WaterState(dict(newer.fixed), {}, {}, (1000.0 * k, 0.0)) for k in (1, 2)]
    assert factor(dict(newer.fixed), (2500.0, 0.0), *pulls) == pytest.approx(0.5)
    assert factor(dict(newer.fixed), (1500.0, 0.0), *pulls) == pytest.approx(-0.5)  # between them: interpolated
    moved_too = {"A": (0.05, 0.0), "B": (5.0, 0.0)}
    assert factor(moved_too, (2500.0, 0.0), *pulls) == 0.0  # both at once: no factor


def test_prediction_keeps_a_run_s_rope_and_moves_only_a_start_from_the_newest_state():
    trail = memo.Trail()
    trail.keep_state(state({"A": (0.0, 0.0)}, {"L": (1.0, 1.0), "h": (2.0, 2.0)}, {"p": 4.0, "q": 6.0}))
    trail.keep_state(state({"A": (0.1, 0.0)}, {"L": (1.1, 1.0), "h": (2.0, 2.2)}, {"p": 4.5, "q": 5.5}))
    at = {"A": (0.2, 0.0), "L": (1.1, 1.0), "h": (9.0, 9.0)}
    lengths = {"p": 4.5, "q": 5.5}
    predict(trail, {"A": (0.2, 0.0)}, (), at, {"h"}, lengths, [(("p", "q"), False)])
    assert at["L"] == pytest.approx((1.2, 1.0)) and at["h"] == pytest.approx((2.0, 2.4))
    assert lengths["p"] + lengths["q"] == pytest.approx(10.0)  # a run not hauled keeps its rope
    assert lengths["p"] > 4.5
    at = {"A": (0.2, 0.0), "L": (0.7, 0.7), "h": (9.0, 9.0)}  # a start from elsewhere: left alone
    predict(trail, {"A": (0.2, 0.0)}, (), at, {"h"}, {"p": 4.5, "q": 5.5}, [(("p", "q"), False)])
    assert at == {"A": (0.2, 0.0), "L": (0.7, 0.7), "h": (9.0, 9.0)}


def test_two_threads_dragging_at_once_get_the_answers_of_one_thread():
    # the kept states are shared by the GUI thread and the worker: another thread's state may only cost rounds
    import threading

    raft = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    moves = [(0.02, 0.0)] * 4
    alone = [r for _, r in drag_sequence(raft, "A2", moves)]
    out: dict[int, list] = {}

    def drag(k: int) -> None:
        out[k] = [r for _, r in drag_sequence_no_forget(raft, "A2", moves)]

    threads = [threading.Thread(target=drag, args=(k,)) for k in range(2)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    for k in range(2):
        for a, b in zip(out[k], alone):
            assert_same(a, b)


def drag_sequence_no_forget(rig, pid: str, moves):
    """Warm solves of ``rig`` with point ``pid`` dragged by each (dx, dy) in turn on the live trail (as the
    sketchpad makes them), keeping what is remembered."""
    last = solve(rig, trail=memo.LIVE_TRAIL)
    p = rig.point(pid)
    x, y = p.x, p.y
    out = []
    for dx, dy in moves:
        x, y = x + dx, y + dy
        moved = rig.moved(pid, x, y)
        last = solve(moved, start=dict(last.points), ideal=False, trail=memo.LIVE_TRAIL)
        assert last.ok, last.message
        out.append((moved, last))
    return out


def test_a_change_of_the_loads_alone_starts_between_the_last_two_states_whatever_the_start():
    # the pull-needed search hands the nearest trial's points; the line through the last two trials is nearer
    trail = memo.Trail()
    trail.keep_state(WaterState({"A": (0.0, 0.0)}, {"L": (1.0, 1.0)}, {}, (880.0,)))
    trail.keep_state(WaterState({"A": (0.0, 0.0)}, {"L": (1.0, 2.0)}, {}, (440.0,)))
    at = {"A": (0.0, 0.0), "L": (1.0, 1.0)}  # started from the older trial's answer
    predict(trail, {"A": (0.0, 0.0)}, (660.0,), at, set(), {}, [])
    assert at["L"] == pytest.approx((1.0, 1.5))  # half-way back along the line


def test_a_start_from_states_of_other_fixed_points_is_left_as_given():
    # the failure scan solves each rig with one part let go, one after another: the kept states (anchor A1 let
    # go) hold other fixed points than the rig solved now (A1 held, A2 let go), so the start is not moved (it
    # raised KeyError reading A1's kept place)
    trail = memo.Trail()
    trail.keep_state(state({"A2": (5.0, 0.0)}, {"L": (1.0, 1.0)}))
    trail.keep_state(state({"A2": (5.1, 0.0)}, {"L": (1.1, 1.0)}))
    at = {"L": (1.1, 1.0)}
    predict(trail, {"A1": (0.0, 0.0)}, (), at, set(), {}, [])
    assert at == {"L": (1.1, 1.0)}


def test_a_scan_on_the_worker_never_moves_where_the_drag_starts():
    # the What-if scan on the worker reads and keeps no trail: the live drag's next step starts where it would have
    import threading

    from solver.failures import scan

    raft = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    drag_sequence(raft, "A2", [(0.02, 0.0)] * 2)
    kept = memo.LIVE_TRAIL.states()
    worker = threading.Thread(target=lambda: scan(raft))
    worker.start()
    worker.join()
    assert memo.LIVE_TRAIL.states() is kept
    forget_water()
