"""Wet pieces of runs through pulleys or over edges: the rope bowed by the current while it slides.

A wet piece of a run with several passes (a haul line from a bank pulley to the load, the strands of
a 2:1 in the current) is cut, like a tied rope, into short segments by hidden points.  Every hidden
point is a frictionless bend of the rope: the tension is the same on both sides of it (the lumped drag
at a hidden point is taken normal to the rope there, as the cross-flow principle has it), and the
rope slides through it with the rest of its run, so the length of each segment follows the rope.

Why not plain sliding passes: a frictionless pass with a load normal to the rope is neutral along the
rope (any spacing of the points balances the same curve), so Newton's tangent is singular along every
hidden point at the straight start, and the drag of the solved spacing, fed back, moves the points by
as much as it changed (its gain q l / (T theta) is 1, theta = q l / T the bend at a point).  So the
spacing is set as a finite-element mesh is (an arbitrary Lagrangian-Eulerian mesh): within one solve
each hidden point is a tied point of the rope (the run is cut there, each cut part keeps its unstretched
length, so the rope's own stretch holds the points apart and the tension is equal across each point by
its balance along the rope), and the cut parts together keep the run's unstretched length: the rope
slides through the pulleys, and through the whole cut piece (which moves along the rope between its
neighbours as one bead until the tensions on both sides agree).  After each solve the unstretched rope
is handed between the parts so that each hidden point returns to its share of the piece's rope (the
total kept), the points are moved there along the solved curve, and the rig is solved again
(:func:`remesh`); the water solve stops when the spacing and the drag both agree with the solved rope.
The answer is an equilibrium of the whole run (the run's length equation over all its parts, friction
at every real pass as before), with every hidden point at its share of the wet rope.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Mapping

import numpy as np

from solver import memo
from solver.compile import compile_rig, same_structure, with_geometry
from solver.errors import RigModelError
from solver.model import Pass, Point, Rig, Rope, Run

#: Spacing mismatch accepted, as a fraction of a wet piece's unstretched rope (the points sit at their shares).
MESH_REL = 1e-9


@dataclass(frozen=True)
class SlideCut:
    """One run cut at the hidden points of its wet pieces: the augmented ropes and where each segment went."""

    ropes: tuple[Rope, ...]  # one rope per part between hidden points (the run's ends keep their passes)
    points: tuple[Point, ...]  # the hidden points, on their chords
    pieces: dict[int, tuple[tuple[str, ...], tuple[tuple[str, int], ...]]]  # wet piece -> (hidden ids, parts)
    rope_map: dict[str, tuple[str, int, int]]  # augmented rope -> (user rope, piece offset, run)
    hauled_part: str | None  # the part with the hauled end (its length is the team's, not kept)


def cut_run(rope: Rope, run: Run, pts: Mapping[str, Point], wet_ts: Mapping[int, tuple[float, ...]],
            hidden_id, part_prefix: str) -> SlideCut:
    """Cut ``run`` of ``rope`` at hidden points placed at fractions ``wet_ts[k]`` of each wet piece ``k``.

    Each part between two cuts becomes its own rope (a hidden point is a tied end of both); the parts
    share the run's unstretched length in proportion to their drawn length (slack too; a pretension
    is kept), which :class:`Mesh` then tracks.  ``hidden_id(rope, piece, j)`` names the hidden points.
    """
    passes: list[Pass] = [rope.path[run.first]]
    tags: list[tuple[str, int, int]] = []  # per segment: ("user", piece, 0) or ("wet", piece, j)
    hidden_pts: list[Point] = []
    hidden_of: dict[int, tuple[str, ...]] = {}
    for k in run.piece_indices:
        ts = wet_ts.get(k)
        if ts:
            a, b = pts[rope.path[k].at], pts[rope.path[k + 1].at]
            hid = tuple(hidden_id(rope.id, k, j) for j in range(len(ts)))
            hidden_of[k] = hid
            for j, (h, t) in enumerate(zip(hid, ts)):
                hidden_pts.append(Point(id=h, kind="point", x=a.x + (b.x - a.x) * t, y=a.y + (b.y - a.y) * t,
                                        label=f'rope "{rope.name}" in the water'))
                passes.append(Pass(at=h, how="tied"))
                tags.append(("wet", k, j))
            tags.append(("wet", k, len(ts)))
        else:
            tags.append(("user", k, 0))
        passes.append(rope.path[k + 1])
    cuts = [0] + [i for i, p in enumerate(passes) if 0 < i < len(passes) - 1 and p.at in
                  {h for hid in hidden_of.values() for h in hid}] + [len(passes) - 1]
    xy = np.array([_xy(pts, hidden_pts, p.at) for p in passes])
    seg_len = np.hypot(*np.diff(xy, axis=0).T)
    total = float(seg_len.sum()) or 1.0
    ropes: list[Rope] = []
    rope_map: dict[str, tuple[str, int, int]] = {}
    parts: dict[int, list[tuple[str, int]]] = {k: [] for k in hidden_of}
    hauled_part = None
    for i, (c0, c1) in enumerate(zip(cuts[:-1], cuts[1:])):
        sid = f"{part_prefix}{rope.id}~r{run.index}~{i}"
        share = float(seg_len[c0:c1].sum()) / total
        rigged = rope.rigged if rope.rigged.pretension_N is not None else \
            replace(rope.rigged, slack_m=rope.rigged.slack_m * share)
        ropes.append(Rope(id=sid, material=rope.material, path=tuple(passes[c0:c1 + 1]), rigged=rigged,
                          label=rope.name, extra=rope.extra))
        offset = 0
        for local, (kind, k, j) in enumerate(tags[c0:c1]):
            if kind == "wet":
                parts[k].append((sid, local))
            else:
                offset = k - local
        rope_map[sid] = (rope.id, offset, run.index)
        if run.hauled and c1 == len(passes) - 1:
            hauled_part = sid
    pieces = {k: (hidden_of[k], tuple(parts[k])) for k in hidden_of}
    return SlideCut(tuple(ropes), tuple(hidden_pts), pieces, rope_map, hauled_part)


def _xy(pts: Mapping[str, Point], hidden: list[Point], pid: str) -> tuple[float, float]:
    p = pts.get(pid)
    if p is None:
        p = next(h for h in hidden if h.id == pid)
    return (p.x, p.y)


@dataclass
class Mesh:
    """The unstretched length (m) of every cut part of the sliding runs, handed between parts as the rope slides.

    ``lengths`` holds every part that is not hauled; ``solve(..., unstretched_m=lengths)`` sets them.
    """

    lengths: dict[str, float] = field(default_factory=dict)

    def kwargs(self) -> dict:
        """The solver's keyword for these lengths (none before the first, which takes the rigging's)."""
        return {"unstretched_m": dict(self.lengths)} if self.lengths else {}


def start_mesh(aug: Rig, parts: set[str], motion: str | None) -> Mesh:
    """The cut parts' unstretched lengths from their rigging (as the solver compiles them): the first solve's."""
    if not parts:
        return Mesh()
    try:
        s = _system_of(aug, motion)
    except RigModelError:  # the solve names what is wrong
        return Mesh()
    return Mesh({r: float(L0) for r, L0, hauled in zip(s.run_rope, s.run_L0, s.run_hauled)
                 if r in parts and not hauled})


def _system_of(aug: Rig, motion: str | None):
    """``aug`` compiled: on the index arrays of this thread's last solve of its structure when there is one (a
    drag step's rounds solved it with other drag forces: :data:`solver.memo.COMPILED`), equal to compile_rig's."""
    for _, _, _, topo in memo.COMPILED.entries():
        if same_structure(topo, aug, motion, forces=False):
            return with_geometry(topo, aug)
    return compile_rig(aug, motion)


def warm_mesh(aug: Rig, parts: set[str], motion: str | None, kept: Mapping[str, float], groups) -> Mesh:
    """The cut parts' lengths for a warm solve: the last split (:func:`warm_lengths`) of each run.

    A hauled run's kept parts need nothing from the rigging (the team's rope is free), so when every
    sliding run is hauled and was kept the rig is not compiled for its lengths (a drag step's cost).
    """
    if parts and all(hauled and all(p in kept for p in group) for group, hauled in groups):
        return Mesh({p: float(kept[p]) for group, _ in groups for p in group})
    mesh = start_mesh(aug, parts, motion)
    warm_lengths(mesh, kept, groups)
    return mesh


def remesh(mesh: Mesh, sliding, segments, at: dict[str, tuple[float, float]]) -> float:
    """Hand unstretched rope between the cut parts so each hidden point is back at its share; returns the
    largest spacing mismatch found (fraction of a piece's rope).  When it is above :data:`MESH_REL` the
    parts' lengths in ``mesh`` are changed (their total kept) and the hidden points in ``at`` moved along
    the solved rope to their new places; otherwise nothing changes.

    ``sliding``: the chains of sliding runs (``parts`` the (augmented rope, segment index) of each
    segment in order, ``ts`` the hidden points' fractions); ``segments``: the solve's SegmentResults.
    """
    if not mesh.lengths:
        return 0.0
    single = {}
    for s in segments:
        single[(s.rope, s.index)] = s
    worst = 0.0
    moves = []
    for c in sliding:
        cur = np.array([_unstretched(mesh, single, key) for key in c.parts])
        L_w = float(cur.sum())
        if not (L_w > 0 and np.all(np.isfinite(cur))):
            continue
        share = np.diff(np.concatenate(([0.0], c.ts, [1.0])))
        delta = share * L_w - cur
        worst = max(worst, float(np.abs(delta).max()) / L_w)
        moves.append((c, cur, delta))
    if worst <= MESH_REL:
        return worst
    for c, cur, delta in moves:
        for (rid, _), d in zip(c.parts, delta):
            if rid in mesh.lengths:
                mesh.lengths[rid] += float(d)
        nodes = np.array([at[p] for p in (c.a, *c.hidden, c.b)])
        s_old = np.concatenate(([0.0], np.cumsum(cur)))
        s_new = np.concatenate(([0.0], np.cumsum(cur + delta)))[1:-1]
        moved = np.column_stack([np.interp(s_new, s_old, nodes[:, i]) for i in (0, 1)])
        at.update({h: (float(x), float(y)) for h, (x, y) in zip(c.hidden, moved)})
    return worst


def _unstretched(mesh: Mesh, segments, key: tuple[str, int]) -> float:
    """The unstretched length (m) of one segment: a part of one segment keeps its mesh length; a segment of a
    longer part reads it from its solved length and strain."""
    rid, index = key
    seg = segments.get(key)
    if rid in mesh.lengths and index == 0 and (rid, 1) not in segments:
        return mesh.lengths[rid]
    if seg is None:
        return math.nan
    return seg.length_m / (1.0 + seg.strain)


def warm_lengths(mesh: Mesh, kept: Mapping[str, float], groups) -> None:
    """Start a warm solve from the last solve's split of each sliding run's rope between its cut parts.

    ``groups``: per run, (its parts that keep a length, whether it has a hauled part).  A run whose parts
    were all kept gets their last lengths, scaled to this rig's rope in the run (a hauled run's rope is
    the team's: unscaled).  Only a start: :func:`remesh` and the solve reach the same answer from any.
    """
    for parts, hauled in groups:
        if not parts or not all(p in kept and p in mesh.lengths for p in parts):
            continue
        old = sum(kept[p] for p in parts)
        new = sum(mesh.lengths[p] for p in parts)
        scale = 1.0 if hauled or old <= 0 else new / old
        for p in parts:
            mesh.lengths[p] = kept[p] * scale
