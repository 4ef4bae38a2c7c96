"""Where a warm water solve starts its outer rounds: the last two settled states of its trail (a live drag, a
pull-needed search: :class:`solver.memo.Trail`), extrapolated along the drag.

The outer rounds of :func:`solver.water.solve_in_water` (drag from the solved directions, rope handed
between the cut parts of a sliding run) gain a fixed factor per round, so their count is set by how far
the first round starts from the answer.  A live drag moves one part of the rig by a few centimetres a
step, mostly in the same direction, and the pull-needed search changes only the pull: the change between
the last two answers, scaled by how far the fixed points (or, when they stay, the loads) moved now against
then, predicts this answer's free points (hidden ones too) and cut-part lengths
to second order in the step (a secant predictor, as in the continuation methods of Allgower & Georg,
"Numerical Continuation Methods", Springer 1990, ch. 2).  Only a start: the rounds end on the same test
whatever the start, so the answer is the same to the solve's tolerance (tested against cold solves).
A sliding run not hauled keeps its rope: the predicted lengths of its parts are scaled back to its total.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping

import numpy as np

from solver import memo
from solver.model import Rig

#: Extrapolation factors used: back to the older state at most (a step undone), and a step half as long again
#: as the last at most (a longer one is not trusted to continue it).
MIN_STRETCH, MAX_STRETCH = -1.0, 1.5


@dataclass(frozen=True)
class WaterState:
    """A settled water solve: fixed and free positions (m) by id, cut-part lengths (m) by augmented rope, and
    the loads that drive it (:func:`drive`)."""

    fixed: dict[str, tuple[float, float]]
    free: dict[str, tuple[float, float]]
    lengths: dict[str, float]
    loads: tuple[float, ...] = ()


def drive(rig: Rig) -> tuple[float, ...]:
    """The loads a rig is solved under (N): each haul team's force, then each applied force's x and y."""
    hauls = [p.haul_force or 0.0 for p in rig.points if p.kind == "haul"]
    forces = [c for f in rig.forces for c in (f.magnitude_N * math.cos(math.radians(f.direction_deg)),
                                              f.magnitude_N * math.sin(math.radians(f.direction_deg)))]
    return tuple(hauls + forces)


def keep(trail: memo.Trail, fixed: set[str], at: Mapping[str, tuple[float, float]], lengths: Mapping[str, float],
         loads: tuple[float, ...]) -> None:
    """Remember a settled solve on ``trail`` (``at``: every point's position, ``fixed``: which are fixed)."""
    trail.keep_state(WaterState({k: tuple(v) for k, v in at.items() if k in fixed},
                                     {k: tuple(v) for k, v in at.items() if k not in fixed}, dict(lengths), loads))


def factor(fixed_now: Mapping[str, tuple[float, float]], loads_now: tuple[float, ...], older: WaterState,
           newer: WaterState) -> float:
    """How far the rig moved on since ``newer``, in units of its move from ``older`` to ``newer`` (projected):
    the fixed points (a drag step) or, when they stay, the loads (a pull searched for); 0 when the states are
    of other points or loads, or nothing moved then.  Clipped to [MIN_STRETCH, MAX_STRETCH]."""
    ids = sorted(fixed_now)
    if set(ids) != set(older.fixed) or set(ids) != set(newer.fixed) or not (
            len(loads_now) == len(older.loads) == len(newer.loads)):
        return 0.0
    moves = []
    for a, b, c in (([older.fixed[k] for k in ids], [newer.fixed[k] for k in ids], [fixed_now[k] for k in ids]),
                    (older.loads, newer.loads, loads_now)):
        a, b, c = (np.asarray(v, dtype=float).ravel() for v in (a, b, c))
        moves.append((b - a, c - b))
    moved = [float(then @ then) > 0 or float(now @ now) > 0 for then, now in moves]
    if moved.count(True) != 1:
        return 0.0
    then, now = moves[moved.index(True)]
    norm = float(then @ then)
    return float(np.clip((now @ then) / norm, MIN_STRETCH, MAX_STRETCH)) if norm > 0 else 0.0


def predict(trail: memo.Trail, fixed_now: Mapping[str, tuple[float, float]], loads_now: tuple[float, ...],
            at: dict[str, tuple[float, float]], hidden: set[str], lengths: dict[str, float], groups) -> None:
    """Move the warm start ``at`` (free points) and ``lengths`` along ``trail``'s last step's change, in place.

    A drag step moves only a start from the newest state (every free user point of ``at`` where that state
    has it); a change of the loads alone (the pull-needed search starts from its nearest trial) starts from
    the two states' line whatever it was given.  A ``hidden`` point starts at its newest place plus the change.  ``groups``: per sliding run, (its kept
    parts, whether it is hauled) -- a run not hauled keeps its total rope.
    """
    states = trail.states()
    if len(states) < 2:
        return
    older, newer = states
    alpha = factor(fixed_now, loads_now, older, newer)
    if alpha == 0.0:  # (also whenever the states hold other fixed points than now: a part let go, another rig)
        return
    users = [k for k in at if k in newer.free and k not in hidden]
    pulled = all(tuple(fixed_now[k]) == newer.fixed[k] for k in fixed_now)  # only the loads changed
    if not all(k in older.free and (pulled or at[k] == newer.free[k]) for k in users):
        return
    for k in [*users, *(h for h in hidden if h in newer.free and h in older.free)]:
        n, o = newer.free[k], older.free[k]
        at[k] = (n[0] + alpha * (n[0] - o[0]), n[1] + alpha * (n[1] - o[1]))
    for parts, hauled in groups:
        if not parts or not all(p in lengths and p in newer.lengths and p in older.lengths for p in parts):
            continue
        total = sum(lengths[p] for p in parts)
        moved = {p: lengths[p] + alpha * (newer.lengths[p] - older.lengths[p]) for p in parts}
        if any(v <= 0 for v in moved.values()):
            continue
        scale = 1.0 if hauled else total / sum(moved.values())
        lengths.update({p: v * scale for p, v in moved.items()})
