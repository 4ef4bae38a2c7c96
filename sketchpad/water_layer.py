"""The plan's moving water: an arrow field over each current, river left / right, and ropes bowed by the water.

One QGraphicsItem drawn in scene metres from the rig's features and the Result's ``water``
(:mod:`solver.water_result`): arrows on a grid over each moving-water feature (length by speed, the
topmost feature's current where they overlap), the speed and "river left" / "river right" (facing
downstream, the trade's convention) on each main current, each bowed rope as the solver shaped it, and
the tension at both ends of its wet part in the rig's force unit.  Text keeps its screen size at any zoom.
"""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QPainter, QPainterPath, QPolygonF
from PySide6.QtWidgets import QGraphicsItem

from sketchpad import theme
from sketchpad.drag_layer import Versioned
from solver.model import Rig
from solver.result import Result
from solver.directions import bearing_text
from solver.units import format_force, format_speed
from solver.water_site import flow_field, main_current, river_sides

#: Arrows across the larger side of a feature's box (ours: dense enough to read, sparse enough to see through).
ARROWS_ACROSS = 10


def _scene(x: float, y: float) -> QPointF:
    return QPointF(float(x), -float(y))


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
        poly = Polygon(f.polygon)
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


def _speed_label_at(f, main):
    """Where a current's speed is written: upstream on the main current, in the middle of an eddy."""
    from shapely.geometry import Polygon

    poly = Polygon(f.polygon)
    return _upstream_point(poly, f.flow.bearing_deg) if f is main else poly.representative_point()


class WaterItem(Versioned, QGraphicsItem):
    """The current's arrows, river sides, bowed ropes and wet-end tensions (scene metres, overlay z).

    ``Versioned`` tells the drag layer of every change, and :meth:`show` changes the item only when what it
    draws changed: a drag frame then keeps it in the still image (a dry rig, a current no drag step moves)
    or draws it live (ropes the water bows), instead of painting every frame the slow way."""

    def __init__(self) -> None:
        super().__init__()
        self.setZValue(theme.Z_OVERLAY - 1.0)
        self._arrows: list = []
        self._texts: list[tuple[str, QPointF, object]] = []
        self._ropes: list[tuple[QPainterPath, object]] = []
        self._bounds = QRectF()

    def show(self, rig: Rig | None, result: Result | None) -> None:
        """Draw ``rig``'s currents and ``result``'s bowed ropes (nothing when either is None or dry)."""
        arrows, texts, ropes = self._arrows, self._texts, self._ropes
        self._arrows, self._texts, self._ropes = [], [], []
        if rig is not None and rig.view == "plan":
            self._arrows = [(_scene(*a), _scene(*b)) for a, b in flow_arrows(rig)]
            main = main_current(rig)
            for f in rig.site.features:
                if f.flow is not None and f.polygon is not None and f.kind == "water":
                    from shapely.geometry import Polygon

                    c = _speed_label_at(f, main)
                    self._texts.append((f"{format_speed(f.flow.speed_m_s, rig.display.length)} toward {bearing_text(f.flow.bearing_deg)}",
                                        _scene(c.x, c.y), theme.FLOW_LABEL))
            self._texts += [(w, _scene(*p), theme.FLOW_LABEL) for w, p in river_side_labels(rig)]
            water = getattr(result, "water", None) if result is not None and result.ok else None
            if water is not None:
                unit = rig.display.force
                for b in water.bodies:  # the current's push on each body, as an arrow downstream of it
                    if b.force_N <= 0 or b.point not in result.points:
                        continue
                    x, y = result.points[b.point]
                    n = math.hypot(b.fx_N, b.fy_N)
                    tip = (x + 3.0 * b.fx_N / n, y + 3.0 * b.fy_N / n)
                    self._arrows.append((_scene(x, y), _scene(*tip)))
                    self._texts.append((f"current {format_force(b.force_N, unit)}", _scene(tip[0], tip[1] - 0.8),
                                        theme.FLOW_LABEL))
                order = {r.id: i for i, r in enumerate(rig.ropes)}
                for w in water.ropes:
                    if not w.bowed:
                        continue
                    path = QPainterPath(_scene(*w.polyline[0]))
                    for p in w.polyline[1:]:
                        path.lineTo(_scene(*p))
                    self._ropes.append((path, theme.rope_colour(order.get(w.rope, 0))))
                    for idx, t in ((w.wet_from, w.tension_in_N), (w.wet_to, w.tension_out_N)):
                        self._texts.append((format_force(t, unit), _scene(*w.polyline[idx]), theme.WET_TENSION))
        if (self._arrows, self._texts, self._ropes) == (arrows, texts, ropes):
            return  # the same drawing: the item and its version stay as they were
        self.prepareGeometryChange()
        pts = [p for a in self._arrows for p in a] + [t[1] for t in self._texts]
        rect = QRectF()
        for path, _ in self._ropes:
            rect = rect.united(path.boundingRect())
        if pts:
            xs, ys = [p.x() for p in pts], [p.y() for p in pts]
            rect = rect.united(QRectF(min(xs), min(ys), max(xs) - min(xs), max(ys) - min(ys)))
        self._bounds = rect.adjusted(-8, -8, 8, 8)
        self.update()

    def boundingRect(self) -> QRectF:
        return self._bounds

    def paint(self, painter: QPainter, option, widget=None) -> None:
        t = painter.worldTransform()
        k = 1.0 / math.sqrt(abs(t.m11() * t.m22() - t.m12() * t.m21()) or 1.0)  # metres per pixel
        painter.setRenderHint(QPainter.Antialiasing)
        painter.setPen(theme.cosmetic_pen(theme.FLOW_ARROW, theme.FLOW_ARROW_PX))
        head = 6.0 * k
        for a, b in self._arrows:
            painter.drawLine(a, b)
            dx, dy = b.x() - a.x(), b.y() - a.y()
            n = math.hypot(dx, dy) or 1.0
            ux, uy = dx / n, dy / n
            painter.drawPolyline(QPolygonF([QPointF(b.x() - ux * head - uy * head * 0.5, b.y() - uy * head + ux * head * 0.5),
                                            b, QPointF(b.x() - ux * head + uy * head * 0.5, b.y() - uy * head - ux * head * 0.5)]))
        for path, colour in self._ropes:
            painter.setPen(theme.cosmetic_pen(colour, theme.BOWED_ROPE_PX))
            painter.setBrush(Qt.NoBrush)
            painter.drawPath(path)
        fnt = theme.font(theme.SMALL_POINT_SIZE, bold=True)
        painter.setFont(fnt)
        for text, at, colour in self._texts:
            painter.save()
            painter.translate(at)
            painter.scale(k, k)
            w = painter.fontMetrics().horizontalAdvance(text)
            painter.setPen(theme.PAPER if hasattr(theme, "PAPER") else Qt.white)
            for ox, oy in ((-1, 0), (1, 0), (0, -1), (0, 1)):
                painter.drawText(QPointF(-w / 2 + ox, -4 + oy), text)
            painter.setPen(colour)
            painter.drawText(QPointF(-w / 2, -4), text)
            painter.restore()
