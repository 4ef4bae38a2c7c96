"""Danger zones of a solved rig: where a person must not stand (shapely polygons, metres).

Two kinds, both drawn from the solved geometry and tensions of a :class:`Result`:

* ``bight`` -- the inside of the bight at every loaded redirect (a ``pulley``,
  ``sliding`` or ``edge`` pass that turns the rope by at least
  ``BIGHT_MIN_DEFLECTION_DEG``).  If the redirect's anchor or attachment fails, the
  pulley and both legs fly toward the bisector of the legs and sweep the triangle
  between them.  Zone = that triangle (pass point, and the point on each leg at
  ``min(leg length, BIGHT_REACH_M)``) united with the pulley's flight path: a strip of
  half-width ``BIGHT_MARGIN_M`` along the bisector, twice as far as the triangle's far
  side (the pulley overshoots the line the rope snaps straight to as far again) but no
  longer than the shorter cut leg.  So a doubled-back rope (3:1 pulleys, 180 deg turn)
  still has a zone with width, and a shallow vector pull only a short one.
  The "inside of the bight" rule is common practice, no source; reach and margin are
  the project's own choice (no source, not common practice).  Once the failure scan has
  run (:mod:`solver.failures`) the plan shows the computed failure areas instead.
* ``recoil`` -- a band along every loaded straight piece of rope, for the whip of a
  failed rope or a released end.  Half-width ``w = RECOIL_MIN_M + RECOIL_M_PER_J * E``
  capped at ``RECOIL_MAX_M``, where ``E = 1/2 * T * delta`` is the elastic energy stored
  in the piece (triangle rule; an upper bound for static rope, whose tension-strain
  curve stiffens with load) and ``delta = L * eps / (1 + eps)`` the metres it has
  stretched.  So the band widens with both tension and stretch.  The constants are
  the project's own choice, no source: 0.5 m at any load, about +1 m per 400 J (2 kN on 20 m of
  rope at 2 %), at most 5 m.  Pieces below ``LOADED_MIN_N`` get no band.

The band's ends are round (a buffer), so it also reaches ``w`` past each end of the piece.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass
from typing import Iterator, Mapping

import numpy as np
import shapely
from shapely.geometry import LineString, MultiPolygon, Polygon
from shapely.geometry.base import BaseGeometry

from solver.model import Rig, Rope
from solver.result import Result, SegmentResult, record

log = logging.getLogger(__name__)

#: A piece carrying less than this (N) counts as unloaded: no zone, no hardware load.
LOADED_MIN_N = 1.0
#: A redirect turning the rope by less than this (degrees) has no bight zone worth drawing.
BIGHT_MIN_DEFLECTION_DEG = 5.0
#: Longest part of each leg the bight triangle takes (m). The project's own choice, no source.
BIGHT_REACH_M = 15.0
#: Margin around the bight triangle (m). The project's own choice, no source.
BIGHT_MARGIN_M = 0.5
#: Recoil band half-width at any load (m), growth per joule stored, and cap. The project's own choice, no source.
RECOIL_MIN_M = 0.5
RECOIL_M_PER_J = 1.0 / 400.0
RECOIL_MAX_M = 5.0
#: Segments per quarter circle of a buffer's round ends (shapely's default too).
QUAD_SEGS = 16

#: Passes that turn a running rope: the places a bight zone is drawn.
REDIRECT_HOWS = frozenset({"pulley", "sliding", "edge", "capture"})

#: What the quick (fixed-shape) zones are: one wording for the CLI, the dock, the pages and the plan's key.
QUICK_ESTIMATE = "quick estimate from a fixed shape, not computed"
#: ... and where the computed ones are.
QUICK_ESTIMATE_NOTE = (f"{QUICK_ESTIMATE}: `ropewright failures` (or the What if "
                       "dock) lets each component go and shows where things actually fly")


@dataclass(frozen=True)
class DangerZone:
    """One area to keep people out of: a bight or a recoil band, with what it is about.

    ``subject`` is the point id of a bight (the redirect) or the rope id of a recoil
    band; ``rope`` and ``piece`` name the rope piece(s) it belongs to (for a bight, the
    piece arriving at the redirect; the next piece is ``piece + 1``).
    """

    kind: str  # "bight" or "recoil"
    subject: str
    label: str
    geometry: BaseGeometry  # shapely Polygon or MultiPolygon, site metres
    severity: str = "danger"  # "info", "warning", "danger"
    rope: str = ""
    piece: int = -1


@dataclass(frozen=True)
class Piece:
    """One straight piece of rope as solved: ends (site metres), tension, strain, passes."""

    rope: Rope
    index: int
    a_id: str
    b_id: str
    a: tuple[float, float]
    b: tuple[float, float]
    tension_N: float | None  # None when the rig has no solved tensions
    strain: float
    segment: SegmentResult | None

    @property
    def length_m(self) -> float:
        return math.hypot(self.b[0] - self.a[0], self.b[1] - self.a[1])

    @property
    def loaded(self) -> bool:
        return self.tension_N is not None and self.tension_N > LOADED_MIN_N


def positions(rig: Rig, result: Result | None) -> dict[str, tuple[float, float]]:
    """Solved point positions (m) where the result has them, the drawn ones otherwise."""
    pos = {p.id: (float(p.x), float(p.y)) for p in rig.points}
    if result is not None:
        for k, v in result.points.items():
            pos[k] = (float(v[0]), float(v[1]))
    return pos


def pieces(rig: Rig, result: Result | None) -> Iterator[Piece]:
    """Every straight piece of every rope, with its solved tension when the result is ok."""
    pos = positions(rig, result)
    segs: Mapping[tuple[str, int], SegmentResult] = {}
    if result is not None and result.ok:
        segs = {(s.rope, s.index): s for s in result.segments}
    for rope in rig.ropes:
        path = rope.path
        for i in range(len(path) - 1):
            a_id, b_id = path[i].at, path[i + 1].at
            if a_id not in pos or b_id not in pos:
                continue
            seg = segs.get((rope.id, i))
            # record(): the same frozen Piece as Piece(...), made in one step (a big net has thousands)
            yield record(Piece, rope=rope, index=i, a_id=a_id, b_id=b_id, a=pos[a_id], b=pos[b_id],
                         tension_N=None if seg is None else float(seg.tension_N),
                         strain=0.0 if seg is None else float(seg.strain), segment=seg)


def turn_deg(prev: tuple[float, float], at: tuple[float, float], nxt: tuple[float, float]) -> float:
    """Angle (degrees) through which a rope turns at ``at`` going prev -> at -> next (0 straight, 180 doubled back)."""
    d1 = np.subtract(at, prev)
    d2 = np.subtract(nxt, at)
    n1, n2 = float(np.hypot(*d1)), float(np.hypot(*d2))
    if n1 == 0.0 or n2 == 0.0:
        return float("nan")
    c = float(np.clip(np.dot(d1, d2) / (n1 * n2), -1.0, 1.0))
    return math.degrees(math.acos(c))


def bight_triangle(
    at: tuple[float, float],
    leg1_end: tuple[float, float],
    leg2_end: tuple[float, float],
    reach_m: float = BIGHT_REACH_M,
) -> Polygon:
    """Triangle between two legs leaving ``at``: at, and each leg's end or the point ``reach_m`` along it."""
    p = np.asarray(at, dtype=float)
    corners = [tuple(p)]
    for end in (leg1_end, leg2_end):
        d = np.asarray(end, dtype=float) - p
        n = float(np.hypot(*d))
        corners.append(tuple(p + d * (min(n, reach_m) / n)) if n > 0 else tuple(p))
    return Polygon(corners)


def _to_chord_m(p: np.ndarray, b: np.ndarray, c1: np.ndarray, c2: np.ndarray) -> float:
    """Distance (m) from ``p`` along unit vector ``b`` to the chord c1-c2 (to the nearer corner if the chord is a point)."""
    chord = c2 - c1
    # p + t b = c1 + s chord, a 2 x 2 system [b, -chord] (t, s) = c1 - p, by Cramer's rule
    det = float(-b[0] * chord[1] + chord[0] * b[1])
    if abs(det) > 1e-12 * max(1.0, float(np.hypot(*chord))):
        r = c1 - p
        t = (-r[0] * chord[1] + chord[0] * r[1]) / det
        return max(0.0, float(t))
    return max(0.0, min(float(np.dot(c1 - p, b)), float(np.dot(c2 - p, b))))


def bight_zone(
    at: tuple[float, float],
    leg1_end: tuple[float, float],
    leg2_end: tuple[float, float],
    reach_m: float = BIGHT_REACH_M,
    margin_m: float = BIGHT_MARGIN_M,
) -> BaseGeometry:
    """The bight triangle united with the flight strip (half-width ``margin_m``) along the legs' bisector."""
    tri = bight_triangle(at, leg1_end, leg2_end, reach_m)
    p = np.asarray(at, dtype=float)
    units, lens = [], []
    for end in (leg1_end, leg2_end):
        d = np.asarray(end, dtype=float) - p
        n = float(np.hypot(*d))
        if n == 0.0:
            return tri
        units.append(d / n)
        lens.append(min(n, reach_m))
    b = units[0] + units[1]
    nb = float(np.hypot(*b))
    if nb < 1e-12 or margin_m <= 0:  # straight through: no bisector to fly along
        return tri
    b = b / nb
    flight_m = min(2.0 * _to_chord_m(p, b, p + units[0] * lens[0], p + units[1] * lens[1]), min(lens))
    flight = LineString([tuple(p), tuple(p + b * flight_m)]).buffer(margin_m, quad_segs=QUAD_SEGS)
    return flight.union(tri) if tri.area > 0 else flight


def stored_energy_J(tension_N: float, length_m: float, strain: float) -> float:
    """Elastic energy in a stretched piece (J) by the triangle rule, E = T * delta / 2, delta = L * eps / (1 + eps)."""
    if tension_N <= 0 or strain <= 0 or length_m <= 0:
        return 0.0
    delta = length_m * strain / (1.0 + strain)
    return 0.5 * tension_N * delta


def recoil_half_width_m(tension_N: float, length_m: float, strain: float) -> float:
    """Half-width (m) of a loaded piece's recoil band: RECOIL_MIN_M + RECOIL_M_PER_J * E, capped at RECOIL_MAX_M."""
    e = stored_energy_J(tension_N, length_m, strain)
    return min(RECOIL_MAX_M, RECOIL_MIN_M + RECOIL_M_PER_J * e)


def recoil_band(a: tuple[float, float], b: tuple[float, float], half_width_m: float) -> Polygon:
    """The band of half-width ``half_width_m`` around the straight piece a-b, round ends (area 2wL + pi w^2)."""
    if a == b:
        from shapely.geometry import Point as _P

        return _P(a).buffer(half_width_m, quad_segs=QUAD_SEGS)
    return LineString([a, b]).buffer(half_width_m, quad_segs=QUAD_SEGS)


def _name(rig: Rig, point_id: str) -> str:
    try:
        return rig.point(point_id).name
    except KeyError:
        return point_id


#: The last zones computed, with what they were computed from: (rig, segments, points, zones).
_last_zones: tuple | None = None


def danger_zones(rig: Rig, result: Result) -> list[DangerZone]:
    """Bight and recoil zones of a solved rig (empty when the result is not ``ok``: no tensions, no zones).

    The zones depend only on the rig and the result's solved ``points`` and ``segments``; the
    last answer is kept, so the safety checks of ``analyse`` and the overlay drawing the same
    result (a copy with warnings or a revision added by ``dataclasses.replace`` shares those
    objects) build the shapely geometry once per analysis.
    """
    global _last_zones
    if not result.ok:
        return []
    last = _last_zones
    if last is not None and last[0] is rig and last[1] is result.segments and last[2] is result.points:
        return list(last[3])
    zones = _build_zones(rig, result)
    _last_zones = (rig, result.segments, result.points, tuple(zones))
    return zones


def _build_zones(rig: Rig, result: Result) -> list[DangerZone]:
    """Recoil bands then bights, rope by rope; the bands' shapely buffers are made in one vectorised call."""
    zones: list[DangerZone | None] = []
    bands: list[tuple[int, Piece, float]] = []  # (slot in zones, piece, half-width m)
    by_rope: dict[str, list[Piece]] = {}
    for pc in pieces(rig, result):
        by_rope.setdefault(pc.rope.id, []).append(pc)

    for rope in rig.ropes:
        pcs = {pc.index: pc for pc in by_rope.get(rope.id, [])}
        # recoil bands along loaded pieces (geometry filled in below)
        for i in sorted(pcs):
            pc = pcs[i]
            if pc.loaded:
                bands.append((len(zones), pc, recoil_half_width_m(pc.tension_N or 0.0, pc.length_m, pc.strain)))
                zones.append(None)
        # bights at loaded redirects
        for k in range(1, len(rope.path) - 1):
            ps = rope.path[k]
            if ps.how not in REDIRECT_HOWS:
                continue
            p_in, p_out = pcs.get(k - 1), pcs.get(k)
            if p_in is None or p_out is None or not (p_in.loaded and p_out.loaded):
                continue
            turn = turn_deg(p_in.a, p_in.b, p_out.b)
            if not (turn >= BIGHT_MIN_DEFLECTION_DEG):
                continue
            geom = bight_zone(p_in.b, p_in.a, p_out.b)
            if geom.is_empty:
                continue
            zones.append(
                DangerZone(
                    kind="bight",
                    subject=ps.at,
                    label=f"bight of {rope.name} at {_name(rig, ps.at)}",
                    geometry=geom,
                    severity="danger",
                    rope=rope.id,
                    piece=k - 1,
                )
            )
    for (slot, pc, _w), geom in zip(bands, recoil_bands([(pc.a, pc.b, w) for _, pc, w in bands])):
        zones[slot] = DangerZone(
            kind="recoil",
            subject=pc.rope.id,
            label=f"recoil band of {pc.rope.name} between {_name(rig, pc.a_id)} and {_name(rig, pc.b_id)}",
            geometry=geom,
            severity="warning",
            rope=pc.rope.id,
            piece=pc.index,
        )
    return zones  # type: ignore[return-value]  # every slot filled


def recoil_bands(pieces_: list[tuple[tuple[float, float], tuple[float, float], float]]) -> list[BaseGeometry]:
    """:func:`recoil_band` of many ``(a, b, half_width_m)`` at once (one shapely call, the same polygons)."""
    if not pieces_:
        return []
    ends = np.array([(a, b) for a, b, _ in pieces_], dtype=float).reshape(len(pieces_), 2, 2)
    widths = np.array([w for _, _, w in pieces_], dtype=float)
    lines = shapely.linestrings(ends)
    dots = np.all(ends[:, 0] == ends[:, 1], axis=1)  # a zero-length piece: a disc round its point
    if dots.any():
        lines[dots] = shapely.points(ends[dots, 0])
    return list(shapely.buffer(lines, widths, quad_segs=QUAD_SEGS))


def union_of(zones: list[DangerZone]) -> Polygon | MultiPolygon:
    """All zones as one shapely geometry (for drawing or area checks)."""
    from shapely.ops import unary_union

    return unary_union([z.geometry for z in zones]) if zones else Polygon()
