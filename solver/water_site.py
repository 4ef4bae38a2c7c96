"""Moving water on the site: which current flows where, and what a file may say about it.

A water feature may carry a ``flow`` (speed in m/s, the bearing it flows toward in degrees
clockwise from north).  Eddies are water features drawn over the main current; where
features overlap, the one drawn on top (later in ``site.features``) wins.  ``FlowField``
answers "what is the water's velocity here" (m/s, site coordinates +x east, +y north) for
one point or many at once, with shapely polygons.
"""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
import shapely
from shapely.geometry import LineString, Polygon

from solver.model import Feature, Point, Rig

#: Above this speed, m/s, we call a current "fast" for the person/boat warning (our own threshold).
FAST_WATER_M_S = 1.0


def water_feature_problem(feat: Feature) -> tuple[str, str] | None:
    """The first thing wrong with a feature's ``flow`` as ``(field, message)``, or None."""
    flow = feat.flow
    if flow is None:
        return None
    name = f'feature "{feat.label or feat.id}"'
    if feat.kind != "water" or feat.polygon is None:
        return "flow", (f"{name} has a current (flow) but is not a water area: only a water feature drawn "
                        f"as a polygon can carry a flow")
    if not (math.isfinite(flow.speed_m_s) and flow.speed_m_s >= 0):
        return "flow.speed_m_s", (f"{name}: the current's speed must be zero or more m/s (got {flow.speed_m_s:g}); "
                                  f"for water flowing the other way, turn the bearing by 180°")
    if not math.isfinite(flow.bearing_deg):
        return "flow.bearing_deg", f"{name}: the bearing the water flows toward must be a number of degrees"
    return None


def wetted_point_problem(p: Point) -> tuple[str, str] | None:
    """The first thing wrong with a point's wetted area or drag shape as ``(field, message)``, or None."""
    from solver.loads import DRAG_SHAPES

    name = f'point "{p.name}"'
    if p.wetted_area_m2 is not None:
        if not (math.isfinite(p.wetted_area_m2) and p.wetted_area_m2 >= 0):
            return "wetted_area_m2", f"{name}: the wetted area must be zero or more m² (got {p.wetted_area_m2:g})"
        if p.drag_shape is None:
            return "drag_shape", (f"{name} has a wetted area but no shape: choose one of "
                                  + ", ".join(DRAG_SHAPES) + " so its drag coefficient is known")
    if p.drag_shape is not None and p.drag_shape not in DRAG_SHAPES:
        return "drag_shape", f"{name}: unknown shape '{p.drag_shape}'; choose one of " + ", ".join(DRAG_SHAPES)
    return None


@dataclass(frozen=True)
class FlowField:
    """The currents of a site, top feature first: velocity lookups in m/s (site coordinates)."""

    polygons: tuple[Polygon, ...]  # water features with a flow, topmost first
    velocities: np.ndarray  # (n, 2) m/s, same order
    ids: tuple[str, ...]
    edges: tuple = ()  # each polygon's boundary, prepared (the water's edges a rope is split at)

    @property
    def empty(self) -> bool:
        return not self.polygons

    def velocity_at(self, xy: np.ndarray) -> np.ndarray:
        """Velocity (m/s) at each of the (m, 2) points ``xy``: the topmost water feature containing it, else 0."""
        xy = np.asarray(xy, dtype=float).reshape(-1, 2)
        out = np.zeros_like(xy)
        if self.empty:
            return out
        todo = np.ones(len(xy), dtype=bool)
        pts = shapely.points(xy)
        for poly, vel in zip(self.polygons, self.velocities):
            inside = todo & shapely.covers(poly, pts)
            out[inside] = vel
            todo &= ~inside
            if not todo.any():
                break
        return out

    def feature_at(self, x: float, y: float) -> str | None:
        """Id of the water feature whose current flows at (x, y) metres, or None."""
        pt = shapely.points(x, y)
        for poly, fid in zip(self.polygons, self.ids):
            if shapely.covers(poly, pt):
                return fid
        return None

    def wet_intervals(self, a: tuple[float, float], b: tuple[float, float]) -> list[tuple[float, float]]:
        """Fractions [t0, t1] of the straight piece a->b lying in moving water (edges split with shapely)."""
        if self.empty or a == b:
            return []
        line = LineString([a, b])
        length = line.length
        cuts = {0.0, 1.0}
        for poly, edge in zip(self.polygons, self.edges):
            if not shapely.intersects(edge, line):
                continue
            hit = line.intersection(edge)
            for g in getattr(hit, "geoms", [hit]):
                if g.is_empty:
                    continue
                for c in g.coords:
                    cuts.add(min(1.0, max(0.0, line.project(shapely.Point(c)) / length)))
        ts = sorted(cuts)
        mids = np.array([[(a[0] + (b[0] - a[0]) * (t0 + t1) / 2), (a[1] + (b[1] - a[1]) * (t0 + t1) / 2)]
                         for t0, t1 in zip(ts[:-1], ts[1:])])
        speed = np.hypot(*self.velocity_at(mids).T)
        out: list[tuple[float, float]] = []
        for (t0, t1), s in zip(zip(ts[:-1], ts[1:]), speed):
            if s > 0 and t1 - t0 > 1e-9:
                if out and abs(out[-1][1] - t0) < 1e-12:
                    out[-1] = (out[-1][0], t1)
                else:
                    out.append((t0, t1))
        return out


def flow_field(rig: Rig) -> FlowField:
    """The rig's currents.

    Built once per set of moving-water features and thread (``functools.lru_cache``, keyed by the
    features' ids, polygons and flows, which are immutable, and the calling thread): a drag step reuses the
    shapely polygons while the site is unchanged; tests check it equals a fresh build.  Each thread gets its
    own: a prepared GEOS geometry builds its index lazily on first use and is not safe to share between
    threads (two solves at once, such as an export's failure scan on the solve worker beside the What-if
    scan on the GUI thread, crashed in ``shapely.intersects``).
    """
    key = tuple((f.id, f.polygon, f.flow) for f in rig.site.features
                if f.kind == "water" and f.flow is not None and f.polygon is not None)
    return _field_of(key, threading.get_ident()) if key else _NO_FLOW


def build_field(moving: tuple) -> FlowField:
    """A fresh FlowField from ``(id, polygon, flow)`` of each moving-water feature in drawing order."""
    moving = list(reversed(moving))  # drawn on top (later in the list) is looked up first
    polys = []
    for _, ring, _ in moving:
        poly = Polygon(ring)
        polys.append(poly if poly.is_valid else poly.buffer(0))
    for p in polys:
        shapely.prepare(p)
    vel = np.array([flow.velocity for _, _, flow in moving], dtype=float).reshape(-1, 2)
    edges = tuple(p.boundary for p in polys)
    for e in edges:
        shapely.prepare(e)
    return FlowField(polygons=tuple(polys), velocities=vel, ids=tuple(fid for fid, _, _ in moving), edges=edges)


@lru_cache(maxsize=16)
def _field_of(moving: tuple, _thread: int) -> FlowField:
    return build_field(moving)
_NO_FLOW = FlowField(polygons=(), velocities=np.zeros((0, 2)), ids=())


def river_sides(bearing_deg: float) -> tuple[float, float]:
    """Bearings (degrees from north) of river left and river right for water flowing toward ``bearing_deg``.

    The trade names the banks facing downstream: river left is on your left hand, 90° anticlockwise
    of the flow; river right 90° clockwise.
    """
    return ((bearing_deg - 90.0) % 360.0, (bearing_deg + 90.0) % 360.0)


def side_of_river(flow_bearing_deg: float, dx: float, dy: float) -> str:
    """"river left" or "river right": the side of the flow line a displacement (dx east, dy north, m) points to."""
    b = math.radians(flow_bearing_deg)
    fx, fy = math.sin(b), math.cos(b)
    cross = fx * dy - fy * dx  # > 0: to the left of the flow direction
    return "river left" if cross > 0 else "river right"


def main_current(rig: Rig) -> Feature | None:
    """The river's main current: the largest moving-water feature not drawn over another (eddies are)."""
    best, best_area = None, 0.0
    below: list[Polygon] = []
    for f in rig.site.features:
        if f.kind != "water" or f.flow is None or f.polygon is None:
            continue
        poly = Polygon(f.polygon)
        over = any(poly.intersects(p) for p in below)
        below.append(poly)
        if not over and f.flow.speed_m_s > 0 and poly.area > best_area:
            best, best_area = f, poly.area
    return best


def point_sides(rig: Rig) -> dict[str, str]:
    """"river left" / "river right" of every anchor, haul team and person, facing downstream of the main current.

    The side is that of the point from the main current's centre line (through its centroid along its flow).
    """
    main = main_current(rig)
    if main is None:
        return {}
    c = Polygon(main.polygon).centroid
    return {p.id: side_of_river(main.flow.bearing_deg, p.x - c.x, p.y - c.y)
            for p in rig.points if p.kind in ("anchor", "haul", "person")}
