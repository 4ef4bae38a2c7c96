"""Small glyphs drawn the same on the canvas HUD and on exported drawings and reports (device pixels)."""

from __future__ import annotations

from PySide6.QtCore import QPointF
from PySide6.QtGui import QFont, QFontMetricsF, QPainter, QPainterPath, QPolygonF

from sketchpad import theme


def paint_north_arrow(painter: QPainter, centre: QPointF, size: float, elevation: bool, font: QFont) -> None:
    """A north arrow (plan) or an arrow marked "up" (elevation), ``size`` px tall, its letter below in ``font``.

    The arrow's tip is 0.6 ``size`` above ``centre``; the letter hangs under its base.
    """
    s = size
    cx, top = centre.x(), centre.y() - s * 0.6
    path = QPainterPath()
    path.addPolygon(QPolygonF([QPointF(cx, top), QPointF(cx + s * 0.28, top + s), QPointF(cx, top + s * 0.78),
                               QPointF(cx - s * 0.28, top + s)]))
    path.closeSubpath()
    painter.setPen(theme.pixel_pen(theme.HUD_TEXT, 1.0))
    painter.setBrush(theme.HUD_TEXT)
    painter.drawPath(path)
    painter.setFont(font)
    label = "up" if elevation else "N"
    fm = QFontMetricsF(painter.font())
    painter.setPen(theme.HUD_TEXT)
    painter.drawText(QPointF(cx - fm.horizontalAdvance(label) / 2, top + s + fm.ascent() + 1), label)
