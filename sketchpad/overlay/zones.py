"""Danger zones (``solver.danger``) drawn as hatched translucent areas."""

from __future__ import annotations


from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QPainter, QPainterPath, QPolygonF

from sketchpad import theme
from sketchpad.overlay.layer import LayerItem

def geometry_path(geom) -> QPainterPath:
    """A shapely (Multi)Polygon in site metres as a scene QPainterPath (holes by odd-even fill)."""
    path = QPainterPath()
    path.setFillRule(Qt.OddEvenFill)
    polys = getattr(geom, "geoms", None)
    for poly in (polys if polys is not None else [geom]):
        if poly.is_empty or not hasattr(poly, "exterior"):
            continue
        for ring in (poly.exterior, *poly.interiors):
            pts = [QPointF(x, -y) for x, y in ring.coords]
            path.addPolygon(QPolygonF(pts))
            path.closeSubpath()
    return path


class ZoneItem(LayerItem):
    """Danger zones: one hatched translucent path per kind (the union of its zones)."""

    def __init__(self) -> None:
        super().__init__()
        self.paths: dict[str, QPainterPath] = {}
        self._brushes = {k: theme.zone_brushes(k) for k in theme.ZONE_COLOURS}
        grey = QColor(theme.OVERLAY_GREY)
        grey.setAlpha(theme.ZONE_HATCH_ALPHA)
        self._grey_brush = QBrush(grey, Qt.BDiagPattern)
        self._pens = {k: theme.cosmetic_pen(c, theme.ZONE_EDGE_PX, Qt.DashLine) for k, c in theme.ZONE_COLOURS.items()}
        self._grey_pen = theme.cosmetic_pen(theme.OVERLAY_GREY, theme.ZONE_EDGE_PX, Qt.DashLine)

    def set_zones(self, zones) -> None:
        from shapely.ops import unary_union

        by_kind: dict[str, list] = {}
        for z in zones:
            by_kind.setdefault(z.kind, []).append(z.geometry)
        self.paths = {k: geometry_path(unary_union(g)) for k, g in by_kind.items()}
        rect = QRectF()
        for p in self.paths.values():
            rect = rect.united(p.boundingRect())
        self.set_rect(rect.adjusted(-1, -1, 1, 1) if not rect.isNull() else QRectF())
        self.update()

    def paint(self, painter: QPainter, option, widget=None) -> None:
        for kind in theme.ZONE_COLOURS:  # recoil under bight / failure areas
            path = self.paths.get(kind)
            if path is None:
                continue
            fill, hatch = self._brushes.get(kind, self._brushes["bight"])
            if self.grey:
                painter.setPen(self._grey_pen)
                painter.setBrush(self._grey_brush)
                painter.drawPath(path)
                continue
            painter.setPen(Qt.NoPen)
            painter.setBrush(fill)
            painter.drawPath(path)
            painter.setPen(self._pens.get(kind, self._grey_pen))
            painter.setBrush(hatch)
            # hatch patterns follow the device, so they stay the same density at every zoom
            painter.drawPath(path)
