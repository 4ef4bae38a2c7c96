"""What the plan's moving-water items draw, and the one item class that draws it with a bounding rect true at any zoom.

A water drawing (:class:`Marks`) is arrows, polylines and haloed texts in scene metres; arrow heads, pen
widths and texts keep their pixel size whatever the zoom, so how far they reach past their scene points
depends on the scale.  :class:`MarkItem` keeps the metres per pixel of the view it is drawn at
(:meth:`MarkItem.set_scale`, called on every zoom) and computes its bounding rect for it, so Qt's update
regions and the drag layer's device boxes (``sketchpad.drag_layer``) hold every pixel it paints: at a far
zoom-out a text is many metres wide.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPainter, QPainterPath, QPolygonF, QTransform
from PySide6.QtWidgets import QGraphicsItem

from sketchpad import theme
from sketchpad.drag_layer import Versioned

#: Arrow head length, px (each side of the tip).
HEAD_PX = 6.0
#: Px of anti-aliasing and halo counted beyond a mark's own extent (a text's halo is 1 px; 2 px more for edges).
EDGE_PX = 3.0
#: A text's baseline sits this many px above its scene point, centred on it.
TEXT_RISE_PX = 4.0
#: (x, y) px offsets of the halo drawn under each text in the paper colour.
HALO = ((-1, 0), (1, 0), (0, -1), (0, 1))


@dataclass(frozen=True)
class Marks:
    """One water drawing in scene metres (y down): arrows (tail, head) with a head at the head end, polylines
    with their colour and pen width (px), and texts (text, (x, y), colour, (dx, dy)) centred (dx, dy) px from
    their scene point."""

    arrows: tuple[tuple[tuple[float, float], tuple[float, float]], ...] = ()
    lines: tuple[tuple[tuple[tuple[float, float], ...], QColor, float], ...] = ()
    texts: tuple[tuple[str, tuple[float, float], QColor, tuple[float, float]], ...] = ()
    #: per text (in order; missing: no limit), the width (m) of the water it is written in: a text wider than
    #: that on screen (zoomed far out) is not drawn
    rooms: tuple[float, ...] = ()


NO_MARKS = Marks()


def text_font():
    """The water texts' font (speeds, river sides): small and bold."""
    return theme.font(theme.SMALL_POINT_SIZE, bold=True)


def _text_box_px(fm: QFontMetricsF, text: str) -> tuple[float, float, float, float]:
    """(x0, y0, x1, y1) px, relative to a text's scene point, of everything :func:`paint_marks` draws for it."""
    w = fm.horizontalAdvance(text)
    ink = fm.boundingRect(text)
    x0, x1 = min(-w / 2, -w / 2 + ink.left()), max(w / 2, -w / 2 + ink.right())
    y0 = min(-TEXT_RISE_PX - fm.ascent(), -TEXT_RISE_PX + ink.top())
    y1 = max(-TEXT_RISE_PX + fm.descent(), -TEXT_RISE_PX + ink.bottom())
    return (x0 - EDGE_PX, y0 - EDGE_PX, x1 + EDGE_PX, y1 + EDGE_PX)


def marks_bounds(marks: Marks, m_per_px: float, fm: QFontMetricsF | None = None) -> QRectF:
    """The scene rect (metres) holding every pixel :func:`paint_marks` paints for ``marks`` at ``m_per_px``."""
    k = m_per_px
    x0 = y0 = math.inf
    x1 = y1 = -math.inf
    reach = (HEAD_PX + theme.FLOW_ARROW_PX + EDGE_PX) * k
    for a, b in marks.arrows:
        x0, y0 = min(x0, a[0] - reach, b[0] - reach), min(y0, a[1] - reach, b[1] - reach)
        x1, y1 = max(x1, a[0] + reach, b[0] + reach), max(y1, a[1] + reach, b[1] + reach)
    for pts, _colour, width in marks.lines:
        pad = (width / 2 + EDGE_PX) * k
        xs, ys = [p[0] for p in pts], [p[1] for p in pts]
        x0, y0, x1, y1 = min(x0, min(xs) - pad), min(y0, min(ys) - pad), max(x1, max(xs) + pad), max(y1, max(ys) + pad)
    if marks.texts:
        fm = fm or QFontMetricsF(text_font())
        for text, (x, y), _colour, (dx, dy) in shown_texts(marks, k, fm):
            bx0, by0, bx1, by1 = _text_box_px(fm, text)
            bx0, bx1, by0, by1 = bx0 + dx, bx1 + dx, by0 + dy, by1 + dy
            x0, y0, x1, y1 = min(x0, x + bx0 * k), min(y0, y + by0 * k), max(x1, x + bx1 * k), max(y1, y + by1 * k)
    if x0 > x1:
        return QRectF()
    return QRectF(x0, y0, x1 - x0, y1 - y0)


def paint_marks(painter: QPainter, marks: Marks, polygons: list[QPolygonF], font=None) -> None:
    """Draw ``marks`` (``polygons``: its lines as QPolygonFs, in order; ``font``: :func:`text_font`, made here when
    not given) with ``painter`` in scene metres."""
    t = painter.worldTransform()
    k = 1.0 / math.sqrt(abs(t.m11() * t.m22() - t.m12() * t.m21()) or 1.0)  # metres per pixel
    painter.setRenderHint(QPainter.Antialiasing)
    painter.setBrush(Qt.NoBrush)
    if marks.arrows:
        painter.setPen(theme.cosmetic_pen(theme.FLOW_ARROW, theme.FLOW_ARROW_PX))
        head = HEAD_PX * k
        for (ax, ay), (bx, by) in marks.arrows:
            a, b = QPointF(ax, ay), QPointF(bx, by)
            painter.drawLine(a, b)
            dx, dy = bx - ax, by - ay
            n = math.hypot(dx, dy) or 1.0
            ux, uy = dx / n, dy / n
            painter.drawPolyline(QPolygonF([QPointF(bx - ux * head - uy * head * 0.5, by - uy * head + ux * head * 0.5),
                                            b, QPointF(bx - ux * head + uy * head * 0.5, by - uy * head - ux * head * 0.5)]))
    for (_pts, colour, width), poly in zip(marks.lines, polygons):
        painter.setPen(theme.cosmetic_pen(colour, width))
        painter.drawPolyline(poly)
    if marks.texts:
        painter.setFont(font or text_font())
        fm = painter.fontMetrics()
        for text, (x, y), colour, (dx, dy) in shown_texts(marks, k, QFontMetricsF(painter.font())):
            painter.save()
            at = t.map(QPointF(x, y))  # the text's origin on a whole device pixel: the same glyphs on every path
            painter.setWorldTransform(QTransform.fromTranslate(round(at.x()), round(at.y())))
            w = round(fm.horizontalAdvance(text))
            painter.setPen(theme.PAPER)
            for ox, oy in HALO:
                painter.drawText(QPointF(dx - w / 2 + ox, dy - TEXT_RISE_PX + oy), text)
            painter.setPen(colour)
            painter.drawText(QPointF(dx - w / 2, dy - TEXT_RISE_PX), text)
            painter.restore()


def shown_texts(marks: Marks, m_per_px: float, fm: QFontMetricsF) -> list:
    """The texts of ``marks`` drawn at ``m_per_px``: in order, each one clear of those before it (zoomed far out the
    speeds, river sides and tensions would pile on one spot: the first keeps its place, the others are left out),
    and none wider than the water it names (``Marks.rooms``)."""
    kept, boxes = [], []
    rooms = marks.rooms
    for i, t in enumerate(marks.texts):
        text, (x, y), _colour, (dx, dy) = t
        x0, y0, x1, y1 = _text_box_px(fm, text)
        if i < len(rooms) and (x1 - x0 - 2 * EDGE_PX) * m_per_px > rooms[i]:
            continue
        cx, cy = x / m_per_px + dx, y / m_per_px + dy
        box = (cx + x0, cy + y0, cx + x1, cy + y1)
        if any(box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3] for b in boxes):
            continue
        boxes.append(box)
        kept.append(t)
    return kept


def text_boxes(marks: Marks, m_per_px: float, fm: QFontMetricsF) -> list:
    """(scene point, (x, y, w, h) px relative to it) of each text of ``marks`` drawn at ``m_per_px``: what the force
    labels keep off (``sketchpad.overlay.placement.place_labels``'s ``boxes``)."""
    out = []
    for text, at, _colour, (dx, dy) in shown_texts(marks, m_per_px, fm):
        x0, y0, x1, y1 = _text_box_px(fm, text)
        out.append((at, (x0 + dx, y0 + dy, x1 - x0, y1 - y0)))
    return out


class MarkItem(Versioned, QGraphicsItem):
    """A water drawing on the plan (scene metres): changed only when what it draws or the zoom changes.

    ``Versioned`` tells the drag layer of every change; :meth:`set_marks` leaves the item (and its version)
    alone when the drawing is the same, so a drag frame keeps an unchanged item in its still image.  Clicks
    pass through it to the sketch underneath."""

    def __init__(self, parent: QGraphicsItem | None = None) -> None:
        super().__init__(parent)
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.marks = NO_MARKS
        self._polygons: list[QPolygonF] = []
        self._m_per_px = 0.05
        self._bounds = QRectF()
        self._font = text_font()  # made once: a font is slow to make
        self._fm = QFontMetricsF(self._font)  # the texts' metrics, for the rect
        self._boxes_for: tuple | None = None  # (marks, m per px, text boxes) of the last text_boxes call

    @property
    def m_per_px(self) -> float:
        return self._m_per_px

    def text_boxes(self) -> list:
        """Where this item's texts are, at its zoom (:func:`text_boxes`): the very tuples of the last call while the
        drawing and zoom are the same, so the placer's obstacle cache (which compares them by identity) keeps them."""
        if not self.marks.texts:
            return []
        kept = self._boxes_for
        if kept is None or kept[0] is not self.marks or kept[1] != self._m_per_px:
            kept = self._boxes_for = (self.marks, self._m_per_px, text_boxes(self.marks, self._m_per_px, self._fm))
        return list(kept[2])

    def set_marks(self, marks: Marks) -> bool:
        """Draw ``marks`` from now on; False (nothing done) when they are the ones drawn."""
        if marks == self.marks:
            return False
        self.marks = marks
        self._polygons = [QPolygonF([QPointF(x, y) for x, y in pts]) for pts, _c, _w in marks.lines]
        self._refresh()
        return True

    def set_scale(self, m_per_px: float) -> None:
        """The view's zoom (metres per pixel): pixel-sized heads, pens and texts reach this far in metres."""
        if m_per_px > 0 and not math.isclose(m_per_px, self._m_per_px, rel_tol=1e-12):
            self._m_per_px = float(m_per_px)
            self._refresh()

    def _refresh(self) -> None:
        self.prepareGeometryChange()
        self._bounds = marks_bounds(self.marks, self._m_per_px, self._fm)
        self.update()

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._bounds

    def shape(self) -> QPainterPath:
        return QPainterPath()  # never hit: the sketch underneath takes the clicks

    def paint(self, painter: QPainter, option, widget=None) -> None:
        paint_marks(painter, self.marks, self._polygons, self._font)
