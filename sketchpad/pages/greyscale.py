"""Greyscale-safe drawings: every meaning the colours carry is carried by line pattern too, and a greyscale output.

Rope use (tension x SF / MBS) is coloured along each loaded piece by the overlay's ramp; ramp
colours of equal lightness (green and amber) look the same on a black-and-white printer, so each
loaded piece also gets two thin rails along its band whose pattern names its class
(``theme.UTIL_CLASSES``: none below 50 %, dotted to 80 %, dashed to 100 %, solid and heavy at or
past the safety factor).  Danger zones differ by hatch direction and edge, hazards are hatched,
point kinds by marker shape, ropes by their names on the plan.

``--greyscale`` output: a PDF written in the grey colour model (text stays text), a PNG converted
to 8-bit grey, an SVG whose colours are replaced by their luminance (ITU-R BT.601 weights,
the ones ``QColor``/``qGray`` use).
"""

from __future__ import annotations

import math
import re

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPainter

from sketchpad import theme
from sketchpad.rope_bows import site_bows


def util_class(u: float | None) -> int | None:
    """Index into ``theme.UTIL_CLASSES`` of a utilization (None when the capacity is unknown)."""
    if u is None or u != u:
        return None
    idx = 0
    for i, (low, _words, _style, _width) in enumerate(theme.UTIL_CLASSES):
        if u >= low:
            idx = i
    return idx


def class_entries() -> list[tuple[str, str]]:
    """Key entries for the rope-use classes: (``"class:N"``, words)."""
    return [(f"class:{i}", f"rope use {words}") for i, (_l, words, _s, _w) in enumerate(theme.UTIL_CLASSES)]


def _rail_pen(index: int):
    _low, _words, style, width = theme.UTIL_CLASSES[index]
    pen = theme.pixel_pen(theme.UTIL_RAIL, width, style)
    pen.setCapStyle(Qt.FlatCap)
    return pen


def paint_rails(painter: QPainter, a: QPointF, b: QPointF, index: int, half_gap: float) -> None:
    """The class's two rails along a->b (px), ``half_gap`` px either side of the line."""
    if theme.UTIL_CLASSES[index][2] == Qt.NoPen:
        return
    dx, dy = b.x() - a.x(), b.y() - a.y()
    n = math.hypot(dx, dy)
    if n < 1e-9:
        return
    ox, oy = -dy / n * half_gap, dx / n * half_gap
    painter.setPen(_rail_pen(index))
    for s in (1.0, -1.0):
        off = QPointF(ox * s, oy * s)
        painter.drawLine(a + off, b + off)


def paint_class_swatch(painter: QPainter, rect: QRectF, kind: str) -> None:
    """Key swatch of ``"class:N"``: the band in the class's ramp colour with its rails."""
    i = int(kind.split(":")[1])
    low = theme.UTIL_CLASSES[i][0]
    upper = theme.UTIL_CLASSES[i + 1][0] if i + 1 < len(theme.UTIL_CLASSES) else low + 0.25
    band = QColor(theme.utilization_colour((low + upper) / 2))
    band.setAlpha(theme.OVERLAY_BAND_ALPHA)
    painter.save()
    y = rect.center().y()
    painter.setPen(theme.pixel_pen(band, theme.OVERLAY_BAND_PX))
    painter.drawLine(QPointF(rect.left() + 2, y), QPointF(rect.right() - 2, y))
    paint_rails(painter, QPointF(rect.left(), y), QPointF(rect.right(), y), i, theme.OVERLAY_BAND_PX / 2 + 1.2)
    painter.restore()


def paint_drawing_rails(painter: QPainter, target: QRectF, drawing) -> int:
    """Rails on every loaded piece of a fitted drawing (px); returns how many pieces got rails."""
    if drawing.fit is None or not drawing.result.ok:
        return 0
    fit = drawing.fit
    k, src = fit.px_per_m, fit.source
    util = {(s.rope, s.index): s for s in drawing.result.segments}
    bows = site_bows(drawing.result) if drawing.rig.view == "plan" else {}  # a bowed piece's rails follow its bow
    painter.save()
    painter.setRenderHint(QPainter.Antialiasing, True)
    n = 0
    for key, a, b in drawing.pieces:
        s = util.get(key)
        if s is None or s.tension_N <= 1.0:
            continue
        i = util_class(s.utilization)
        if i is None:
            continue
        bow = bows.get(key)
        run = [a, *((x, -y) for x, y in bow[1:-1]), b] if bow else [a, b]
        pts = [QPointF(target.left() + (x - src.left()) * k, target.top() + (y - src.top()) * k) for x, y in run]
        for pa, pb in zip(pts, pts[1:]):
            paint_rails(painter, pa, pb, i, theme.OVERLAY_BAND_PX / 2 + 1.2)
        n += 1
    painter.restore()
    return n


# --- greyscale output ------------------------------------------------------------------------
def set_pdf_grey(writer) -> None:
    """Write a QPdfWriter's colours as grey levels."""
    from PySide6.QtGui import QPdfWriter

    writer.setColorModel(QPdfWriter.ColorModel.Grayscale)


_HEX = re.compile(r"#([0-9a-fA-F]{6})\b")


def grey_svg_text(text: str) -> str:
    """Every ``#rrggbb`` colour of an SVG replaced by its grey (qGray's weights: 11 r + 16 g + 5 b over 32)."""
    def grey(m: re.Match) -> str:
        v = int(m.group(1), 16)
        r, g, b = v >> 16 & 255, v >> 8 & 255, v & 255
        y = (r * 11 + g * 16 + b * 5) // 32
        return f"#{y:02x}{y:02x}{y:02x}"

    return _HEX.sub(grey, text)


__all__ = ["util_class", "class_entries", "paint_rails", "paint_class_swatch", "paint_drawing_rails",
           "set_pdf_grey", "grey_svg_text"]
