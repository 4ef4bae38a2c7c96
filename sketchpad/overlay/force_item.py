"""The force item: utilization bands, anchor arrows, solved-point rings and every label, painted by one item.

Labels keep their size in screen pixels: the item lives in scene metres, and labels are painted in
device space at pixel offsets from their anchor point, from retained layers redrawn only where a
drag frame changed them.
"""

from __future__ import annotations

import math
import operator

from PySide6.QtCore import QPointF, QRect, QRectF, Qt
from PySide6.QtGui import (QBrush, QColor, QFontMetricsF, QImage, QPainter, QPainterPath, QPen,
                           QPixmap, QPolygonF, QRegion, QTransform)

from sketchpad import theme
from sketchpad.items import blit_cached, cached_blit_at, drop_oldest, pixel_dpr
from sketchpad.overlay.bands import BandPainting, BandState
from sketchpad.overlay.labels import AnchorArrow, OverlayLabel, PerPoint, scene_xy
from sketchpad.overlay.layer import LayerItem, pixmap_entry, plain_raster_transform
from sketchpad.overlay.placement import MARKER_CLEAR_PX
from sketchpad.retained import RetainedLayer

PIXMAP_CACHE_MAX = 4000  # rendered labels kept for repaints
LEADER_DOT_PX = 1.8  # radius of the dot a leader starts from
_LEADER_DOT_BOUNDS = QRectF(-LEADER_DOT_PX - 2.0, -LEADER_DOT_PX - 2.0, 2 * LEADER_DOT_PX + 4.0, 2 * LEADER_DOT_PX + 4.0)


def _arrow_bounds(direction: tuple[float, float]) -> QRectF:
    """Pixels (relative to the anchor) an anchor arrow along the unit ``direction`` can touch: shaft and head."""
    dx, dy = direction
    a = (dx * MARKER_CLEAR_PX, dy * MARKER_CLEAR_PX)
    b = (dx * theme.ANCHOR_ARROW_PX, dy * theme.ANCHOR_ARROW_PX)
    m = max(theme.ANCHOR_ARROW_HEAD_PX * 0.5, theme.ANCHOR_ARROW_WIDTH_PX) + 2.0
    return QRectF(min(a[0], b[0]), min(a[1], b[1]), abs(b[0] - a[0]), abs(b[1] - a[1])).adjusted(-m, -m, m, m)


def _leader_end(x: float, y: float, w: float, h: float) -> tuple[float, float]:
    """The point of a label box (x, y, w, h px, relative to its anchor) nearest the anchor: where the leader ends."""
    return (min(max(0.0, x), x + w), min(max(0.0, y), y + h))


class ForceItem(BandPainting, LayerItem):
    """Utilization bands, anchor arrows, solved-point rings and every label, painted by one item."""

    def __init__(self) -> None:
        super().__init__()
        self.bands: list[tuple[QPen, QPainterPath]] = []
        self.band_ends: list[list[tuple[float, float]]] = []  # both ends of every piece of each band (scene)
        self._band_dots: dict[tuple, QPixmap] = {}
        self._draw: list[tuple] = []
        self._draw_for: list | None = None
        self._draw_grey = False
        # per placed label object: (label, at, rect, leader, grey, m_per_px, its _draw entry, its scene bounds)
        self._label_draw: dict[int, tuple] = {}
        #: How many label blit entries refresh_rect kept from its last call and how many it worked out again:
        #: what tests read to see the kept path taken (never the entries themselves).
        self.entry_counts: dict[str, int] = {"kept": 0, "made": 0}
        self._grey_band_pen = theme.cosmetic_pen(theme.OVERLAY_GREY, theme.OVERLAY_BAND_PX)
        self.labels: list[OverlayLabel] = []
        self.arrows: list[AnchorArrow] = []
        self.moved_points: list[tuple[float, float]] = []
        self.fail_point: tuple[float, float] | None = None
        self.font = theme.font(theme.OVERLAY_POINT_SIZE)
        self.fm = QFontMetricsF(self.font)
        self._pens: dict[int, QPen] = {}
        self._back = QBrush(theme.OVERLAY_LABEL_BACK)
        self._text_pen = QPen(theme.OVERLAY_LABEL_TEXT)
        self._leader_pen = theme.pixel_pen(theme.OVERLAY_LEADER, 1.0)
        self._ring_pen = theme.pixel_pen(theme.OVERLAY_LEADER, 1.3)
        self._fail_pen = theme.pixel_pen(theme.BANNER_BACK, 3.0)
        self._size_cache: dict[str, tuple[float, float]] = {}
        self._pixmap_cache: dict[tuple, QPixmap] = {}
        self._box_cache: dict[tuple, QImage] = {}  # label boxes by size and colour (label_pixmap)
        self._retained_marks = RetainedLayer()  # rings, arrows, leaders, labels as last painted
        self._band_layers: dict[int, RetainedLayer] = {}  # per band colour
        # retained-layer entries of the last frame, by what they show: (frame, rings, arrows, labels)
        self._entry_memo: tuple = (None, {}, {}, {})
        self._marks_last: tuple | None = None  # the last frame's inputs and entry list
        self._band_memo: dict = {}
        self._flat_pens: dict[int, QPen] = {}
        self._band_paths: dict[int, tuple] = {}  # per colour: (piece ends, (pen, path)) of the last set_bands
        self._band_state = BandState()  # what the last set_bands made of each piece and solved point
        self._drawn: tuple = (None, {})
        self._drawn_xy = PerPoint(lambda p: scene_xy(p.xy))
        self._point_ids = PerPoint(operator.attrgetter("id"))
        self._prepared: tuple | None = None  # (what it was prepared for, prepare_retained's result) until painted
        self._lost_damage = QRegion()  # where band layers that went had pixels (take_damage)

    # --- building (outside paint) ---------------------------------------------------------------
    def pen_for(self, colour: QColor, width: float) -> QPen:
        key = (colour.rgba(), width)
        pen = self._pens.get(key)
        if pen is None:
            pen = self._pens[key] = theme.pixel_pen(colour, width)
        return pen

    def label_size(self, lab: OverlayLabel) -> tuple[float, float]:
        text = lab.text
        size = self._size_cache.get(text)
        if size is None:
            pad = theme.OVERLAY_LABEL_PAD_PX
            w = max(self.fm.horizontalAdvance(line) for line in lab.lines) + 2 * pad
            h = self.fm.height() * len(lab.lines) + 2 * pad
            size = self._size_cache[text] = (math.ceil(w), math.ceil(h))
        return size

    def label_pixmap(self, lab: OverlayLabel, colour: QColor) -> QPixmap:
        """The label's box and text rendered once and blitted on every repaint (cached by text and colour)."""
        kind_text = None if self.grey else theme.LABEL_KIND_TEXT.get(lab.kind)
        key = (lab.lines, colour.rgba(), None if kind_text is None else kind_text.rgba())
        pix = self._pixmap_cache.get(key)
        if pix is not None:
            return pix
        if len(self._pixmap_cache) > PIXMAP_CACHE_MAX:
            drop_oldest(self._pixmap_cache)
        w, h = self.label_size(lab)
        # the box alone (an anti-aliased rounded rect costs ~75 us, the text ~15 us) is shared by every
        # label of its size and colour: during a drag a changed number mostly keeps the label's size
        image = self._label_box(w, h, colour).copy()
        p = QPainter(image)
        p.setRenderHint(QPainter.Antialiasing, True)
        p.setRenderHint(QPainter.TextAntialiasing, True)
        self._paint_label_text(p, lab, QRectF(0.0, 0.0, w, h))
        p.end()
        pix = self._pixmap_cache[key] = QPixmap.fromImage(image)
        return pix

    def _label_box(self, w: float, h: float, colour: QColor) -> QImage:
        """A transparent (w + 1) x (h + 1) px image holding a label's box in ``colour``, cached by size and colour."""
        key = (w, h, colour.rgba())
        image = self._box_cache.get(key)
        if image is None:
            if len(self._box_cache) > PIXMAP_CACHE_MAX:
                drop_oldest(self._box_cache)
            image = QImage(int(w) + 1, int(h) + 1, QImage.Format_ARGB32_Premultiplied)
            image.fill(Qt.transparent)
            p = QPainter(image)
            p.setRenderHint(QPainter.Antialiasing, True)
            p.setRenderHint(QPainter.TextAntialiasing, True)
            self._paint_label_box(p, QRectF(0.0, 0.0, w, h), colour)
            p.end()
            self._box_cache[key] = image
        return image

    def paint_label_vector(self, painter: QPainter, lab: OverlayLabel, box: QRectF, colour: QColor) -> None:
        """A label's rounded box (border in ``colour``) and its text lines, drawn as vectors in ``box`` (device px).

        :meth:`label_pixmap` draws the same in two steps on screen; print and SVG (``sketchpad.export``) draw it directly.
        """
        self._paint_label_box(painter, box, colour)
        self._paint_label_text(painter, lab, box)

    def _paint_label_box(self, painter: QPainter, box: QRectF, colour: QColor) -> None:
        half = theme.OVERLAY_LABEL_BORDER_PX / 2.0
        painter.setPen(self.pen_for(colour, theme.OVERLAY_LABEL_BORDER_PX))
        painter.setBrush(self._back)
        painter.drawRoundedRect(box.adjusted(half, half, -half, -half), 3.0, 3.0)

    def _paint_label_text(self, painter: QPainter, lab: OverlayLabel, box: QRectF) -> None:
        painter.setFont(self.font)
        kind_text = None if self.grey else theme.LABEL_KIND_TEXT.get(lab.kind)  # turns and the water's numbers
        painter.setPen(self.pen_for(kind_text, 1.0) if kind_text is not None else self._text_pen)
        pad, lh, ascent = theme.OVERLAY_LABEL_PAD_PX, self.fm.height(), self.fm.ascent()
        for i, line in enumerate(lab.lines):
            painter.drawText(QPointF(box.left() + pad, box.top() + pad + i * lh + ascent), line)

    @staticmethod
    def label_box(lab: OverlayLabel, t: QTransform) -> tuple[QPointF, QRectF]:
        """A placed label's anchor point and box in device px, ``t`` mapping scene metres to the device."""
        p = t.map(QPointF(*lab.at))
        x, y, w, h = lab.rect
        return p, QRectF(p.x() + x, p.y() + y, w, h)

    def paint_leader(self, painter: QPainter, anchor: QPointF, box: QRectF) -> None:
        """The leader from a label's anchor point to the nearest point of its box, with a dot on the anchor (device px)."""
        painter.save()
        painter.translate(anchor)
        ex, ey = _leader_end(box.left() - anchor.x(), box.top() - anchor.y(), box.width(), box.height())
        self._draw_leader(painter, ex, ey)
        painter.restore()

    def _draw_leader_at(self, painter: QPainter, x: float, y: float, ex: float, ey: float) -> None:
        """A leader from (x, y) to (x + ex, y + ey) px."""
        painter.translate(x, y)
        self._draw_leader(painter, ex, ey)
        painter.translate(-x, -y)

    def _draw_leader(self, painter: QPainter, ex: float, ey: float) -> None:
        """A leader from the origin (the dot) to (ex, ey) px; on screen the dot is blitted (an anti-aliased
        ellipse drawn afresh costs ~25 us, and a zoom step draws every leader again)."""
        painter.setPen(self._leader_pen)
        painter.drawLine(QPointF(0.0, 0.0), QPointF(ex, ey))
        dpr = pixel_dpr(painter)
        if dpr is None:
            self._draw_leader_dot(painter)
        else:
            blit_cached(painter, QPointF(0.0, 0.0), dpr, ("leader-dot", LEADER_DOT_PX), _LEADER_DOT_BOUNDS,
                        self._draw_leader_dot)

    def _draw_leader_dot(self, painter: QPainter) -> None:
        painter.setPen(self._leader_pen)
        painter.setBrush(theme.OVERLAY_LEADER)
        painter.drawEllipse(QPointF(0.0, 0.0), LEADER_DOT_PX, LEADER_DOT_PX)

    def set_labels(self, labels: list[OverlayLabel], arrows: list[AnchorArrow], m_per_px: float) -> None:
        self.labels, self.arrows = labels, arrows
        self.refresh_rect(m_per_px)

    def refresh_rect(self, m_per_px: float) -> None:
        """The item's bounding rect (scene metres) around bands, arrows, placed labels and the failure ring,
        and the list of label blits :meth:`paint` draws."""
        xs0, ys0, xs1, ys1 = [], [], [], []  # the union of the parts' rects, in plain floats
        for _pen, path in self.bands:
            r = path.boundingRect()
            if not r.isNull():
                xs0.append(r.left()), ys0.append(r.top()), xs1.append(r.right()), ys1.append(r.bottom())
        reach = (theme.ANCHOR_ARROW_PX + theme.ANCHOR_ARROW_HEAD_PX) * m_per_px
        if self.arrows and reach > 0:
            xs, ys = [a.base[0] for a in self.arrows], [a.base[1] for a in self.arrows]
            xs0.append(min(xs) - reach), ys0.append(min(ys) - reach), xs1.append(max(xs) + reach), ys1.append(max(ys) + reach)
        draw, bounds = self._label_entries(m_per_px)
        if bounds:
            bx0, by0, bx1, by1 = zip(*bounds)
            xs0.append(min(bx0)), ys0.append(min(by0)), xs1.append(max(bx1)), ys1.append(max(by1))
        pad = (theme.FAIL_RING_PX + theme.BAND_MAX_PX) * m_per_px
        if self.fail_point is not None and pad > 0:
            fx, fy = self.fail_point
            xs0.append(fx - pad), ys0.append(fy - pad), xs1.append(fx + pad), ys1.append(fy + pad)
        if xs0:
            x0, y0, x1, y1 = min(xs0) - pad, min(ys0) - pad, max(xs1) + pad, max(ys1) + pad
            self.set_rect(QRectF(x0, y0, x1 - x0, y1 - y0))
        else:
            self.set_rect(QRectF())
        self._draw = draw
        self._draw_for, self._draw_grey = self.labels, self.grey
        self.update()

    def _label_entries(self, m_per_px: float) -> tuple[list[tuple], list[tuple]]:
        """What paint() blits for each placed label -- anchor (scene), box offset and size (px), leader,
        pixmap -- and the scene bounds (x0, y0, x1, y1) of each placed label box that has a size.

        A label object placed where it was at the last call, at the same zoom and greyness, keeps its
        entry and bounds (a label object's lines and colour never change, so neither does its pixmap);
        only the labels the placer moved and new label objects are worked out again."""
        grey = self.grey
        last, kept = self._label_draw, {}
        draw, bounds = [], []
        made = 0
        for lab in self.labels:
            if not lab.placed:
                continue
            at, rect, leader = lab.at, lab.rect, lab.leader
            c = last.get(id(lab))
            if (c is None or c[0] is not lab or c[1] != at or c[2] != rect or c[3] != leader or c[4] != grey
                    or c[5] != m_per_px):
                x, y, w, h = rect
                entry = (at[0], at[1], x, y, w, h, leader,
                         self.label_pixmap(lab, theme.OVERLAY_GREY if grey else lab.colour))
                box = None
                if w > 0 or h > 0:
                    lx, ly = at[0] + x * m_per_px, at[1] + y * m_per_px
                    box = (lx, ly, lx + w * m_per_px, ly + h * m_per_px)
                c = (lab, at, rect, leader, grey, m_per_px, entry, box)
                made += 1
            kept[id(lab)] = c
            draw.append(c[6])
            if c[7] is not None:
                bounds.append(c[7])
        self._label_draw = kept
        self.entry_counts["made"] += made
        self.entry_counts["kept"] += len(kept) - made
        return draw, bounds

    def cache_sizes(self) -> dict[str, int]:
        """How many label boxes (by size and colour) and label pixmaps the item keeps now."""
        return {"boxes": len(self._box_cache), "pixmaps": len(self._pixmap_cache)}

    @property
    def marks_redraws(self) -> dict[str, int]:
        """How often the layer of rings, arrows, leaders and labels was drawn whole and patched in place."""
        return {"full": self._retained_marks.full_redraws, "partial": self._retained_marks.partial_redraws}

    def forget_kept(self) -> None:
        """Drop every label entry, pixmap and painted layer kept between calls: the next :meth:`refresh_rect`
        and paint work everything out afresh (the same pixels, by contract)."""
        self._label_draw = {}
        self._pixmap_cache.clear()
        self._box_cache.clear()
        self._entry_memo = (None, {}, {}, {})
        self._marks_last = None
        self._retained_marks.clear()
        for layer in self._band_layers.values():
            layer.clear()

    # --- painting -----------------------------------------------------------------------------------
    def paint(self, painter: QPainter, option, widget=None) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        if not self.grey and self._paint_retained(painter):
            return
        if self.grey:
            painter.setOpacity(theme.OVERLAY_GREY_OPACITY)
        if self.grey or not self._paint_bands_layered(painter):
            for pen, path in self.bands:
                painter.setPen(self._grey_band_pen if self.grey else pen)
                painter.drawPath(path)
        t = painter.worldTransform()
        painter.setWorldTransform(QTransform())
        painter.setBrush(Qt.NoBrush)
        painter.setPen(self._ring_pen)
        r = theme.OVERLAY_SOLVED_POINT_PX
        dpr = pixel_dpr(painter)
        if dpr is None:  # SVG, PDF: vector rings
            for m in self.moved_points:
                painter.drawEllipse(t.map(QPointF(*m)), r, r)
        else:  # every ring looks the same: blit it
            reach = r + 2.0
            bounds = QRectF(-reach, -reach, 2 * reach, 2 * reach)
            for m in self.moved_points:
                blit_cached(painter, t.map(QPointF(*m)), dpr, ("solved-ring", r), bounds, self._draw_ring)
        for arrow in self.arrows:
            self._paint_arrow(painter, t, arrow, dpr)
        painter.setFont(self.font)
        if self._draw_for is self.labels and self._draw_grey == self.grey:  # prepared by refresh_rect
            for ax, ay, x, y, w, h, leader, pix in self._draw:
                px, py = t.map(ax, ay)
                if leader:
                    if dpr is None:
                        self.paint_leader(painter, QPointF(px, py), QRectF(px + x, py + y, w, h))
                    else:  # a leader depends only on its box offset: blit it (a translucent slanted
                        # line costs Qt's raster engine ~50 us when drawn directly, a blit ~3 us)
                        ex, ey = _leader_end(x, y, w, h)
                        blit_cached(painter, QPointF(px, py), dpr, ("leader", ex, ey),
                                    QRectF(min(ex, 0.0), min(ey, 0.0), abs(ex), abs(ey)).adjusted(-3, -3, 3, 3),
                                    lambda p, ex=ex, ey=ey: self._draw_leader(p, ex, ey))
                painter.drawPixmap(QPointF(px + x, py + y), pix)
            labels = ()
        else:
            labels = self.labels
        for lab in labels:
            if not lab.placed:
                continue
            p, box = self.label_box(lab, t)
            colour = theme.OVERLAY_GREY if self.grey else lab.colour
            if lab.leader:
                self.paint_leader(painter, p, box)
            painter.drawPixmap(box.topLeft(), self.label_pixmap(lab, colour))
        if self.fail_point is not None:
            painter.setOpacity(1.0)
            painter.setPen(self._fail_pen)
            painter.setBrush(Qt.NoBrush)
            painter.drawEllipse(t.map(QPointF(*self.fail_point)), theme.FAIL_RING_PX, theme.FAIL_RING_PX)

    def _paint_retained(self, painter: QPainter) -> bool:
        """On screen: bands, rings, arrows, leaders and labels kept in retained layers (``sketchpad.retained``)
        and redrawn only where something changed, then laid down in the order :meth:`paint` draws them.

        A drag step changes the labels and bands of the moved part of the rig only, so the frame
        costs in proportion to that.  Only for raster painting at 1:1 device pixels with a plain
        zoom (not greyed); returns False (and draws nothing) otherwise.  The layers are brought up
        to date by :meth:`prepare_retained`, which a drag frame calls before it paints (to learn
        where the frame changed); here it hands over what it prepared.
        """
        t = plain_raster_transform(painter)
        if t is None:
            self._prepared = None
            return False
        device = painter.device()
        ready = self.prepare_retained(t, QRect(0, 0, device.width(), device.height()))
        self._prepared = None  # used once: the next frame prepares again
        if ready is None:
            return False
        bands, marks, used, origin = ready
        painter.save()
        painter.resetTransform()
        for image, at, alpha in bands:
            painter.setOpacity(alpha)
            painter.drawImage(at, image)
        painter.setOpacity(1.0)
        if not used.isEmpty():
            painter.drawImage(used.topLeft() + origin, marks, used)
        painter.restore()
        return True

    def prepare_retained(self, t: QTransform, area: QRect):
        """Bring the retained layers up to date for a frame over ``area`` (device px, from 0, 0) at the plain
        zoom and pan ``t`` (see :func:`_plain_raster_transform`): (band layers, marks image, its used part,
        the area's top-left), or None when such a frame is painted without them (greyed, labels not prepared, layers too large).

        What changed goes into the layers' damage (:meth:`take_damage`).  The result is kept for the
        paint of the same frame, which takes it (a second call with nothing changed returns it too).
        """
        key = (t.m11(), t.m22(), t.dx(), t.dy(), area.x(), area.y(), area.width(), area.height(), self._ver, self.grey,
               id(self.labels), id(self.bands), id(self.moved_points), id(self.arrows))
        prepared = self._prepared
        if prepared is not None and prepared[0] == key:
            return prepared[1]
        ready = None
        if not self.grey and self._draw_for is self.labels and self._draw_grey == self.grey:
            m11, m22, dx, dy = t.m11(), t.m22(), t.dx(), t.dy()
            bands = self._retained_bands(m11, m22, dx, dy, area)
            if bands is not None:
                marks = self._retained_marks.update((m11, m22, dx, dy), area, self._mark_entries(m11, m22, dx, dy))
                ready = (bands, marks, self._retained_marks.used(), area.topLeft())
        self._prepared = (key, ready)
        return ready

    def take_damage(self):
        """Device px where the retained layers' pixels changed since the last call (``RetainedLayer.take_damage``),
        including the places of band layers that went; then forgotten."""
        damage = self._retained_marks.take_damage().united(self._lost_damage)
        for layer in self._band_layers.values():
            damage = damage.united(layer.take_damage())
        self._lost_damage = QRegion()
        return damage

    def _mark_entries(self, m11: float, m22: float, dx: float, dy: float) -> list:
        """(key, device box, op) of the solved-point rings, anchor arrows, leaders and labels, in paint order.

        An entry depends only on the frame's transform and on what it shows, so entries are kept
        from the last frame (a drag step changes a few of them); with nothing rebuilt since the last
        frame (the same lists of rings, arrows and labels) the last frame's list itself is returned.
        """
        frame = (m11, m22, dx, dy)
        last = self._marks_last
        if (last is not None and last[0] == frame and last[1] is self.moved_points and last[2] is self.arrows
                and last[3] is self._draw):
            return last[4]
        _frame, rings, arrows, labels = self._entry_memo if self._entry_memo[0] == frame else (None, {}, {}, {})
        new_rings, new_arrows, new_labels = {}, {}, {}
        out = []
        r = theme.OVERLAY_SOLVED_POINT_PX
        reach = r + 2.0
        ring_bounds = QRectF(-reach, -reach, 2 * reach, 2 * reach)
        for m in self.moved_points:
            e = rings.get(m)
            if e is None:
                pix, x, y = cached_blit_at(m[0] * m11 + dx, m[1] * m22 + dy, 1.0, ("solved-ring", r), ring_bounds,
                                           self._draw_ring)
                e = pixmap_entry("ring", pix, x, y)
            new_rings[m] = e
            out.append(e)
        # arrows and leaders differ in direction and length from one to the next and from one drag step
        # to the next: they are drawn straight into the layer (only where it is redrawn), not rendered
        # into a pixmap first and blitted (~85 us per new one)
        for arrow in self.arrows:
            hit = arrows.get(id(arrow))  # build_labels hands out the same arrow object while it is unchanged
            if hit is None or hit[0] is not arrow:
                colour = arrow.colour
                x, y = arrow.base[0] * m11 + dx, arrow.base[1] * m22 + dy
                box = _arrow_bounds(arrow.direction).translated(x, y).toAlignedRect().adjusted(-1, -1, 1, 1)
                hit = (arrow, (("arrow", x, y, arrow.direction, colour.rgba()), box,
                               lambda p, o=QPointF(x, y), d=arrow.direction, c=colour: self._draw_arrow(p, o, d, c)))
            new_arrows[id(arrow)] = hit
            out.append(hit[1])
        for item in self._draw:
            es = labels.get(item)
            if es is None:
                ax, ay, x, y, w, h, leader, pix = item
                px, py = ax * m11 + dx, ay * m22 + dy
                es = []
                if leader:
                    ex, ey = _leader_end(x, y, w, h)
                    box = QRectF(px + min(ex, 0.0), py + min(ey, 0.0), abs(ex), abs(ey)).adjusted(-3, -3, 3, 3)
                    es.append((("leader", px, py, ex, ey), box.toAlignedRect(),
                               lambda p, px=px, py=py, ex=ex, ey=ey: self._draw_leader_at(p, px, py, ex, ey)))
                es.append(pixmap_entry("label", pix, px + x, py + y))
            new_labels[item] = es
            out.extend(es)
        self._entry_memo = (frame, new_rings, new_arrows, new_labels)
        self._marks_last = (frame, self.moved_points, self.arrows, self._draw, out)
        return out

    def _draw_ring(self, painter: QPainter) -> None:
        painter.setPen(self._ring_pen)
        painter.setBrush(Qt.NoBrush)
        r = theme.OVERLAY_SOLVED_POINT_PX
        painter.drawEllipse(QPointF(0.0, 0.0), r, r)

    def _paint_arrow(self, painter: QPainter, t: QTransform, arrow: AnchorArrow, dpr: float | None = None) -> None:
        colour = theme.OVERLAY_GREY if self.grey else arrow.colour
        base = t.map(QPointF(*arrow.base))
        if dpr is not None:  # on screen: arrows that did not change (most, during a drag) are blitted
            blit_cached(painter, base, dpr, ("anchor-arrow", arrow.direction, colour.rgba()), _arrow_bounds(arrow.direction),
                        lambda p: self._draw_arrow(p, QPointF(0.0, 0.0), arrow.direction, colour))
            return
        self._draw_arrow(painter, base, arrow.direction, colour)

    def _draw_arrow(self, painter: QPainter, base: QPointF, direction: tuple[float, float], colour: QColor) -> None:
        dx, dy = direction
        start = QPointF(base.x() + dx * MARKER_CLEAR_PX, base.y() + dy * MARKER_CLEAR_PX)
        tip = QPointF(base.x() + dx * theme.ANCHOR_ARROW_PX, base.y() + dy * theme.ANCHOR_ARROW_PX)
        hd = theme.ANCHOR_ARROW_HEAD_PX
        neck = QPointF(tip.x() - dx * hd, tip.y() - dy * hd)
        painter.setPen(self.pen_for(colour, theme.ANCHOR_ARROW_WIDTH_PX))
        painter.drawLine(start, neck)
        nx, ny = -dy, dx
        head = QPolygonF([tip, QPointF(neck.x() + nx * hd * 0.5, neck.y() + ny * hd * 0.5),
                          QPointF(neck.x() - nx * hd * 0.5, neck.y() - ny * hd * 0.5)])
        painter.setPen(self.pen_for(colour, 1.0))
        painter.setBrush(colour)
        painter.drawPolygon(head)
