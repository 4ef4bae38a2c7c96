"""Word-wrapped text on a printed page: the one helper the drawings, the report, the briefing and the key share."""

from __future__ import annotations

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QColor, QFont, QPainter

from sketchpad import theme


def wrap_text(painter: QPainter, rect: QRectF, text: str, font: QFont, colour: QColor = theme.PAGE_INK,
              align=Qt.AlignLeft, draw: bool = True) -> float:
    """Draw ``text`` word-wrapped in ``rect``'s width from its top; returns the height used (px)."""
    painter.setFont(font)
    flags = int(align) | int(Qt.AlignTop) | int(Qt.TextWordWrap)
    bound = painter.boundingRect(QRectF(rect.left(), rect.top(), rect.width(), 100000.0), flags, text)
    if draw:
        painter.setPen(colour)
        painter.drawText(QRectF(rect.left(), rect.top(), rect.width(), bound.height() + 2), flags, text)
    return bound.height()
