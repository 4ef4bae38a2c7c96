"""The rig that remains when one component lets go: a new Rig, same motion and forces, rope lengths kept.

Each rope is cut into *strands*, one per run (a tied pass fixes the rope to its point, so
a rope split at its tied passes is mechanically the same rope).  Each strand keeps the
unstretched length its run had in the intact rig (``rigged.slack_m`` is set so that the
length follows from the solved positions the remaining rig starts from), so removing a
pass, releasing a grab or freeing an anchor never changes how much rope there is.

What a failure does to the strands:

* an anchor lets go: its point becomes a free point with no rated strength;
* a pulley, edge or sliding pass lets go (its anchor or sling): the pass leaves the rope,
  which straightens past the point;
* a rope grab or tied middle pass lets go: the rope runs through, the two runs become one
  (their lengths add);
* a rope piece is cut: its run carries nothing any more (a run has no tied pass inside).

Then the loose parts are cleared until nothing changes: a run with a free end that holds
nothing runs out through its pulleys (gone); a free point that is only threaded by one
run's pulleys flies off the rope (its passes go: the rope straightens); a free point left
with no rope is gone (the hardware flies).  A run that is hauled and loses its other end,
and a point with a force that loses its last rope, are no longer held: they *run free*.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Mapping

from solver.materials import material_for
from solver.model import Pass, Point, Rig, Rigging, Rope
from solver.stretch import StretchCurve

#: Middle passes a rope runs over (they leave the rope when their anchor or sling lets go).
RUNNING_HOWS = frozenset({"pulley", "sliding", "edge", "capture"})


@dataclass
class Strand:
    """One run of a rope in the remaining rig: its passes (with their index in the original path) and length.

    ``L0`` is the unstretched length in m, None for a hauled run (its tension is the haul force).
    """

    rope: Rope
    passes: list[tuple[int, Pass]]
    L0: float | None
    origin: frozenset[int] = frozenset()  # the intact rig's strands (by number) it was made from

    @property
    def hauled(self) -> bool:
        return self.L0 is None

    def ids(self) -> list[str]:
        return [p.at for _, p in self.passes]


@dataclass(frozen=True)
class Loose:
    """Something the failure sets loose: hardware, a rope end, a run, a point no longer held.

    ``what`` is "hardware" (a pass's point that flew off its rope; ``path`` = how the rope passed it),
    "rope" (a run that carries nothing any more; ``path`` = its points), "slack" (a run left hanging
    loose on a point nothing pulls), "runs free" (a point with a force, or a haul team, no longer
    held; ``path`` = the haul team's last piece).
    """

    what: str
    subject: str  # point id (hardware, runs free) or rope id (rope)
    path: tuple[str, ...] = ()


@dataclass
class Remaining:
    """The rig after a failure: the new Rig, the strands it was built from, what was set loose."""

    rig: Rig
    strands: list[Strand]
    strand_ids: list[str]  # rope id of each strand in ``rig``
    loose: list[Loose] = field(default_factory=list)
    removed_passes: list[tuple[str, str, str, str]] = field(default_factory=list)  # (rope, prev, at, next)
    start: dict[str, tuple[float, float]] = field(default_factory=dict)
    freed: set[str] = field(default_factory=set)  # anchors that let go
    affected: frozenset[int] = frozenset()  # the intact strands (by number) in the parts the failure reaches


def run_lengths(rig: Rig) -> dict[tuple[str, int], float | None]:
    """Unstretched length (m) of every run as rigged on the drawn geometry (None for hauled runs).

    The same rule as the solver: slack_m added to the drawn length, or the drawn length
    divided by 1 + the rope's strain at its pretension (rig-format.md, "Ropes").
    """
    pos = {p.id: (p.x, p.y) for p in rig.points}
    out: dict[tuple[str, int], float | None] = {}
    for rope in rig.ropes:
        curve = None
        for run in rope.runs():
            if run.hauled:
                out[(rope.id, run.index)] = None
                continue
            ids = [rope.path[i].at for i in range(run.first, run.last + 1)]
            length = sum(math.dist(pos[a], pos[b]) for a, b in zip(ids, ids[1:]))
            if rope.rigged.pretension_N is not None:
                if curve is None:
                    curve = StretchCurve(material_for(rig, rope.material).stretch)
                length /= 1.0 + float(curve.strain(float(rope.rigged.pretension_N)))
            else:
                length += float(rope.rigged.slack_m)
            out[(rope.id, run.index)] = length
    return out


def strands_of(rig: Rig) -> list[Strand]:
    """The rig's ropes as strands, one per run, with the runs' unstretched lengths."""
    lengths = run_lengths(rig)
    runs = [(rope, run) for rope in rig.ropes for run in rope.runs()]
    return [Strand(rope, [(i, rope.path[i]) for i in range(run.first, run.last + 1)], lengths[(rope.id, run.index)],
                   frozenset({k})) for k, (rope, run) in enumerate(runs)]


def parts_of(rig: Rig, strands: list[Strand]) -> list[int]:
    """The part (a number) of each strand: strands meeting at a free point move together; fixed points
    separate parts, so a failure in one part leaves the others exactly as they were."""
    free = {p.id for p in rig.points if p.is_structural and not p.is_fixed}
    parent = list(range(len(strands)))

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    first_at: dict[str, int] = {}
    for k, s in enumerate(strands):
        for pid in s.ids():
            if pid in free:
                j = first_at.setdefault(pid, k)
                parent[root(k)] = root(j)
    return [root(k) for k in range(len(strands))]


def pass_key(rope: Rope, index: int) -> str:
    """``ROPE@POINT`` for a middle pass (``ROPE@POINT#2`` for the second pass at the same point), as the solver."""
    at = rope.path[index].at
    n = sum(1 for j in range(1, index + 1) if rope.path[j].at == at)
    return f"{rope.id}@{at}" if n == 1 else f"{rope.id}@{at}#{n}"


class Breaker:
    """Builds the remaining rig for one failure of ``rig``, solved as ``points`` (id -> solved x, y in m)."""

    def __init__(self, rig: Rig, points: Mapping[str, tuple[float, float]], by_parts: bool = True) -> None:
        self.rig = rig
        self.points = dict(points)
        self.strands = strands_of(rig)
        # by_parts=False keeps the whole rig in every remaining rig (the same answer, slower: a test's reference)
        self.parts = parts_of(rig, self.strands) if by_parts else [0] * len(self.strands)

    def nothing(self) -> Remaining:
        """The rig rebuilt from its strands with nothing let go: it solves to the intact state (checks the rebuild)."""
        return self._finish(self._copy())

    # --- the failures ---------------------------------------------------------------------------------
    def anchor(self, point_id: str) -> Remaining:
        """The anchor ``point_id`` lets go: its point is free, rated for nothing."""
        touched = {k for k, s in enumerate(self.strands) if point_id in s.ids()}
        return self._finish(self._copy(), freed={point_id}, affected=self._reach(touched))

    def pass_(self, rope_id: str, index: int) -> Remaining:
        """The middle pass ``index`` of rope ``rope_id`` lets go (a redirect's anchor or sling, or a grab)."""
        strands = self._copy()
        removed: list[tuple[str, str, str, str]] = []
        for k, s in enumerate(strands):
            if s.rope.id != rope_id:
                continue
            idx = [i for i, _ in s.passes]
            if index in idx[1:-1]:  # a running pass inside the run
                j = idx.index(index)
                removed.append((rope_id, s.passes[j - 1][1].at, s.passes[j][1].at, s.passes[j + 1][1].at))
                del s.passes[j]
                break
            if idx[-1] == index and k + 1 < len(strands) and strands[k + 1].rope.id == rope_id:
                nxt = strands[k + 1]  # a tied middle pass: the two runs become one, lengths add
                removed.append((rope_id, s.passes[-2][1].at, s.passes[-1][1].at, nxt.passes[1][1].at))
                s.passes = s.passes[:-1] + nxt.passes[1:]
                s.L0 = None if (s.L0 is None or nxt.L0 is None) else s.L0 + nxt.L0
                s.origin = s.origin | nxt.origin
                del strands[k + 1]
                break
        touched = {k for k, s in enumerate(self.strands)
                   if s.rope.id == rope_id and s.passes[0][0] <= index <= s.passes[-1][0]}
        return self._finish(strands, removed=removed, affected=self._reach(touched))

    def piece(self, rope_id: str, index: int) -> Remaining:
        """Piece ``index`` of rope ``rope_id`` (path[index] -> path[index + 1]) is cut: its run carries nothing."""
        strands = self._copy()
        loose: list[Loose] = []
        touched: set[int] = set()
        for k, s in enumerate(strands):
            idx = [i for i, _ in s.passes]
            if s.rope.id == rope_id and idx[0] <= index < idx[-1]:
                loose += self._let_go(s)
                touched = set(s.origin)
                del strands[k]
                break
        return self._finish(strands, loose=loose, affected=self._reach(touched))

    def slackened(self, rem: Remaining, point_id: str) -> Remaining:
        """``rem`` with every run touching ``point_id`` gone slack: a point nothing pulls hangs loose on them."""
        strands = [Strand(s.rope, list(s.passes), s.L0, s.origin) for s in rem.strands]
        keep, loose = [], list(rem.loose)
        for s in strands:
            if point_id in s.ids():
                loose.append(Loose("slack", s.rope.id, tuple(s.ids())))
                if s.hauled:
                    loose.append(Loose("runs free", s.passes[-1][1].at, tuple(s.ids()[-2:])))
            else:
                keep.append(s)
        return self._finish(keep, freed=rem.freed, loose=loose, removed=list(rem.removed_passes),
                            affected=rem.affected)

    # --- clearing what is loose -----------------------------------------------------------------------
    def _reach(self, touched: set[int]) -> frozenset[int]:
        """Every intact strand in a part that one of ``touched`` belongs to: what a failure there can move."""
        parts = {self.parts[k] for k in touched}
        return frozenset(k for k, part in enumerate(self.parts) if part in parts)

    def _copy(self) -> list[Strand]:
        return [Strand(s.rope, list(s.passes), s.L0, s.origin) for s in self.strands]

    def _let_go(self, s: Strand) -> list[Loose]:
        """A run that loses an end: its rope whips free; a hauled one leaves its haul team unheld."""
        out = [Loose("rope", s.rope.id, tuple(s.ids()))]
        if s.hauled:
            out.append(Loose("runs free", s.passes[-1][1].at, tuple(s.ids()[-2:])))
        return out

    def _finish(self, strands: list[Strand], freed: set[str] | None = None, loose: list[Loose] | None = None,
                removed: list[tuple[str, str, str, str]] | None = None,
                affected: frozenset[int] | None = None) -> Remaining:
        """The remaining rig of the strands in the ``affected`` parts (None: all), loose parts cleared."""
        freed = set(freed or ())
        loose = list(loose or [])
        removed = list(removed or [])
        if affected is None:
            affected = frozenset(range(len(self.strands)))
        strands = [s for s in strands if s.origin & affected]
        near = {pid for k in affected for pid in self.strands[k].ids()} | freed
        points = {p.id: p for p in self.rig.points if not p.is_structural or p.id in near}
        for pid in freed:
            p = points[pid]
            points[pid] = replace(p, kind="point", fixed=False, capacity_N=None, anchor_type=None)
        loaded = {f.at for f in self.rig.forces} | {
            p.id for p in points.values() if self.rig.view == "elevation" and p.mass_kg}
        changed = True
        while changed:
            changed = False
            strands = [s for s in strands if self._drop_repeats(s)]
            attach: dict[str, list[tuple[int, int]]] = {}  # point -> (strand, position in its passes)
            for k, s in enumerate(strands):
                for j, (_, ps) in enumerate(s.passes):
                    attach.setdefault(ps.at, []).append((k, j))
            for pid, p in points.items():
                if p.is_fixed or not p.is_structural:
                    continue
                on = attach.get(pid, [])
                ks = {k for k, _ in on}
                ends = [(k, j) for k, j in on if j in (0, len(strands[k].passes) - 1)]
                if pid in loaded:
                    continue  # a point with a force stays where ropes hold it (or runs free below)
                if len(on) == 1 and ends:  # one run ends here and nothing else: the run holds nothing
                    k = ends[0][0]
                    loose += self._let_go(strands[k])
                    del strands[k]
                    changed = True
                    break
                if on and len(ks) == 1 and not ends:  # only one run's pulleys: the hardware flies off the rope
                    k = next(iter(ks))
                    s = strands[k]
                    hows = tuple(s.passes[j][1].how for _, j in on)
                    for j in sorted((j for _, j in on), reverse=True):
                        removed.append((s.rope.id, s.passes[j - 1][1].at, pid, s.passes[j + 1][1].at))
                        del s.passes[j]
                    loose.append(Loose("hardware", pid, hows))
                    changed = True
                    break
        used = {ps.at for s in strands for _, ps in s.passes}
        for pid, p in list(points.items()):
            if p.is_fixed or not p.is_structural or pid in used:
                continue
            if pid in loaded:
                loose.append(Loose("runs free", pid))
            del points[pid]
        out = self._build(strands, points, loose, removed)
        out.freed, out.affected = freed, affected
        return out

    @staticmethod
    def _drop_repeats(s: Strand) -> bool:
        """Remove middle passes at the same point as a neighbour (the rope merely passes there); False if nothing is left."""
        j = 1
        while j < len(s.passes) - 1:
            if s.passes[j][1].at in (s.passes[j - 1][1].at, s.passes[j + 1][1].at):
                del s.passes[j]
            else:
                j += 1
        return len(s.passes) >= 2 and not (len(s.passes) == 2 and s.passes[0][1].at == s.passes[1][1].at)

    def _build(self, strands: list[Strand], points: dict[str, Point], loose: list[Loose],
               removed: list[tuple[str, str, str, str]]) -> Remaining:
        start = {pid: self.points.get(pid, (p.x, p.y)) for pid, p in points.items()}
        pts = tuple(p if p.is_fixed else replace(p, x=float(start[p.id][0]), y=float(start[p.id][1]))
                    for p in points.values())
        ropes, ids = [], []
        for n, s in enumerate(strands):
            path = [ps for _, ps in s.passes]
            first = path[0].as_end("tied")
            last = path[-1].as_end("hauled" if s.hauled else "tied")
            path = [first, *path[1:-1], last]
            if s.L0 is None:
                rigged = Rigging()
            else:
                drawn = sum(math.dist(start[a.at], start[b.at]) for a, b in zip(path, path[1:]))
                rigged = Rigging(slack_m=float(s.L0 - drawn))
            rid = f"{s.rope.id}~{n}"
            ropes.append(Rope(rid, s.rope.material, tuple(path), rigged, s.rope.label))
            ids.append(rid)
        keep = set(points)
        rig = replace(self.rig, points=pts, ropes=tuple(ropes), forces=tuple(f for f in self.rig.forces if f.at in keep))
        return Remaining(rig, strands, ids, loose, removed, start)
