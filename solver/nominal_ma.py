"""Nominal mechanical advantage: the strand count the trade teaches, from the rig's topology alone.

The nominal MA is the ideal MA of the same ropes with every pass frictionless, no
stretch and every strand parallel to the line of pull (the T-method: each run of rope
carries one tension; at every travelling point the strands pulling it away from the
load balance the strands pulling it toward the load).  So a Z counts 3:1, a 2:1 on a
3:1 counts 6:1 and a 3:1 on a 3:1 9:1, whatever angles the drawing has; the ideal MA
at the drawn angles and the actual MA (friction, stretch) are the solver's.

Which way a strand pulls a travelling point (toward the load or away from it) is read
from the rope graph: a strand to the load pulls toward it; a strand to an anchor or a
haul team pulls away (a strand over a fixed redirect pulls toward whatever lies beyond
it; one round a pulley on an anchor and back to the same point pulls toward that anchor,
as a Z's upper strands do); a strand to another travelling point pulls toward the load when
that point is fewer strands from the load (breadth-first over travelling points), and
on a tie toward whichever end is nearer the load as drawn.  The result is None when
nothing is hauled (a vector pull or any sideways force has no strand count), when a
point carries a drawn force, or when the runs do not fix the force on the load.
"""

from __future__ import annotations

import math
from collections import deque
from dataclasses import dataclass
from typing import Mapping

import numpy as np

from solver.model import Rig, is_tended_tail

#: Relative size below which a residual or a null-space component counts as zero.
TOL = 1e-9


def _travelling(rig: Rig) -> set[str]:
    """Points the rope moves with: free, structural, not a load."""
    return {p.id for p in rig.points if not p.is_fixed and p.is_structural and p.kind != "load"}


def _ranks(strands: list[tuple[int, str, str, str, str]], travelling: set[str], loads: set[str]) -> dict[str, float]:
    """Strands from the nearest load to each travelling point (breadth-first through travelling points,
    a strand over a fixed redirect counting as one strand to the point beyond it)."""
    nbrs: dict[str, set[str]] = {}
    for _, a, b, far_a, far_b in strands:
        nbrs.setdefault(a, set()).add(far_a)
        nbrs.setdefault(b, set()).add(far_b)
    rank: dict[str, float] = {pid: 0.0 for pid in loads}
    todo = deque(loads)
    while todo:
        here = todo.popleft()
        for there in nbrs.get(here, ()):
            if there in travelling and there not in rank:
                rank[there] = rank[here] + 1.0
                todo.append(there)
    return rank


@dataclass(frozen=True)
class StrandCount:
    """The T-method's answer: each run's tension in units of the total haul force, and the MA.

    ``run_units[(rope id, run index)]`` is the run's tension ÷ the total haul force (1.0 for the
    hauled run of a single haul team, 2.0, 3.0 ... along a Z), or None for a run nothing fixes.
    """

    ma: float
    run_units: Mapping[tuple[str, int], float | None]


def nominal_ma(rig: Rig, positions: Mapping[str, tuple[float, float]] | None = None) -> float | None:
    """The strand-count MA of ``rig`` (force on the loads ÷ haul force, frictionless parallel strands), or None."""
    count = strand_count(rig, positions)
    return None if count is None else count.ma


def strand_count(rig: Rig, positions: Mapping[str, tuple[float, float]] | None = None) -> StrandCount | None:
    """The T-method on ``rig``: the nominal MA and every run's tension in haul-force units, or None (see module)."""
    loads = {p.id for p in rig.points if p.kind == "load"}
    if not loads:
        return None
    travelling = _travelling(rig)
    if any(f.at in travelling and f.magnitude_N > 0 for f in rig.forces):
        return None  # a sideways pull: no strand count
    pts = {p.id: p for p in rig.points}
    # runs: one unknown tension each; hauled runs carry their haul team's force
    strands: list[tuple[int, str, str, str, str]] = []  # (run, point a, point b, far end from a, from b)
    hauled: dict[int, float] = {}
    run_keys: list[tuple[str, int]] = []
    n_runs = 0
    for rope in rig.ropes:
        if any(ps.at not in pts or not pts[ps.at].is_structural for ps in rope.path):
            continue  # a rope to nowhere: the solver reports it

        def far(j: int, step: int) -> str:
            """The point a strand really pulls toward: past fixed redirects (mid-run passes at fixed points)."""
            while 0 < j < len(rope.path) - 1 and rope.path[j].how != "tied" and pts[rope.path[j].at].is_fixed:
                j += step
            return rope.path[j].at

        for run in rope.runs():
            if is_tended_tail(rope, run, pts):
                continue  # carries nothing while hauling: no strand of the system
            r = n_runs
            n_runs += 1
            run_keys.append((rope.id, run.index))
            for k in run.piece_indices:
                a, b = rope.path[k].at, rope.path[k + 1].at
                if a != b:
                    strands.append((r, a, b, far(k + 1, 1), far(k, -1)))
            if run.hauled:
                hp = pts.get(rope.path[run.last].at)
                force = hp.haul_force if hp is not None else None
                hauled[r] = float(force) if force else math.nan
    if not hauled:
        return None
    if all(math.isnan(f) for f in hauled.values()):
        hauled = {r: 1.0 for r in hauled}  # no forces entered: the ratio does not depend on them
    elif any(math.isnan(f) for f in hauled.values()):
        return None
    rank = _ranks(strands, travelling, loads)
    where = positions or {}

    def xy(pid: str) -> tuple[float, float]:
        return where.get(pid) or (pts[pid].x, pts[pid].y)

    def to_load(pid: str) -> float:
        x, y = xy(pid)
        return min(math.hypot(x - xy(lid)[0], y - xy(lid)[1]) for lid in loads)

    def sign(here: str, there: str) -> float:
        """+1 when the strand from ``here`` to ``there`` pulls away from the load, -1 toward it."""
        if there == here:
            return 1.0  # round a pulley on an anchor and back: pulled toward the anchor (a Z's upper strands)
        if there in loads:
            return -1.0
        if there not in travelling:
            return 1.0  # an anchor or haul team
        ri, rj = rank.get(here, math.inf), rank.get(there, math.inf)
        if ri != rj:
            return -1.0 if rj < ri else 1.0
        return -1.0 if to_load(there) < to_load(here) else 1.0

    unknown = [r for r in range(n_runs) if r not in hauled]
    col = {r: j for j, r in enumerate(unknown)}
    rows = {pid: i for i, pid in enumerate(sorted(travelling))}
    a_mat = np.zeros((len(rows), len(unknown)))
    rhs = np.zeros(len(rows))
    load_u = np.zeros(len(unknown))
    load_known = 0.0
    for r, a, b, far_a, far_b in strands:
        for here, there in ((a, far_a), (b, far_b)):
            if here in rows:
                s = sign(here, there)
                if r in col:
                    a_mat[rows[here], col[r]] += s
                else:
                    rhs[rows[here]] -= s * hauled[r]
            elif here in loads:  # every strand at a load pulls it along the line of haul
                if r in col:
                    load_u[col[r]] += 1.0
                else:
                    load_known += hauled[r]
    total_in = float(sum(hauled.values()))
    if unknown:
        if len(rows):
            t, *_ = np.linalg.lstsq(a_mat, rhs, rcond=None)
            if np.abs(a_mat @ t - rhs).max(initial=0.0) > TOL * 1e3 * max(total_in, 1.0):
                return None  # the strands cannot balance as parallel strands
            _, sv, vt = np.linalg.svd(a_mat)
            null = vt[int((sv > TOL * max(sv.max(initial=0.0), 1.0)).sum()):]
        else:
            t, null = np.zeros(len(unknown)), np.eye(len(unknown))
        if null.size and np.abs(null @ load_u).max() > 1e-6:
            return None  # the load's share depends on a run nothing fixes
        delivered = load_known + float(load_u @ t)
        free = np.abs(null).max(axis=0) > 1e-6 if null.size else np.zeros(len(unknown), dtype=bool)
    else:
        delivered, t, free = load_known, np.zeros(0), np.zeros(0, dtype=bool)
    if not math.isfinite(delivered) or delivered <= 0 or total_in <= 0:
        return None
    ma = delivered / total_in
    units: dict[tuple[str, int], float | None] = {}
    for r, key in enumerate(run_keys):
        if r in hauled:
            units[key] = hauled[r] / total_in
        else:
            j = col[r]
            units[key] = None if free[j] else float(t[j]) / total_in
    return StrandCount(float(round(ma)) if abs(ma - round(ma)) <= 1e-9 * ma else ma, units)


def ma_text(ma: float | None) -> str:
    """An MA as people write it: ``"3:1"`` for a whole strand count, ``"2.71:1"`` otherwise, "—" for none."""
    if ma is None or not math.isfinite(ma):
        return "—"
    if abs(ma - round(ma)) < 1e-6:
        return f"{round(ma):d}:1"
    return f"{ma:.2f}:1"
