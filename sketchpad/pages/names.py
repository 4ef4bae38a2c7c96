"""Point and rope names on a printed drawing, kept apart: a page cannot be zoomed to separate them.

On screen a point's name sits above and right of its marker and a rope's name beside its longest
piece; on a crowded page those may cover another marker or name.  Before the force labels are
placed, each point name takes the first free spot of four around its marker (above right, below
right, above left, below left); a rope name that still covers a name, a marker or a site feature's
name is left off the drawing (the rope is named in the key beside a drawing and in the report's
tables).  Only the offscreen scene a :class:`sketchpad.export.Drawing` owns is changed, never the canvas.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QFontMetricsF

from sketchpad import theme
from solver.model import Rig


def _spots(r: float, w: float, h: float, ascent: float) -> list[QRectF]:
    g = theme.LABEL_GAP_PX
    return [QRectF(r + g, -r - ascent, w, h), QRectF(r + g, r * 0.35, w, h),
            QRectF(-r - g - w, -r - ascent, w, h), QRectF(-r - g - w, r * 0.35, w, h)]


def declutter_names(scene, rig: Rig, k: float) -> int:
    """Move point names off each other and off markers at ``k`` px/m, and hide colliding rope names;
    returns how many rope names were left off."""
    fm = QFontMetricsF(theme.font())
    centres = {p.id: QPointF(p.x * k, -p.y * k) for p in rig.points}
    taken: list[QRectF] = []
    for p in rig.points:
        r = theme.POINT_RADIUS_PX.get(p.kind, 5.0) + 1
        c = centres[p.id]
        taken.append(QRectF(c.x() - r, c.y() - r, 2 * r, 2 * r))
    from sketchpad.pages.framing import feature_label_boxes

    taken += [QRectF(x * k + bx, y * k + by, bw, bh) for (x, y), (bx, by, bw, bh) in feature_label_boxes(scene, k)]
    for p in rig.points:
        item = scene.item_for(("point", p.id))
        if item is None or not item._label:
            continue
        c = centres[p.id]
        w = fm.horizontalAdvance(item._label)
        spots = _spots(item.radius, w, fm.height(), fm.ascent())
        own = QRectF(c.x() - item.radius - 1, c.y() - item.radius - 1, 2 * item.radius + 2, 2 * item.radius + 2)
        others = [t for t in taken if t != own]
        choice = next((s for s in spots if not any(s.translated(c).intersects(t) for t in others)), spots[0])
        if choice != item._label_rect:
            item.prepareGeometryChange()
            item._label_rect = QRectF(choice)
            item._baseline = QPointF(choice.left(), choice.top() + fm.ascent())
            m = theme.SELECTION_WIDTH_PX + 2
            item._bounds = item.marker_rect().adjusted(-m, -m, m, m).united(choice.adjusted(-3, -3, 3, 3))
            item.update()
        taken.append(choice.translated(c))
    bold = QFontMetricsF(theme.font(theme.SMALL_POINT_SIZE, bold=True))
    hidden = 0
    for r in rig.ropes:
        item = scene.item_for(("rope", r.id))
        pos, text = getattr(item, "_label_pos", None), getattr(item, "_label", "")
        if item is None or pos is None or not text:
            continue
        w = bold.horizontalAdvance(text)
        box = QRectF(pos.x() * k - w / 2 - 2, pos.y() * k - bold.ascent() - 2, w + 4, bold.height() + 4)
        if any(box.intersects(t) for t in taken):
            item._label = ""
            item.update()
            hidden += 1
        else:
            taken.append(box)
    return hidden


def name_boxes_of(scene, rig: Rig) -> list:
    """(scene point, pixel rect relative to it) of each point name as its item now draws it."""
    out = []
    for p in rig.points:
        item = scene.item_for(("point", p.id))
        if item is None or not item._label:
            continue
        r = item._label_rect
        out.append(((p.x, -p.y), (r.x(), r.y(), r.width(), r.height())))
    return out


__all__ = ["declutter_names", "name_boxes_of"]
