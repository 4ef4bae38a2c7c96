"""The plan's moving water: an arrow field over each current, river left / right, and ropes bowed by the water.

Two QGraphicsItems (:class:`WaterItem` and its ``bows``) drawn in scene metres from the rig's features and the
Result's ``water`` (:mod:`solver.water_result`): arrows on a grid over each moving-water feature (length by speed, the
topmost feature's current where they overlap), the speed and "river left" / "river right" (facing
downstream, the trade's convention) on each main current, and the current's push on each body as an arrow (its
size, and the tension at both ends of each bowed rope's wet part, are overlay labels: ``sketchpad.water_labels``).
Text keeps its screen size at any zoom.
"""

from __future__ import annotations

import math
import threading

import numpy as np
from PySide6.QtWidgets import QGraphicsItem

from sketchpad import theme
from sketchpad.water_label_places import label_region, snapped_points_box
from sketchpad.water_labels import push_tip, wet_water
from sketchpad.water_marks import NO_MARKS, MarkItem, Marks
from solver.model import Rig
from solver.result import Result
from solver.directions import bearing_text
from solver.units import format_speed
from solver.water_site import flow_field, main_current, river_sides

#: Arrows across the larger side of a feature's box (ours: dense enough to read, sparse enough to see through).
ARROWS_ACROSS = 10


def _scene(x: float, y: float) -> tuple[float, float]:
    return (float(x), -float(y))


def flow_arrows(rig: Rig) -> list[tuple[tuple[float, float], tuple[float, float]]]:
    """(tail, head) of each arrow of the current field, site metres: a grid over every moving-water feature."""
    ff = flow_field(rig)
    if ff.empty:
        return []
    out = []
    vmax = float(np.hypot(*ff.velocities.T).max()) or 1.0
    for poly in ff.polygons:
        x0, y0, x1, y1 = poly.bounds
        step = max(x1 - x0, y1 - y0) / ARROWS_ACROSS
        xs = np.arange(x0 + step / 2, x1, step)
        ys = np.arange(y0 + step / 2, y1, step)
        grid = np.array([(x, y) for x in xs for y in ys])
        if not len(grid):
            continue
        import shapely

        grid = grid[shapely.covers(poly, shapely.points(grid))]
        vel = ff.velocity_at(grid)
        for (x, y), (vx, vy) in zip(grid, vel):
            s = math.hypot(vx, vy)
            if s <= 0:
                continue
            half = 0.35 * step * (0.4 + 0.6 * s / vmax) / s
            out.append(((x - vx * half, y - vy * half), (x + vx * half, y + vy * half)))
    return out


def river_side_labels(rig: Rig) -> list[tuple[str, tuple[float, float]]]:
    """("river left"/"river right", site point) inside the main current, across its flow upstream of its middle.

    An eddy (a current drawn over another) keeps the river's sides: they are named once, on the main current.
    """
    from shapely.geometry import LineString, Polygon

    out: list[tuple[str, tuple[float, float]]] = []
    f = main_current(rig)
    if f is not None:
        poly = label_region(rig, Polygon(f.polygon))  # the part of the river a fitted view shows
        span = math.hypot(poly.bounds[2] - poly.bounds[0], poly.bounds[3] - poly.bounds[1])
        c = _upstream_point(poly, f.flow.bearing_deg)
        for word, bearing in zip(("river left", "river right"), river_sides(f.flow.bearing_deg)):
            b = math.radians(bearing)
            ray = LineString([(c.x, c.y), (c.x + span * math.sin(b), c.y + span * math.cos(b))])
            hit = ray.intersection(poly)
            line = max(getattr(hit, "geoms", [hit]), key=lambda g: g.length)
            if line.is_empty:
                continue
            far = line.interpolate(0.6, normalized=True)
            out.append((word, (far.x, far.y)))
    return out


def _upstream_point(poly, bearing_deg: float):
    """A point inside ``poly`` upstream of its middle (where a rig's ropes and labels rarely are)."""
    from shapely.geometry import LineString

    span = math.hypot(poly.bounds[2] - poly.bounds[0], poly.bounds[3] - poly.bounds[1])
    mid = poly.representative_point()
    fb = math.radians(bearing_deg)
    up = LineString([(mid.x, mid.y), (mid.x - span * math.sin(fb), mid.y - span * math.cos(fb))])
    reach = up.intersection(poly)
    reach = max(getattr(reach, "geoms", [reach]), key=lambda g: g.length)
    return reach.interpolate(0.7, normalized=True) if not reach.is_empty else mid


def _speed_label_at(rig, f, main):
    """Where a current's speed is written (upstream on the main current, in the middle of an eddy) and the width (m)
    of the water it is written in."""
    from shapely.geometry import Polygon

    poly = label_region(rig, Polygon(f.polygon))  # the part of the water a fitted view shows
    return (_upstream_point(poly, f.flow.bearing_deg) if f is main else poly.representative_point()), _room(poly)


def field_marks(rig: Rig) -> Marks:
    """The currents of ``rig`` as drawn (scene metres): the arrow field, each current's speed and bearing, and
    river left / right on the main current; what depends on the site's features and the length unit alone."""
    if rig.view != "plan":
        return NO_MARKS
    arrows = tuple((_scene(*a), _scene(*b)) for a, b in flow_arrows(rig))
    main = main_current(rig)
    texts, rooms = [], []
    for f in rig.site.features:
        if f.flow is not None and f.polygon is not None and f.kind == "water":
            c, room = _speed_label_at(rig, f, main)
            texts.append((f"{format_speed(f.flow.speed_m_s, rig.display.length)} toward {bearing_text(f.flow.bearing_deg)}",
                          _scene(c.x, c.y), theme.FLOW_LABEL, (0.0, 0.0)))
            rooms.append(room)
    sides = river_side_labels(rig)
    texts += [(w, _scene(*p), theme.FLOW_LABEL, (0.0, 0.0)) for w, p in sides]
    if sides:
        rooms += [_room(label_region(rig, _polygon(main)))] * len(sides)
    return Marks(arrows=arrows, texts=tuple(texts), rooms=tuple(rooms))


def _polygon(f):
    from shapely.geometry import Polygon

    return Polygon(f.polygon)


def _room(poly) -> float:
    """The width (m) a text written in water part ``poly`` may take: twice its box's larger side (ours: a speed may
    reach past a small eddy's edge, but a text many times the water's size names nothing readable)."""
    x0, y0, x1, y1 = poly.bounds
    return 2.0 * float(max(x1 - x0, y1 - y0))


def bow_marks(rig: Rig, result: Result | None) -> Marks:
    """What ``result``'s water adds to the plan's own drawing (scene metres): the current's push on each body as an
    arrow downstream of it.  The bowed rope itself is drawn by its rope item along the solver's hidden points
    (``SketchScene.set_bows``), so the plan shows one rope; the wet-end tensions and the push's size are overlay
    labels (``sketchpad.water_labels``), placed clear of every other label."""
    water = wet_water(rig, result)
    if water is None:
        return NO_MARKS
    arrows = []
    for b in water.bodies:
        if b.force_N <= 0 or b.point not in result.points:
            continue
        x, y = result.points[b.point]
        arrows.append((_scene(x, y), _scene(*push_tip(x, y, b.fx_N, b.fy_N))))
    return Marks(arrows=tuple(arrows))


class WaterItem(MarkItem):
    """The current's arrows, speeds and river sides (scene metres, just under the overlay), and in :attr:`bows`
    (an item of its own in the overlay's place, under the force labels) the current's push arrows on bodies.

    Two items because they change at different times: a drag step changes the bows with its solve but not the
    currents.  The field stays in the drag layer's still image (``sketchpad.drag_layer``); the bows, a solver
    result like the force overlay, sit at the overlay's z and are drawn in every frame, so the frame after a
    mouse move (the dragged point and its ropes changed) and the frame after its solve (the overlay and the
    bows changed) keep the same set of changing items below the overlay, which is what lets the layer build.
    The field's drawing is kept for the last (site features, view, length unit) it was made from
    (:meth:`_field`), so a drag step does not lay the arrows out again; ``tests/sketchpad/test_water_drag_frame.py``
    checks it equals a fresh drawing."""

    def __init__(self) -> None:
        super().__init__()
        self.setZValue(theme.Z_OVERLAY - 1.0)
        self.bows = MarkItem()
        self.bows.setZValue(theme.Z_OVERLAY)
        self._lock = threading.Lock()  # the field's memo (GUI thread today; locked so a worker could draw too)
        self._field_for: tuple | None = None  # (features, view, length unit, points box, Marks) of the last field

    def add_to(self, scene, under: QGraphicsItem | None = None) -> None:
        """Put the field and the bows in ``scene``, the bows stacked just under ``under`` (the force overlay item,
        at the same z) so the labels stay readable over a bowed rope."""
        scene.addItem(self)
        scene.addItem(self.bows)
        if under is not None:
            self.bows.stackBefore(under)

    def set_scale(self, m_per_px: float) -> None:
        super().set_scale(m_per_px)
        self.bows.set_scale(m_per_px)

    def follow_zoom(self, px_per_m: float) -> None:
        """A view's zoom changed (its ``scale_changed``, pixels per metre)."""
        if px_per_m > 0:
            self.set_scale(1.0 / px_per_m)

    def show(self, rig: Rig | None, result: Result | None, settled: bool = True) -> None:
        """Draw ``rig``'s currents and ``result``'s bowed ropes (nothing when either is None or dry); during a drag
        (``settled`` False) the field's texts stay where they are until the drag pauses."""
        scale = getattr(self.scene(), "scale_m_per_px", None)
        if scale:
            self.set_scale(scale)
        self.set_marks(self._field(rig, settled) if rig is not None else NO_MARKS)
        self.bows.set_marks(bow_marks(rig, result) if rig is not None else NO_MARKS)

    def _field(self, rig: Rig, settled: bool = True) -> Marks:
        """:func:`field_marks` of ``rig``, made again only when its features, view, length unit or (once a drag
        pauses: ``settled``) snapped points box (``sketchpad.water_label_places``) changed; so a drag step never
        lays the field out, and the drag layer keeps it in its still image."""
        key = (rig.site.features, rig.view, rig.display.length, snapped_points_box(rig))  # texts sit in that box
        with self._lock:
            last = self._field_for
            if last is not None and (last[0] is key[0] or last[0] == key[0]) and last[1:3] == key[1:3] and (
                    last[3] == key[3] or not settled):
                return last[4]
        marks = field_marks(rig)
        with self._lock:
            if last is not None and last[4] == marks:
                marks = last[4]  # the same drawing: the item stays as it is
            self._field_for = (*key, marks)
        return marks
