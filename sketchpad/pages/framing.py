"""What a printed drawing frames: the rig (its points and ropes with a margin) or the print frame the user set,
and a small locator inset showing where that frame lies on the whole site.

Scene coordinates are metres with y down (``sketchpad.geometry.to_scene``); the rig file's
``print_frame`` is in site metres (y north).  A frame is filled so the rig is as large as the
page allows, with ``LABEL_ROOM_PX`` of paper around it for the force labels; a label the placer
put outside the page is left off (and counted, so the page says the tables hold it) rather than cut.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPainter, QPainterPath, QPolygonF

from sketchpad import theme
from solver.model import Rig
from solver.result import Result

#: Paper kept around the framed rig for labels and arrows, px.
LABEL_ROOM_PX = 44.0
#: Margin around the rig's points, as a fraction of its larger side, and at least this many metres.
MARGIN_FRACTION, MARGIN_MIN_M = 0.06, 1.0
#: Smallest side of a framed rig, m (a single point still gets a readable frame).
MIN_SIDE_M = 4.0
#: The locator inset: fraction of the drawing's smaller side, and the largest size, px.
INSET_FRACTION, INSET_MAX_PX = 0.30, 170.0
#: The inset is drawn only when the site reaches this much beyond the frame (fraction of the frame's size).
INSET_WHEN_SITE_BEYOND = 0.15


@dataclass
class Fit:
    """Where the scene goes: ``source`` (scene metres) drawn into a target of ``size`` logical px."""

    source: QRectF
    px_per_m: float
    size: tuple[float, float]


def site_rect_of_frame(frame: tuple[float, float, float, float]) -> QRectF:
    """A print frame (x0, y0, x1, y1 site metres) as a scene rectangle."""
    x0, y0, x1, y1 = frame
    return QRectF(x0, -y1, x1 - x0, y1 - y0)


def frame_of_scene_rect(rect: QRectF) -> tuple[float, float, float, float]:
    """A scene rectangle as a print frame (x0, y0, x1, y1 site metres)."""
    return (rect.left(), -rect.bottom(), rect.right(), -rect.top())


def rig_frame(rig: Rig, result: Result | None = None) -> QRectF:
    """The scene rectangle a drawing frames: the rig's ``print_frame`` if set, else every point
    (as drawn and as solved) with a margin."""
    if rig.print_frame is not None:
        return site_rect_of_frame(rig.print_frame)
    xs = [p.x for p in rig.points]
    ys = [p.y for p in rig.points]
    if result is not None and result.ok:
        xs += [x for x, _ in result.points.values()]
        ys += [y for _, y in result.points.values()]
    if not xs:
        return QRectF(-10.0, -10.0, 20.0, 20.0)
    x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
    m = max(MARGIN_FRACTION * max(x1 - x0, y1 - y0), MARGIN_MIN_M)
    x0, x1, y0, y1 = x0 - m, x1 + m, y0 - m, y1 + m
    for lo, hi, axis in ((x0, x1, 0), (y0, y1, 1)):
        if hi - lo < MIN_SIDE_M:
            c = (lo + hi) / 2
            if axis == 0:
                x0, x1 = c - MIN_SIDE_M / 2, c + MIN_SIDE_M / 2
            else:
                y0, y1 = c - MIN_SIDE_M / 2, c + MIN_SIDE_M / 2
    return QRectF(x0, -y1, x1 - x0, y1 - y0)


def fit_frame(drawing, width: float, height: float):
    """Scale and source rectangle so ``rig_frame`` fills ``width`` x ``height`` px with room for labels;
    labels placed beyond the page are left off and counted in ``drawing.skipped``."""
    width, height = max(width, 40.0), max(height, 40.0)
    frame = rig_frame(drawing.rig, drawing.result)
    room = min(LABEL_ROOM_PX, 0.12 * min(width, height))
    k = min((width - 2 * room) / max(frame.width(), 1e-6), (height - 2 * room) / max(frame.height(), 1e-6))
    k = max(k, 1e-3)
    drawing._place(k)
    c = frame.center()
    w, h = width / k, height / k
    source = QRectF(c.x() - w / 2, c.y() - h / 2, w, h)
    drawing.skipped += hide_labels_outside(drawing.force_item.labels, source, k)
    drawing.force_item.refresh_rect(1.0 / k)
    return Fit(source, k, (width, height))


def feature_label_boxes(scene, k: float) -> list:
    """(scene point, pixel rect relative to it) of every shown site-feature label at ``k`` px/m, as Qt draws it
    (the label ignores the view's scale), so force labels keep off them."""
    from PySide6.QtGui import QTransform

    from sketchpad.items import FeatureItem

    view = QTransform.fromScale(k, k)
    out = []
    for item in scene.items():
        if not isinstance(item, FeatureItem) or not item.isVisible():
            continue
        for child in item.childItems():
            if not child.isVisible() or not hasattr(child, "text") or not child.text():
                continue
            r = child.deviceTransform(view).mapRect(child.boundingRect())
            out.append(((r.left() / k, r.top() / k), (0.0, 0.0, r.width(), r.height())))
    return out


def label_boxes_px(labels, source: QRectF, k: float) -> list[QRectF]:
    """Boxes of the placed labels in page px (origin at the drawing's top-left)."""
    out = []
    for lab in labels:
        if not lab.placed:
            continue
        x, y, w, h = lab.rect
        px, py = (lab.at[0] - source.left()) * k, (lab.at[1] - source.top()) * k
        out.append(QRectF(px + x, py + y, w, h))
    return out


def hide_labels_outside(labels, source: QRectF, k: float) -> int:
    """Unplace every label whose box is not wholly on the page; returns how many."""
    page = QRectF(0.0, 0.0, source.width() * k, source.height() * k).adjusted(-0.5, -0.5, 0.5, 0.5)
    hidden = 0
    for lab in labels:
        if not lab.placed:
            continue
        x, y, w, h = lab.rect
        px, py = (lab.at[0] - source.left()) * k, (lab.at[1] - source.top()) * k
        if not page.contains(QRectF(px + x, py + y, w, h)):
            lab.placed = False
            hidden += 1
    return hidden


# --- the locator inset -----------------------------------------------------------------------
def site_bounds(rig: Rig) -> QRectF:
    """Scene rectangle of everything on the site: points and feature outlines."""
    rect = QRectF()
    for p in rig.points:
        rect = rect.united(QRectF(p.x - 0.5, -p.y - 0.5, 1.0, 1.0))
    for f in rig.site.features:
        for x, y in f.coords:
            rect = rect.united(QRectF(x - 0.1, -y - 0.1, 0.2, 0.2))
    return rect


def needs_inset(rig: Rig, source: QRectF) -> bool:
    """True when the site reaches well beyond the printed part (the reader needs to see where it is)."""
    site = site_bounds(rig)
    if site.isNull():
        return False
    grow = INSET_WHEN_SITE_BEYOND * max(source.width(), source.height())
    return not source.adjusted(-grow, -grow, grow, grow).contains(site)


def inset_rect(target: QRectF, drawing) -> QRectF:
    """Where the inset goes: the corner of ``target`` covering the fewest points and labels."""
    fit = drawing.fit
    side = min(INSET_MAX_PX, INSET_FRACTION * min(target.width(), target.height()))
    site = site_bounds(drawing.rig).united(fit.source)
    aspect = site.width() / max(site.height(), 1e-6)
    w, h = (side, side / aspect) if aspect >= 1 else (side * aspect, side)
    pad = 6.0
    corners = [QRectF(target.right() - w - pad, target.bottom() - h - pad, w, h),
               QRectF(target.left() + pad, target.bottom() - h - pad, w, h),
               QRectF(target.right() - w - pad, target.top() + pad, w, h),
               QRectF(target.left() + pad, target.top() + pad, w, h)]
    k = fit.px_per_m
    boxes = [b.translated(target.left(), target.top()) for b in label_boxes_px(drawing.force_item.labels, fit.source, k)]
    pts = [QPointF(target.left() + (x - fit.source.left()) * k, target.top() + (-y - fit.source.top()) * k)
           for x, y in [(p.x, p.y) for p in drawing.rig.points]]

    def clutter(r: QRectF) -> float:
        grown = r.adjusted(-8, -8, 8, 8)
        return 10.0 * sum(grown.contains(p) for p in pts) + sum(
            (grown.intersected(b).width() * grown.intersected(b).height()) / 100.0 for b in boxes if grown.intersects(b))

    return min(corners, key=clutter)


INSET_FRAME = QColor("#c23b22")


def paint_locator(painter: QPainter, rect: QRectF, rig: Rig, source: QRectF) -> None:
    """The whole site small in ``rect`` (features, ropes as drawn, points) with the printed part outlined."""
    site = site_bounds(rig).united(source)
    k = min(rect.width() / max(site.width(), 1e-6), rect.height() / max(site.height(), 1e-6))
    ox = rect.left() + (rect.width() - site.width() * k) / 2 - site.left() * k
    oy = rect.top() + (rect.height() - site.height() * k) / 2 - site.top() * k

    def at(x: float, y_scene: float) -> QPointF:
        return QPointF(ox + x * k, oy + y_scene * k)

    painter.save()
    painter.setRenderHint(QPainter.Antialiasing, True)
    painter.setPen(theme.pixel_pen(theme.LEGEND_EDGE, 1.0))
    painter.setBrush(theme.LEGEND_BACK)
    painter.drawRect(rect.adjusted(-3, -3, 3, 3))
    painter.setClipRect(rect.adjusted(-3, -3, 3, 3))
    for f in rig.site.features:
        pts = [at(x, -y) for x, y in f.coords]
        if len(pts) < 2:
            continue
        painter.setPen(theme.pixel_pen(theme.FEATURE_EDGE.get(f.kind, theme.HUD_TEXT), 0.8))
        if f.polygon:
            painter.setBrush(theme.feature_brush(f.kind))
            painter.drawPolygon(QPolygonF(pts))
        else:
            painter.setBrush(Qt.NoBrush)
            path = QPainterPath(pts[0])
            for q in pts[1:]:
                path.lineTo(q)
            painter.drawPath(path)
    xy = {p.id: (p.x, -p.y) for p in rig.points}
    for i, r in enumerate(rig.ropes):
        painter.setPen(theme.pixel_pen(theme.rope_colour(i), 1.0))
        pts = [at(*xy[ps.at]) for ps in r.path if ps.at in xy]
        for a, b in zip(pts, pts[1:]):
            painter.drawLine(a, b)
    for p in rig.points:
        painter.setPen(Qt.NoPen)
        painter.setBrush(theme.POINT_FILL.get(p.kind, theme.HUD_TEXT))
        painter.drawEllipse(at(p.x, -p.y), 1.8, 1.8)
    frame = QRectF(at(source.left(), source.top()), at(source.right(), source.bottom()))
    pen = theme.pixel_pen(INSET_FRAME, 1.6, Qt.DashLine)
    painter.setPen(pen)
    painter.setBrush(Qt.NoBrush)
    painter.drawRect(frame)
    painter.setClipping(False)
    painter.setFont(theme.page_font(6.5, italic=True))
    painter.setPen(theme.HUD_TEXT)
    painter.drawText(QPointF(rect.left(), rect.bottom() + 12), "whole site; dashed: this drawing")
    painter.restore()


def paint_inset(painter: QPainter, target: QRectF, drawing) -> QRectF | None:
    """The locator inset in the emptiest corner of ``target`` when the site reaches beyond the drawing."""
    if drawing.fit is None or not needs_inset(drawing.rig, drawing.fit.source):
        return None
    r = inset_rect(target, drawing).adjusted(0, 0, 0, -12)
    paint_locator(painter, r, drawing.rig, drawing.fit.source)
    return r


def frame_in_px(frame: QRectF, source: QRectF, k: float) -> QRectF:
    """A scene rectangle in page px of a drawing fitted to ``source`` at ``k`` px/m."""
    return QRectF((frame.left() - source.left()) * k, (frame.top() - source.top()) * k,
                  frame.width() * k, frame.height() * k)


__all__ = ["Fit", "rig_frame", "fit_frame", "feature_label_boxes", "paint_inset", "paint_locator", "needs_inset", "site_rect_of_frame",
           "frame_of_scene_rect", "hide_labels_outside", "label_boxes_px"]
