"""Where things go when a component lets go: the swept area of one failure (shapely polygons, site metres).

The danger area of a failure is the union of

* the area each rope piece sweeps as the points it holds move from where they were to
  where they come to rest, and on to the far end of the overshoot (the convex hull of the
  piece's old and new positions);
* for a point that swings on one rope, the sector of the circle about where that rope is
  held, from its start to the mirror position on the other side (an undamped swing runs
  through its rest position and up as far again; check-values.md, "When something lets go");
* for a pass that leaves its rope (a redirect whose anchor or sling fails, hardware flying
  off), the triangle the two legs sweep as the rope straightens, with the hardware's
  flight along the legs' bisector (:func:`solver.danger.bight_zone`, with no reach limit);
* for a run that lets go (a cut piece, a released end), the band its pieces whip through:
  the recoil band of :mod:`solver.danger`, at least ``FLIGHT_MARGIN_M`` wide.

Everything gets ``FLIGHT_MARGIN_M`` around it for the size of the hardware and a person's
reach: the project's own choice, not a published value or common practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Mapping

import numpy as np
from shapely.geometry import LineString, MultiPoint, Polygon
from shapely.geometry.base import BaseGeometry
from shapely.ops import unary_union

from solver.danger import QUAD_SEGS, bight_zone, recoil_half_width_m
from solver.failure_rig import Remaining
from solver.result import Result

#: Margin around every computed failure area (m): the project's own choice, no source.
FLIGHT_MARGIN_M = 0.5
#: Points per radian on a swing's arc.
ARC_POINTS_PER_RAD = 24

XY = tuple[float, float]


def swing_sector(pivot: XY, start: XY, rest: XY) -> Polygon:
    """Sector about ``pivot`` from ``start`` through ``rest`` to the mirror of ``start`` about the line pivot-rest."""
    c = np.asarray(pivot, float)
    r = float(np.hypot(*(np.asarray(start, float) - c)))
    a0 = math.atan2(start[1] - c[1], start[0] - c[0])
    a1 = math.atan2(rest[1] - c[1], rest[0] - c[0])
    swing = (a1 - a0 + math.pi) % (2 * math.pi) - math.pi  # signed angle start -> rest, (-pi, pi]
    n = max(4, int(abs(2 * swing) * ARC_POINTS_PER_RAD))
    angles = a0 + np.linspace(0.0, 2 * swing, n + 1)
    arc = np.column_stack([c[0] + r * np.cos(angles), c[1] + r * np.sin(angles)])
    return Polygon([tuple(c), *map(tuple, arc)]).buffer(0)


def _hull(*pts: XY) -> BaseGeometry:
    return MultiPoint([tuple(p) for p in pts]).convex_hull


@dataclass(frozen=True)
class ZonePart:
    """One piece of a failure's area: what sweeps it ("swept", "swing", "whip", "flight"), the point ids it
    joins (a rope piece's two ends, a pass and its neighbours), and the area with its margin (site m)."""

    kind: str
    ends: frozenset[str]
    geometry: BaseGeometry


def swept_pieces(pieces: list[tuple[str, str]], before: Mapping[str, XY], after: Mapping[str, XY],
                 moved: set[str]) -> list[ZonePart]:
    """The area each piece (from id, to id) touching a moved point sweeps between ``before`` and ``after``."""
    out = []
    for a, b in pieces:
        if (a in moved or b in moved) and a in before and b in before and a in after and b in after:
            out.append(ZonePart("swept", frozenset((a, b)), _hull(before[a], before[b], after[a], after[b])))
    return out


def whip_band(ids: tuple[str, ...], rope_id: str, pos: Mapping[str, XY], intact: Result) -> list[ZonePart]:
    """The band a run that lets go whips through: each of its pieces' recoil band, at least FLIGHT_MARGIN_M wide."""
    segs = {(s.rope, s.from_point, s.to_point): s for s in intact.segments}
    out = []
    for a, b in zip(ids, ids[1:]):
        if a not in pos or b not in pos:
            continue
        s = segs.get((rope_id, a, b))
        w = FLIGHT_MARGIN_M
        if s is not None:
            w = max(w, recoil_half_width_m(s.tension_N, s.length_m, s.strain))
        line = LineString([pos[a], pos[b]]) if pos[a] != pos[b] else LineString([pos[a], pos[a]])
        out.append(ZonePart("whip", frozenset((a, b)), line.buffer(w, quad_segs=QUAD_SEGS)))
    return out


def failure_zone(remaining: Remaining, intact: Result, after_points: Mapping[str, XY],
                 peak_points: Mapping[str, XY] | None, swings: list[tuple[str, str, XY, XY, XY]]
                 ) -> tuple[BaseGeometry, tuple[ZonePart, ...]]:
    """The danger area of one failure (see the module docstring): its union, a shapely (Multi)Polygon in
    site metres, and the parts it is made of (each with the margin).

    ``after_points``: where the remaining rig comes to rest; ``peak_points``: the far end of a drop's
    overshoot (or None); ``swings``: (point id, pivot id, pivot, start, rest) of each point that swings on one rope.
    """
    before = {k: (float(v[0]), float(v[1])) for k, v in intact.points.items()}
    parts: list[ZonePart] = []
    for _rope, prev, at, nxt in remaining.removed_passes:
        if prev in before and at in before and nxt in before:
            parts.append(ZonePart("flight", frozenset((prev, at, nxt)), bight_zone(
                before[at], before[prev], before[nxt], reach_m=math.inf, margin_m=FLIGHT_MARGIN_M)))
    for lo in remaining.loose:
        if lo.what in ("rope", "slack"):
            parts += whip_band(lo.path, lo.subject, before, intact)
    moved = {pid for pid, p in after_points.items()
             if pid in before and math.dist(before[pid], p) > 1e-3}
    pieces = [(a.at, b.at) for r in remaining.rig.ropes for a, b in zip(r.path, r.path[1:])]
    parts += swept_pieces(pieces, before, after_points, moved)
    if peak_points:
        parts += swept_pieces(pieces, before, {**after_points, **peak_points}, moved)
    for pid, pivot_id, pivot, start, rest in swings:
        parts.append(ZonePart("swing", frozenset((pid, pivot_id)), swing_sector(pivot, start, rest)))
    parts = [replace(p, geometry=p.geometry.buffer(FLIGHT_MARGIN_M, quad_segs=QUAD_SEGS))
             for p in parts if not p.geometry.is_empty]
    if not parts:
        return Polygon(), ()
    return unary_union([p.geometry for p in parts]), tuple(parts)


def rings(geometry: BaseGeometry) -> list[list[list[float]]]:
    """The outer boundary of each polygon of ``geometry`` as a list of [x, y] in m (JSON ``zone``).

    A hole inside a swept area is left filled: the zone errs toward keeping people out.
    """
    if geometry.is_empty:
        return []
    polys = list(getattr(geometry, "geoms", [geometry]))
    out = []
    for p in polys:
        if not isinstance(p, Polygon):
            continue
        out.append([[round(x, 4), round(y, 4)] for x, y in p.exterior.coords])
    return out
