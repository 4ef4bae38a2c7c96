"""What the overlay's scene items share: an item whose bounding rect is set rather than computed, and the
retained-layer entry of a pixmap."""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRect, QRectF, Qt
from PySide6.QtGui import QPaintEngine, QPainter, QPainterPath, QPixmap
from PySide6.QtWidgets import QGraphicsItem

from sketchpad.drag_layer import Versioned

def pixmap_entry(kind: str, pix: QPixmap, x: float, y: float) -> tuple:
    """A retained-layer entry (``sketchpad.retained``) blitting ``pix`` with its top-left at (x, y) device px."""
    return ((kind, pix.cacheKey(), x, y), QRect(math.floor(x) - 1, math.floor(y) - 1, pix.width() + 3, pix.height() + 3),
            (pix, QPointF(x, y)))


class LayerItem(Versioned, QGraphicsItem):
    """Base of the overlay items: never selectable, never hit by clicks, scene coordinates in metres."""

    def __init__(self) -> None:
        super().__init__()
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.setFlag(QGraphicsItem.ItemIsSelectable, False)
        self._rect = QRectF()
        self.grey = False

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._rect

    def shape(self) -> QPainterPath:
        return QPainterPath()  # clicks go to the sketch underneath

    def set_rect(self, rect: QRectF) -> None:
        if rect != self._rect:
            self.prepareGeometryChange()
            self._rect = rect


def plain_raster_transform(painter: QPainter):
    """The painter's world transform when it paints raster pixels 1:1 with a plain zoom and pan (no
    rotation, view transform, device pixel ratio or opacity), else None: what the retained layers need."""
    engine = painter.paintEngine()
    t = painter.worldTransform()
    if (engine is None or engine.type() != QPaintEngine.Raster or painter.viewTransformEnabled()
            or painter.device().devicePixelRatioF() != 1.0 or t.m12() != 0.0 or t.m21() != 0.0
            or not t.isAffine() or painter.opacity() != 1.0):
        return None
    return t
