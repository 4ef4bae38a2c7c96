"""The paper's grid on screen drawn as one-pixel rectangles: the pixels Qt's aliased one-pixel lines light.

A zoom step draws the grid again.  Qt lights an aliased cosmetic line pixel by pixel, blending each
(~2 ms for a viewport's hundred-odd lines, a tenth of a zoom frame on a crowded rig), while a
one-pixel-wide rectangle of an opaque colour is a memory fill.  A vertical line at device x lights
the column ``floor(x)`` (a horizontal one the row ``floor(y)``), whatever the pen's round caps, since
every grid line runs past the viewport's edges; the lines are laid down in the order the vector
grid draws them.  ``tests/sketchpad/test_zoom_frame.py`` holds the two to the same pixels.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QRect, QRectF
from PySide6.QtGui import QColor, QPainter, QTransform


def grid_positions(low: float, high: float, spacing: float) -> list[float]:
    """Scene coordinates of the grid lines from ``low`` to ``high`` every ``spacing`` (as the vector grid steps them)."""
    out = []
    v = math.floor(low / spacing) * spacing
    while v <= high:
        out.append(v)
        v += spacing
    return out


def paint_grid_pixels(painter: QPainter, t: QTransform, rect: QRectF, layers: list[tuple[float, QColor]],
                      axis: QColor, size: tuple[int, int]) -> None:
    """The grid of ``layers`` ((spacing m, colour), drawn in order) and the axes over ``rect`` (scene), mapped by
    the plain zoom and pan ``t`` onto a device of ``size`` px whose painter has no transform."""
    w, h = size
    m11, m22, dx, dy = t.m11(), t.m22(), t.dx(), t.dy()
    fill = painter.fillRect
    for spacing, colour in layers:
        for x in grid_positions(rect.left(), rect.right(), spacing):
            ix = math.floor(x * m11 + dx)
            if 0 <= ix < w:
                fill(QRect(ix, 0, 1, h), colour)
        for y in grid_positions(rect.top(), rect.bottom(), spacing):
            iy = math.floor(y * m22 + dy)
            if 0 <= iy < h:
                fill(QRect(0, iy, w, 1), colour)
    ix, iy = math.floor(dx), math.floor(dy)  # the axes through the scene's origin
    if 0 <= ix < w:
        fill(QRect(ix, 0, 1, h), axis)
    if 0 <= iy < h:
        fill(QRect(0, iy, w, 1), axis)
