"""The haul plot: load travel against rope paid in, painted with QPainter for the panel and the report.

One curve per haul (the solved steps), dashed grey lines at each reset, a green mark where the
load first moves, and a dotted line for the same haul without stretch (rope travel = ideal MA x
load travel, from the moment the load moves) so a rigging lead sees at once how much of each
stroke went into stretch.  Axes in the user's length unit.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QFontMetricsF, QPainter, QPainterPath, QPen

from sketchpad import theme
from solver.haul_result import HaulPlan
from solver.units import length_to

#: Room for the axis labels and ticks inside the plot rectangle, px.
LEFT_PX, BOTTOM_PX, TOP_PX, RIGHT_PX = 54.0, 38.0, 10.0, 12.0


def nice_step(span: float, ticks: int = 5) -> float:
    """A round tick step (1, 2 or 5 x 10^k) giving about ``ticks`` ticks over ``span``."""
    if span <= 0 or not math.isfinite(span):
        return 1.0
    raw = span / ticks
    k = 10 ** math.floor(math.log10(raw))
    return next(m * k for m in (1, 2, 5, 10) if m * k >= raw)


def paint_haul_plot(p: QPainter, rect: QRectF, plan: HaulPlan, length_unit: str = "m",
                    cursor: int | None = None) -> None:
    """Paint ``plan``'s load travel against rope paid in into ``rect``; ``cursor`` marks frame index."""
    p.save()
    p.setRenderHint(QPainter.Antialiasing)
    p.fillRect(rect, theme.HAUL_PLOT_BACK)
    font = theme.font(theme.SMALL_POINT_SIZE)
    p.setFont(font)
    fm = QFontMetricsF(font)
    area = QRectF(rect.left() + LEFT_PX, rect.top() + TOP_PX, rect.width() - LEFT_PX - RIGHT_PX,
                  rect.height() - TOP_PX - BOTTOM_PX)
    frames = [f for f in plan.frames if f.phase != "start"] if plan.frames else []
    conv = lambda m: length_to(m, length_unit)  # noqa: E731
    x_max = conv(max([f.paid_in_m for f in plan.frames] + [1e-3]))
    y_max = conv(max([f.load_travel_m for f in plan.frames] + [plan.target_m, 1e-3]))
    x_max, y_max = x_max * 1.04, y_max * 1.08

    def at(paid_m: float, travel_m: float) -> QPointF:
        return QPointF(area.left() + conv(paid_m) / x_max * area.width(),
                       area.bottom() - conv(travel_m) / y_max * area.height())

    # grid and ticks
    p.setPen(QPen(theme.HAUL_PLOT_GRID, 1))
    for axis_max, horizontal in ((x_max, True), (y_max, False)):
        step = nice_step(axis_max)
        v = 0.0
        while v <= axis_max + 1e-12:
            if horizontal:
                x = area.left() + v / x_max * area.width()
                p.setPen(QPen(theme.HAUL_PLOT_GRID, 1))
                p.drawLine(QPointF(x, area.top()), QPointF(x, area.bottom()))
                p.setPen(theme.HAUL_PLOT_TEXT)
                text = f"{v:g}"
                p.drawText(QPointF(x - fm.horizontalAdvance(text) / 2, area.bottom() + fm.ascent() + 3), text)
            else:
                y = area.bottom() - v / y_max * area.height()
                p.setPen(QPen(theme.HAUL_PLOT_GRID, 1))
                p.drawLine(QPointF(area.left(), y), QPointF(area.right(), y))
                p.setPen(theme.HAUL_PLOT_TEXT)
                text = f"{v:g}"
                p.drawText(QPointF(area.left() - fm.horizontalAdvance(text) - 4, y + fm.ascent() / 2 - 1), text)
            v += step
    p.setPen(QPen(theme.HAUL_PLOT_TEXT, 1))
    p.drawRect(area)
    p.drawText(QRectF(area.left(), rect.bottom() - fm.height() - 2, area.width(), fm.height()),
               int(Qt.AlignHCenter), f"rope paid in by the haul team ({length_unit})")
    p.save()
    p.translate(rect.left() + fm.height() - 2, area.center().y())
    p.rotate(-90)
    p.drawText(QRectF(-area.height() / 2, -fm.height(), area.height(), fm.height()), int(Qt.AlignHCenter),
               f"load travel ({length_unit})")
    p.restore()

    # target travel, resets, first movement
    p.setPen(QPen(theme.HAUL_IDEAL, 1, Qt.DashDotLine))
    yt = at(0.0, plan.target_m).y()
    p.drawLine(QPointF(area.left(), yt), QPointF(area.right(), yt))
    p.setPen(QPen(theme.HAUL_RESET, 1.2, Qt.DashLine))
    for f in plan.frames:
        if f.phase == "reset":
            x = at(f.paid_in_m, 0.0).x()
            p.drawLine(QPointF(x, area.top()), QPointF(x, area.bottom()))
    if plan.paid_in_before_move_m is not None:
        m = at(plan.paid_in_before_move_m, 0.0)
        p.setPen(Qt.NoPen)
        p.setBrush(theme.HAUL_MOVE)
        p.drawEllipse(m, 4.0, 4.0)
        if plan.ma_ideal:  # the same haul without stretch from the moment the load moves
            p.setPen(QPen(theme.HAUL_IDEAL, 1.2, Qt.DotLine))
            end_paid = plan.paid_in_before_move_m + plan.ma_ideal * plan.target_m
            p.drawLine(m, at(end_paid, plan.target_m))
    # the haul itself
    if frames:
        path = QPainterPath(at(0.0, 0.0))
        for f in frames:
            path.lineTo(at(f.paid_in_m, f.load_travel_m))
        p.setBrush(Qt.NoBrush)
        p.setPen(QPen(theme.HAUL_CURVE if plan.ok else theme.HAUL_STOP, 2.0))
        p.drawPath(path)
    _legend(p, area, fm, yt)
    if cursor is not None and plan.frames:
        f = plan.frames[max(0, min(cursor, len(plan.frames) - 1))]
        c = at(f.paid_in_m, f.load_travel_m)
        p.setPen(QPen(theme.HAUL_CURSOR, 1, Qt.DashLine))
        p.drawLine(QPointF(c.x(), area.top()), QPointF(c.x(), area.bottom()))
        p.setPen(Qt.NoPen)
        p.setBrush(theme.HAUL_CURSOR)
        p.drawEllipse(c, 4.0, 4.0)
    p.restore()


def _legend(p: QPainter, area: QRectF, fm: QFontMetricsF, target_y: float) -> None:
    """A one-line key on a paper box in the top-left corner, just under the target line (where a haul's
    rising curve has not yet come): haul, reset, no stretch, first movement."""
    width = sum(30 + fm.horizontalAdvance(t) for t in ("haul", "reset", "no stretch")) + 14 + fm.horizontalAdvance(
        "load moves")
    x, y = area.left() + 8, target_y + 6 + fm.ascent()
    p.setPen(Qt.NoPen)
    p.setBrush(theme.HAUL_PLOT_BACK)
    p.drawRect(QRectF(x - 4, y - fm.ascent() - 3, width + 8, fm.height() + 6))
    entries = ((theme.HAUL_CURVE, Qt.SolidLine, "haul"), (theme.HAUL_RESET, Qt.DashLine, "reset"),
               (theme.HAUL_IDEAL, Qt.DotLine, "no stretch"))
    for colour, style, text in entries:
        p.setPen(QPen(colour, 2.0 if style == Qt.SolidLine else 1.2, style))
        p.drawLine(QPointF(x, y - fm.ascent() / 3), QPointF(x + 18, y - fm.ascent() / 3))
        p.setPen(theme.HAUL_PLOT_TEXT)
        p.drawText(QPointF(x + 22, y), text)
        x += 30 + fm.horizontalAdvance(text)
    p.setPen(Qt.NoPen)
    p.setBrush(theme.HAUL_MOVE)
    p.drawEllipse(QPointF(x + 4, y - fm.ascent() / 3), 3.5, 3.5)
    p.setPen(theme.HAUL_PLOT_TEXT)
    p.drawText(QPointF(x + 12, y), "load moves")


def plot_key() -> str:
    """The words that explain the plot's marks (for a caption)."""
    return ("Blue: load travel as the team pays in rope. Dashed grey: a reset (team lets go, the capture "
            "holds, the travelling grab goes back). Green dot: the load first moves. Dotted: the same haul "
            "if nothing stretched (rope = ideal MA x load travel). Dash-dot: the travel asked for.")
