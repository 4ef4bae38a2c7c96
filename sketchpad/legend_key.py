"""What the force overlay's key says and how its swatches look: the title, the utilization wedge and one row
per zone shape, each named by what it means on site.

The key (``sketchpad.overlay.Legend``) lays these out; they live here so the words and the
swatches can grow without the overlay module.  The wedge is as tall as the band is wide at each
utilization (``theme.band_width_px``), so a greyscale print still reads light use as a thin band
and overload as a heavy one.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QFont, QLinearGradient, QPainter, QPolygonF

from sketchpad import theme
from solver.danger import QUICK_ESTIMATE

TITLE = "Rope use: share of allowed load"
#: The marker on a row whose shape is the quick estimate, explained once in the key's last line (a longer
#: wording in each row widened the key over the middle of a small viewport)
QUICK_MARK = "*"
QUICK_FOOTNOTE = f"{QUICK_MARK} {QUICK_ESTIMATE}"
#: (zone kind whose colours the swatch uses, swatch shape, words): every shape the zone layer draws before a
#: failure scan has computed the areas (the bight shapes marked as the quick estimate, as solve and the
#: drawings word them), the ring left where a point the solver moved was drawn, and the marker's footnote
ZONE_ROWS: tuple[tuple[str, str, str], ...] = (
    ("bight", "box", f"inside of bight{QUICK_MARK}: rope snaps in if a redirect fails"),
    ("bight", "arm", f"arm from a bight{QUICK_MARK}: pulley's flight if its anchor fails"),
    ("recoil", "box", "recoil band: a broken rope whips here"),
    ("", "drawn", "dashed ring: where a point was drawn; the solver moved it"),
    ("", "note", QUICK_FOOTNOTE),
)
DRAWN_PLACE_ROW = ZONE_ROWS[3]
ROW_GAP_PX = 2.0


def rows_for(zone_names) -> tuple[tuple[str, str, str], ...]:
    """The key's rows for the zone swatches it shows (``Legend.zone_names``): the drawn shapes each named
    by what they mean, or, once a failure scan has computed the areas, those areas' own names."""
    if tuple(zone_names) == tuple(theme.DRAWN_ZONE_NAMES):
        return ZONE_ROWS
    return tuple((kind, "box", name) for kind, name in zone_names) + (DRAWN_PLACE_ROW,)


def rows_height(rows, line_height: float, show_zones: bool) -> float:
    """Height (px) of the zone rows (none when the zone layer is off)."""
    return len(rows) * (line_height + ROW_GAP_PX) if show_zones else 0.0


def rows_width(rows, advance) -> float:
    """Width (px) of the widest zone row; ``advance(text)`` measures text in the key's font."""
    return max(18.0 + advance(text) for _k, _s, text in rows)


def paint_wedge(p: QPainter, ramp: QRectF, top_util: float, grey: bool) -> None:
    """The utilization ramp as a wedge: colour along it, height = band width at that use (bottom-aligned)."""
    grad = QLinearGradient(ramp.topLeft(), ramp.topRight())
    for u, c in theme.UTIL_RAMP:
        grad.setColorAt(min(u / top_util, 1.0), theme.OVERLAY_GREY if grey else c)
    steps = 16
    top_edge = []
    for i in range(steps + 1):
        u = top_util * i / steps
        h = ramp.height() * theme.band_width_px(u) / theme.BAND_MAX_PX
        top_edge.append(QPointF(ramp.left() + ramp.width() * i / steps, ramp.bottom() - h))
    poly = QPolygonF([QPointF(ramp.left(), ramp.bottom()), *top_edge, QPointF(ramp.right(), ramp.bottom())])
    p.setPen(Qt.NoPen)
    p.setBrush(grad)
    p.drawPolygon(poly)


def paint_rows(p: QPainter, rows, x: float, y: float, line_height: float, ascent: float) -> None:
    """The zone rows from (x, y) down: a swatch in the zone's fill and hatch, then its words."""
    for kind, shape, text in rows:
        if shape == "note":  # a footnote to the rows above: no swatch, italic (narrower than the rows it notes)
            font = p.font()
            italic = QFont(font)
            italic.setItalic(True)
            p.setFont(italic)
            p.setPen(theme.OVERLAY_LABEL_TEXT)
            p.drawText(QPointF(x, y + ascent), text)
            p.setFont(font)
            y += line_height + ROW_GAP_PX
            continue
        if shape == "drawn":  # as sketchpad.solved_places draws it at the drawn place of a point the solver moved
            p.setPen(theme.pixel_pen(theme.DRAWN_PLACE, 1.2, Qt.DashLine))
            p.setBrush(Qt.NoBrush)
            r = min(theme.DRAWN_PLACE_RADIUS_PX, line_height / 2 - 1)
            p.drawEllipse(QPointF(x + 7, y + line_height / 2), r, r)
            p.setPen(theme.OVERLAY_LABEL_TEXT)
            p.drawText(QPointF(x + 18, y + ascent), text)
            y += line_height + ROW_GAP_PX
            continue
        fill, hatch = theme.zone_brushes(kind)
        if shape == "arm":  # a narrow strip standing out of a triangle's tip, as drawn on the plan
            box = QRectF(x + 4, y + 1, 6, line_height - 3)
        else:
            box = QRectF(x, y + 1, 14, line_height - 3)
        p.setPen(theme.pixel_pen(theme.ZONE_COLOURS[kind], 1.0))
        for brush in (fill, hatch):
            p.setBrush(brush)
            p.drawRect(box)
        p.setPen(theme.OVERLAY_LABEL_TEXT)
        p.drawText(QPointF(x + 18, y + ascent), text)
        y += line_height + ROW_GAP_PX
