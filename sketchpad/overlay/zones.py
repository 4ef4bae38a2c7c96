"""Danger zones (``solver.danger``) drawn as hatched translucent areas."""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QImage, QPaintEngine, QPainter, QPainterPath, QPolygonF, QTransform

from sketchpad import theme
from sketchpad.overlay.layer import LayerItem

#: side (px) of a hatch pattern's tile: Qt's hatch brushes repeat every 8 device pixels
HATCH_TILE_PX = 8


def hatch_over_fill_tile(fill: QBrush, hatch: QBrush) -> QImage:
    """One tile of ``hatch`` laid over ``fill``, as device pixels from the brush origin.

    Anti-aliased filling of a zone's many-sided outline is the slow part of drawing it (~1 ms a
    kind on a 50-rope rig), and drawing the translucent fill and then the hatch fills the outline
    twice; a texture of the two laid down together fills it once.  Inside the outline the pixels are
    those of the two fills (source-over is associative; up to 8-bit rounding).
    """
    tile = QImage(HATCH_TILE_PX, HATCH_TILE_PX, QImage.Format_ARGB32_Premultiplied)
    tile.fill(Qt.transparent)
    square = QPainterPath()
    square.addRect(QRectF(tile.rect()))
    p = QPainter(tile)  # drawn as a zone is drawn (a filled path), which places the hatch where a zone has it
    p.setRenderHint(QPainter.Antialiasing, True)
    p.setPen(Qt.NoPen)
    for brush in (fill, hatch):
        p.setBrush(brush)
        p.drawPath(square)
    p.end()
    return tile


def hatch_phase(device: QTransform) -> QTransform:
    """Where the hatch tile starts, in device pixels: at the pixel of the scene origin, so on a fixed grid.

    The canvas caches the zones in device pixels (a pixmap the size of the view or the item) and fills that
    cache all at once or a part at a time, each time with the painter's origin at the pixmap's or the part's
    corner.  Those origins differ from the screen's by whole pixels, and so does the scene origin's pixel:
    anchored there, the hatch lands on the same screen pixels however the cache was filled.
    """
    return QTransform.fromTranslate(math.floor(device.dx() + 0.5), math.floor(device.dy() + 0.5))


def _on_raster(painter: QPainter) -> bool:
    """True when ``painter`` draws raster pixels with a plain zoom and pan (the canvas, its item caches, PNGs)."""
    engine = painter.paintEngine()
    t = painter.worldTransform()
    return (engine is not None and engine.type() == QPaintEngine.Raster and not painter.viewTransformEnabled()
            and t.m12() == 0.0 and t.m21() == 0.0 and t.isAffine() and t.isInvertible())

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
        self._tiles = {k: QBrush(hatch_over_fill_tile(*b)) for k, b in self._brushes.items()}
        self.streaming = False  # a wheel gesture is under way: fill without anti-aliasing (set_streaming)

    def set_streaming(self, on: bool) -> None:
        """Fill the zones unsmoothed while a wheel gesture streams zoom frames, smoothed again when it stops.

        Anti-aliased filling of the zones' many-sided outlines is most of their cost (~4 of ~5 ms a frame on a
        50-rope rig); a frame of a gesture in motion is gone before the stair-steps on a translucent edge can be
        read.  Switching back repaints the zones, so the still screen equals a fresh paint.
        """
        if on != self.streaming:
            self.streaming = on
            self.update()

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
        device = painter.worldTransform() if _on_raster(painter) else None
        if device is not None:
            phase = hatch_phase(device)
            painter.save()
            painter.resetTransform()
            if self.streaming:
                painter.setRenderHint(QPainter.Antialiasing, False)
        for kind in theme.ZONE_COLOURS:  # recoil under bight / failure areas
            path = self.paths.get(kind)
            if path is None:
                continue
            fill, hatch = self._brushes.get(kind, self._brushes["bight"])
            if self.grey:  # a failed solve: the last zones, greyed, hatched only
                painter.setPen(self._grey_pen)
                brush = QBrush(self._grey_brush)
                if device is not None:  # on the same fixed grid as the coloured hatch
                    brush.setTransform(phase)
                    path = device.map(path)
                painter.setBrush(brush)
                painter.drawPath(path)
                continue
            if device is not None:  # fill and hatch in one pass, in device pixels
                painter.setPen(self._pens.get(kind, self._grey_pen))
                brush = QBrush(self._tiles.get(kind, self._tiles["bight"]))
                brush.setTransform(phase)
                painter.setBrush(brush)
                painter.drawPath(device.map(path))
                continue
            painter.setPen(Qt.NoPen)  # vectors (PDF, SVG): the fill, then the hatch
            painter.setBrush(fill)
            painter.drawPath(path)
            painter.setPen(self._pens.get(kind, self._grey_pen))
            painter.setBrush(hatch)
            # hatch patterns follow the device, so they stay the same density at every zoom
            painter.drawPath(path)
        if device is not None:
            painter.restore()
