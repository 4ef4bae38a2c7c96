"""Solving a rig in moving water: ropes bowed by the current and things in the water pushed downstream.

How it works (plan view only; the elevation view has no current):

* A free load or point with a wetted area and a shape gets the drag force at its position, along
  the local flow (``solver.water_drag.body_drag``); a fixed one reports the current's push.
* A rope piece that crosses moving water and is a run of its own (tied at both ends: a tether,
  a line across the river) is split at the water's edge and its wet part cut into short segments
  by hidden points.  Each hidden point is a tied pass, so it keeps its place along the rope (fixed
  in arc length: each segment keeps its share of the run's unstretched length) and carries the
  tension straight through up to the tangential share of the lumped drag, which the cross-flow
  principle neglects.  This is the lumped-mass cable of the textbooks (Irvine, Cable Structures, ch. 1):
  equal lumped loads on a string put its nodes on the funicular curve of the distributed load.
* A wet piece of a longer run (through a pulley or an edge) is cut the same way, but the rope slides
  through its hidden points: the run is cut into parts at them, the parts together keep the run's
  rope and hand it between them after each solve so that every hidden point stays at its share of the
  wet rope, and the drag at a hidden point is normal to the rope, so the tension is the same on both
  sides of it (``solver.water_slide``).
* The drag on a segment follows the segment's direction, so the rig is solved, the drag updated from
  the solved directions and the rig solved again (warm) until the drag used and the drag of the
  solved geometry agree to the solver's tolerance; the reported residual includes that mismatch.

The hidden points never leave this module: the Result names only the user's points and ropes, and
``Result.water`` carries each bowed rope (its polyline and the tension at both ends of its wet part).
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field, replace
from typing import Callable, Mapping

import numpy as np

from solver import memo
from solver.ma_input import drawn_pull_N, hauls, rescaled_to_user
from solver.materials import material_for
from solver.model import Force, Pass, Point, Rig, Rope, Site
from solver.result import Result, Warning_
from solver.water_forces import HIDDEN, _drag_forces, _scale
from solver.water_predict import drive, keep, predict
from solver.water_site import FlowField, flow_field
from solver.water_slide import MESH_REL, cut_run, remesh, start_mesh, warm_mesh
from solver.water_trail import bow_start, keep_bows

log = logging.getLogger(__name__)

#: Length of one hidden segment in the water, m, and the fewest/most per wet piece (accuracy vs speed: ours).
SEGMENT_M = 2.0
MIN_SEGMENTS = 6
MAX_SEGMENTS = 24
#: Outer iterations (drag from the solved directions) before giving up.
MAX_ROUNDS = 60
#: Drag mismatch aimed for, times the rig's force scale (the solver's own target, equilibrium.TARGET_REL).
ROUND_REL = 1e-10


def in_water(rig: Rig) -> bool:
    """True when the rig is drawn in plan over at least one moving water feature."""
    return rig.view == "plan" and not flow_field(rig).empty


def dry_site(rig: Rig) -> Rig:
    """``rig`` with every current taken off its water features (still water)."""
    feats = tuple(replace(f, flow=None) for f in rig.site.features)
    return replace(rig, site=replace(rig.site, features=feats))


def without_current(result: Result) -> Result:
    """A still-water ``result`` that says so: the stroke-by-stroke haul (unstretched lengths given) has no current yet."""
    note = Warning_("water-left-out", "", "The current's push is left out of this stroke-by-stroke haul: its "
                                          "ropes and loads are solved in still water.", "warning")
    return replace(result, warnings=tuple(result.warnings) + (note,))


@dataclass(frozen=True)
class _Chain:
    """One subdivided piece: rope ``rope`` piece ``piece`` from ``a`` to ``b``, hidden points at fractions ``ts``."""

    rope: str
    piece: int
    run: int
    a: str
    b: str
    ts: tuple[float, ...]  # fractions of the drawn piece, strictly inside (0, 1)
    hidden: tuple[str, ...]
    sub_ropes: tuple[str, ...]
    diameter_m: float
    wet: tuple[tuple[float, float], ...]  # wet intervals of the drawn piece
    sliding: bool = False  # a piece of a run through a pulley or edge (solver.water_slide)
    parts: tuple[tuple[str, int], ...] = ()  # (augmented rope, its piece index) of each segment, in order


@dataclass
class _Plan:
    """The augmented rig's structure: the user's rig with wet runs cut into hidden segments."""

    rig: Rig  # augmented, hidden points on their chords, no site features
    chains: list[_Chain]
    rope_map: dict[str, tuple[str, int, int]]  # augmented rope id -> (user rope, piece offset, run; -1 kept)
    notes: list[Warning_]
    wet_bodies: list[Point]
    sliding_parts: set[str] = field(default_factory=set)  # augmented ropes of the cut sliding runs
    slide_groups: list[tuple[tuple[str, ...], bool]] = field(default_factory=list)  # per run: kept parts, hauled

    @property
    def sliding(self) -> list[_Chain]:
        return [c for c in self.chains if c.sliding]


def _hidden_id(rope: str, piece: int, j: int) -> str:
    return f"{HIDDEN}{rope}~{piece}~{j}"


def _fractions(wet: list[tuple[float, float]], length: float) -> list[float]:
    """Node fractions along a piece: the water's edges, and each wet interval cut into short segments.

    The counts are decided on numbers snapped to their whole or half value when within rounding of it: a
    13 m wet part (7 segments, 3.5 pairs) otherwise got 8 or 6 hidden points from one 2 cm drag step to the
    next as rounding fell, and each change of count recompiled the rig and redrew the bow with other nodes."""
    wet_t = sum(t1 - t0 for t0, t1 in wet)
    wet_len = wet_t * length
    n_total = int(min(MAX_SEGMENTS, max(MIN_SEGMENTS, math.ceil(_snapped(wet_len / SEGMENT_M)))))
    ts: set[float] = set()
    for t0, t1 in wet:
        share = (t1 - t0) / wet_t if wet_t > 0 else 1.0  # exactly 1 for a single wet interval
        n = 2 * max(1, round(_snapped(n_total * share / 2)))  # even: a node mid-way
        ts.update(np.linspace(t0, t1, n + 1).tolist())
    return sorted(t for t in ts if 1e-9 < t < 1 - 1e-9)


def _snapped(x: float) -> float:
    """``x`` on the nearest half-integer when within 1e-9 of it (rounding noise), else ``x``."""
    half = round(2 * x) / 2
    return half if abs(x - half) <= 1e-9 else x


def _plan(rig: Rig, ff: FlowField) -> _Plan:
    """Cut every wet single-piece run of ``rig`` into hidden tied segments; note the wet pieces left straight."""
    pts = {p.id: p for p in rig.points}
    ropes: list[Rope] = []
    hidden_points: list[Point] = []
    chains: list[_Chain] = []
    rope_map: dict[str, tuple[str, int]] = {}
    notes: list[Warning_] = []
    sliding_parts: set[str] = set()
    slide_groups: list[tuple[tuple[str, ...], bool]] = []
    for rope in rig.ropes:
        try:
            mat = material_for(rig, rope.material)
            diameter = mat.diameter
        except Exception:  # noqa: BLE001 - an unknown material is the solver's error to name
            diameter = None
        cut_runs: dict[int, tuple[float, ...]] = {}
        slide: dict[int, dict[int, tuple[float, ...]]] = {}  # run -> wet piece -> hidden fractions
        for run in rope.runs():
            for k in run.piece_indices:
                a, b = pts.get(rope.path[k].at), pts.get(rope.path[k + 1].at)
                if a is None or b is None:
                    continue
                wet = ff.wet_intervals(a.xy, b.xy)
                if not wet:
                    continue
                if diameter is None:
                    notes.append(Warning_("rope-drag-unknown", rope.id,
                                          f'rope "{rope.name}" crosses moving water but its material has no '
                                          f'diameter: the water\'s push on it is left out', "warning"))
                    continue
                if run.last - run.first == 1 and not run.hauled:
                    cut_runs[k] = tuple(_fractions(wet, math.dist(a.xy, b.xy)))
                    chains.append(_Chain(rope.id, k, run.index, a.id, b.id, cut_runs[k], (), (), diameter,
                                         tuple(wet)))
                else:  # a piece of a run through pulleys or edges: cut too, the rope sliding (water_slide)
                    ts = tuple(_fractions(wet, math.dist(a.xy, b.xy)))
                    slide.setdefault(run.index, {})[k] = ts
                    chains.append(_Chain(rope.id, k, run.index, a.id, b.id, ts, (), (), diameter, tuple(wet),
                                         sliding=True))
        if not cut_runs and not slide:
            ropes.append(rope)
            rope_map[rope.id] = (rope.id, 0, -1)
            continue
        for run in rope.runs():  # one rope per run (a tied pass fixes the rope there: the same rope)
            k = run.first
            if run.index in slide:
                cut = cut_run(rope, run, pts, slide[run.index], _hidden_id, HIDDEN)
                ropes.extend(cut.ropes)
                hidden_points.extend(cut.points)
                rope_map.update(cut.rope_map)
                sliding_parts.update(r.id for r in cut.ropes)
                slide_groups.append((tuple(r.id for r in cut.ropes if r.id != cut.hauled_part),
                                     cut.hauled_part is not None))
                for piece, (hid, parts) in cut.pieces.items():
                    i = next(i for i, c in enumerate(chains) if c.rope == rope.id and c.piece == piece)
                    chains[i] = replace(chains[i], hidden=hid, parts=parts)
            elif k in cut_runs:
                ts = cut_runs[k]
                a, b = pts[rope.path[k].at], pts[rope.path[k + 1].at]
                hid = tuple(_hidden_id(rope.id, k, j) for j in range(len(ts)))
                for h, t in zip(hid, ts):
                    hidden_points.append(Point(id=h, kind="point", x=a.x + (b.x - a.x) * t,
                                               y=a.y + (b.y - a.y) * t, label=f'rope "{rope.name}" in the water'))
                ends = (rope.path[k],) + tuple(Pass(at=h) for h in hid) + (rope.path[k + 1],)
                n = len(ends) - 1
                cuts = (0.0, *ts, 1.0)
                subs = []
                for j in range(n):
                    sid = f"{HIDDEN}{rope.id}~{k}~s{j}"
                    subs.append(sid)
                    # each segment keeps its share of the run's unstretched length: slack in proportion too
                    rigged = rope.rigged if rope.rigged.pretension_N is not None else \
                        replace(rope.rigged, slack_m=rope.rigged.slack_m * (cuts[j + 1] - cuts[j]))
                    first = replace(ends[j], how="tied") if j else ends[j]
                    last = replace(ends[j + 1], how="tied", hardware=None) if j < n - 1 else ends[j + 1]
                    ropes.append(Rope(id=sid, material=rope.material, path=(first, last), rigged=rigged,
                                      label=rope.name, extra=rope.extra))
                    rope_map[sid] = (rope.id, k, run.index)
                i = next(i for i, c in enumerate(chains) if c.rope == rope.id and c.piece == k)
                chains[i] = replace(chains[i], hidden=hid, sub_ropes=tuple(subs), parts=tuple((s, 0) for s in subs))
            else:
                rid = f"{HIDDEN}{rope.id}~r{run.index}"
                ropes.append(Rope(id=rid, material=rope.material, path=rope.path[run.first:run.last + 1],
                                  rigged=rope.rigged, label=rope.name, extra=rope.extra))
                rope_map[rid] = (rope.id, run.first, run.index)
    bodies = [p for p in rig.points if p.wetted_area_m2 and p.drag_shape and ff.feature_at(p.x, p.y) is not None
              or (p.wetted_area_m2 and p.drag_shape and not p.is_fixed)]
    aug = replace(rig, points=rig.points + tuple(hidden_points), ropes=tuple(ropes),
                  site=Site(image=None, features=(), extra={}))
    return _Plan(aug, chains, rope_map, notes, bodies, sliding_parts, slide_groups)


def _positions(result: Result, plan: _Plan, base: Mapping[str, tuple[float, float]]) -> dict[str, tuple[float, float]]:
    return {**base, **result.points} if result.points else dict(base)


def _with_forces(plan: _Plan, forces: Mapping[str, np.ndarray]) -> Rig:
    fixed = {p.id for p in plan.rig.points if p.is_fixed}
    extra = tuple(Force(at=pid, magnitude_N=float(math.hypot(*f)), direction_deg=math.degrees(math.atan2(f[1], f[0])),
                        label="water") for pid, f in forces.items() if pid not in fixed and (f[0] or f[1]))
    return replace(plan.rig, forces=plan.rig.forces + extra)


def _mismatch(old: Mapping[str, np.ndarray], new: Mapping[str, np.ndarray], fixed: set[str]) -> float:
    keys = (set(old) | set(new)) - fixed
    return max((float(np.hypot(*(np.asarray(new.get(k, 0.0)) - np.asarray(old.get(k, 0.0)) + np.zeros(2))))
                for k in keys), default=0.0)


def solve_in_water(rig: Rig, solve: Callable[..., Result], *, start=None, motion: str | None = None,
                   ideal: bool = True, trail: memo.Trail | None = None) -> Result:
    """Equilibrium of ``rig`` with the current's drag on ropes and bodies (see the module docstring); ``solve`` is
    :func:`solver.equilibrium.solve`, handed in (the equilibrium calls this module: no import circle).

    ``trail`` (a live drag's, a search's): a warm solve also starts from its kept bows, cut-part lengths and the
    extrapolation of its last two states, and a settled solve is kept on it; without one the answer depends on
    ``rig`` and ``start`` alone (a failure scan, a report: never on what was solved before)."""
    if any(p.id.startswith(HIDDEN) for p in rig.points) or any(r.id.startswith(HIDDEN) for r in rig.ropes):
        return Result(status="invalid", message=f'ids may not begin with "{HIDDEN}"')
    ff = flow_field(rig)
    plan = _plan(rig, ff)
    fixed = {p.id for p in plan.rig.points if p.is_fixed}
    at = {p.id: p.xy for p in plan.rig.points}
    if start:
        # a fixed point stays where the rig has it now (a dragged anchor): the start's is where it was
        at.update({k: tuple(v) for k, v in start.items() if k in at and k not in fixed})
        if trail is not None:
            at.update(bow_start(trail, plan.chains, at))
        # the sliding runs' cut parts (water_slide)
        mesh = warm_mesh(plan.rig, plan.sliding_parts, motion, trail.lengths() if trail is not None else {},
                         plan.slide_groups)
        if trail is not None:
            predict(trail, {k: at[k] for k in fixed}, drive(rig), at, {h for c in plan.chains for h in c.hidden},
                    mesh.lengths, plan.slide_groups)  # a steady drag: along the last step (water_predict)
    else:
        mesh = start_mesh(plan.rig, plan.sliding_parts, motion)
    forces, _ = _drag_forces(plan, ff, at)
    warm = dict(at) if start else None
    result = None
    gap = math.inf
    iterations = 0
    for rounds in range(1, MAX_ROUNDS + 1):
        result = solve(_with_forces(plan, forces), start=warm, motion=motion, ideal=False, **mesh.kwargs())
        iterations += result.iterations
        log.debug("round %d: %d iterations, %s", rounds, result.iterations, result.status)
        if not result.points or result.status not in ("ok", "diverged"):
            break
        at = _positions(result, plan, at)
        spacing = remesh(mesh, plan.sliding, result.segments, at)  # moves hidden points only when off their shares
        new, _ = _drag_forces(plan, ff, at)
        gap = _mismatch(forces, new, fixed)
        forces = new
        warm = at
        if gap <= ROUND_REL * _scale(rig, forces, result) and spacing <= MESH_REL:
            break
    if ideal and result is not None and result.ok and result.ma_ideal is None:
        # friction acts: the frictionless re-solve behind the ideal MA, once, with the settled drag
        ma_ideal = solve(_with_forces(plan, forces), start=at, motion=motion, ideal=True, **mesh.kwargs()).ma_ideal
        result = replace(result, ma_ideal=ma_ideal)
    if result is not None and result.ok and trail is not None:
        keep_bows(trail, plan.chains, at)
        trail.keep_lengths(mesh.lengths)
        keep(trail, fixed, at, mesh.lengths, drive(rig))
    if result is not None and result.ok:
        if not hauls(rig):  # the MA is over the user's own pull, never over the current's drag
            solved, own = drawn_pull_N(_with_forces(plan, forces)), drawn_pull_N(rig)
            result = replace(result, ma_actual=rescaled_to_user(result.ma_actual, solved, own),
                             ma_ideal=rescaled_to_user(result.ma_ideal, solved, own))
    result = replace(result, iterations=iterations)
    return _mapped(rig, plan, ff, result, forces, gap, rounds)


def _mapped(rig: Rig, plan: _Plan, ff: FlowField, aug: Result, forces: Mapping[str, np.ndarray],
            gap: float, rounds: int) -> Result:
    """The augmented Result in the user's terms: hidden points folded into their ropes, water details attached."""
    from solver.water_records import user_result

    return user_result(rig, plan, ff, aug, forces, gap, rounds)
