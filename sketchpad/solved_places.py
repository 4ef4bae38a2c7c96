"""Where the solver moved a free point: the point, its glyphs, ropes and forces are drawn at the solved place, and
the place it was drawn at stays as a faint dashed ring joined to it (named in the force overlay's key).

``SketchScene.set_solved`` takes the solved places (site metres) of the free points a settled result moved;
this item paints those rings.  A point being dragged is shown under the cursor again until the next
settled result (the scene drops it from the solved places as soon as its drawn place changes).
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QPainter, QTransform
from PySide6.QtWidgets import QGraphicsItem

from sketchpad import theme
from sketchpad.drag_layer import Versioned
from sketchpad.geometry import to_scene
from sketchpad.items import cached_blit_at, pixel_dpr

#: a free point counts as moved by the solver past this distance (m): below it the marker covers both places
MOVED_M = 0.05


class DrawnPlaceItem(Versioned, QGraphicsItem):
    """Faint dashed rings at the drawn places of the points shown where the solver put them, each joined to it."""

    #: drawn straight onto a drag frame, its pixels are Qt's own (``sketchpad.drag_layer``)
    paints_alike_live = True

    def __init__(self) -> None:
        super().__init__()
        self.pairs: list[tuple[QPointF, QPointF]] = []  # (drawn, solved) scene points
        self._rect = QRectF()
        self.setZValue(theme.Z_POINT - 1.0)
        self._pen = theme.pixel_pen(theme.DRAWN_PLACE, 1.2, Qt.DashLine)

    def set_pairs(self, pairs: list[tuple[QPointF, QPointF]]) -> None:
        self.prepareGeometryChange()
        self.pairs = pairs
        rect = QRectF()
        for a, b in pairs:
            rect = rect.united(QRectF(a, b).normalized())
        self._rect = rect
        self.update()

    def boundingRect(self) -> QRectF:  # noqa: N802
        # rings are pixels wide at any zoom: a generous margin in metres (a zoom re-lays the scene anyway)
        m = 5.0
        return self._rect.adjusted(-m, -m, m, m) if self.pairs else QRectF()

    def paint(self, painter: QPainter, option, widget=None) -> None:
        if not self.pairs:
            return
        t = painter.worldTransform()
        painter.save()
        painter.setWorldTransform(QTransform())
        painter.setRenderHint(QPainter.Antialiasing, True)
        painter.setPen(self._pen)
        painter.setBrush(Qt.NoBrush)
        r = theme.DRAWN_PLACE_RADIUS_PX
        dpr = pixel_dpr(painter)
        for a, b in self.pairs:
            pa, pb = t.map(a), t.map(b)
            if dpr is None:
                painter.drawEllipse(pa, r, r)
            else:  # on screen the ring is blitted from the glyph pixmaps (a dashed ellipse costs Qt ~30 us, and a
                # zoom step draws every ring again)
                pix, x, y = cached_blit_at(pa.x(), pa.y(), dpr, ("drawn-place", r), _RING_BOUNDS, self._draw_ring)
                painter.drawPixmap(QPointF(x, y), pix)
            d = pb - pa
            n = (d.x() ** 2 + d.y() ** 2) ** 0.5
            if n > r + theme.POINT_RADIUS_PX["point"]:
                u = d / n
                painter.drawLine(pa + u * r, pb - u * theme.POINT_RADIUS_PX["point"])
        painter.restore()


    def _draw_ring(self, painter: QPainter) -> None:
        r = theme.DRAWN_PLACE_RADIUS_PX
        painter.setPen(self._pen)
        painter.setBrush(Qt.NoBrush)
        painter.drawEllipse(QPointF(0.0, 0.0), r, r)


_RING_BOUNDS = QRectF(-theme.DRAWN_PLACE_RADIUS_PX - 2.0, -theme.DRAWN_PLACE_RADIUS_PX - 2.0,
                      2 * theme.DRAWN_PLACE_RADIUS_PX + 4.0, 2 * theme.DRAWN_PLACE_RADIUS_PX + 4.0)


def drawn_place_pairs(rig, shown_at) -> list[tuple[QPointF, QPointF]]:
    """(drawn, solved) scene points of every point shown where the solver put it."""
    out = []
    for p in rig.points:
        xy = shown_at.get(p.id)
        if xy is not None:
            out.append((to_scene(p.x, p.y), to_scene(*xy)))
    return out


def moved_free_points(rig, result) -> dict[str, tuple[float, float]]:
    """Solved places (site m) of the free points a result moved more than ``MOVED_M`` from where they are drawn."""
    out = {}
    for p in rig.points:
        if p.is_fixed or not p.is_structural:
            continue
        xy = result.points.get(p.id)
        if xy is not None and ((xy[0] - p.x) ** 2 + (xy[1] - p.y) ** 2) ** 0.5 > MOVED_M:
            out[p.id] = (float(xy[0]), float(xy[1]))
    return out


def live_places(rig, result, settled_rig=None) -> dict[str, tuple[float, float]] | str | None:
    """The solved places to draw for ``result`` of ``rig`` (None when it failed, "keep" to leave those drawn):
    :func:`moved_free_points`, less,
    during a drag (``settled_rig``: the rig of the last settled result), the points the drag moves away from it,
    which stay under the cursor; every other free point (a boat in the current) follows each drag step's solve.

    A drag on a dry rig keeps the last settled places until the drag pauses (its frames then move only the dragged
    point and its ropes, ``sketchpad.drag_layer``); on a rig in moving water the bows drawn from each step's solve
    end at the free points, so those follow the same solve."""
    if not result.ok:
        return None
    if settled_rig is not None and getattr(result, "water", None) is None:
        return "keep"
    places = moved_free_points(rig, result)
    if settled_rig is not None and places:
        before = {p.id: p for p in settled_rig.points}
        for p in rig.points:
            was = before.get(p.id)
            if p.id in places and was is not p and (was is None or (was.x, was.y) != (p.x, p.y)):
                del places[p.id]
    return places
