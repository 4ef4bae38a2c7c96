"""A cached image of everything that stays still during a drag, so a drag frame blits it and draws only what moves.

During a drag the same few items change every frame (the dragged point, the ropes and force at
it) while the paper, grid and the other ~150 items stay put, yet Qt draws all of them again.
:class:`DragLayer` notices a stable set of changing items (the same set two frames running at
the same zoom, pan and size), paints the background and every other item below the overlay
into one viewport-sized image, and from then on each frame is that image plus the changing
items, the overlay and tool previews, and the HUD, drawn in Qt's stacking order.

Correctness (a stale pixel would mislead a rigger): every item below the overlay carries a
version bumped on each change Qt or our code makes to it (:class:`Versioned`), or a fingerprint
of what it shows; a still item whose version changed, an item added or removed, or a new view
transform, size, grid or render hints drops the image.  Still items above a changing one in the
stacking order whose device boxes overlap it (or overlap such an item) go into small cached run
images laid down after it, so nothing is painted out of order.  Items are painted as Qt paints
them: device transform, effective opacity, a fresh painter state, and an item with a device cache
drawn into a transparent image over its device box first, as Qt's cache is (text and edges round
differently otherwise).  Where Qt would cache only the visible part of an item (one reaching well
past the view) the layer is off; so it is at a device pixel ratio other than 1.  The frame equals
Qt's own to 8-bit rounding of compositing, 2/255 at most at anti-aliased edges (tested).
"""

from __future__ import annotations

import logging

from PySide6.QtCore import QRect, Qt
from PySide6.QtGui import QImage, QPainter, QTransform
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGraphicsPixmapItem,
    QGraphicsSimpleTextItem,
    QStyle,
    QStyleOptionGraphicsItem,
)

from sketchpad import theme

log = logging.getLogger(__name__)

#: Paint normally when more than this share of the items below the overlay would be drawn live.
MAX_LIVE_FRACTION = 0.4
#: Qt caches an item wider or taller than this many viewports only where it is visible (qgraphicsscene.cpp,
#: "partial cache exposure"), and brush patterns then align to that part: such an item turns the layer off.
PARTIAL_CACHE_FACTOR = 1.1
#: Device px around an item's bounding box counted as its own (anti-aliased edges).
EDGE_PAD_PX = 2

_ALL_HINTS = (QPainter.Antialiasing | QPainter.TextAntialiasing | QPainter.SmoothPixmapTransform
              | QPainter.LosslessImageRendering | QPainter.VerticalSubpixelPositioning | QPainter.NonCosmeticBrushPatterns)


class Versioned:
    """Mixin (before the Qt base) giving a graphics item a ``_ver`` bumped on every change: our code's
    ``update()`` and ``prepareGeometryChange()`` and every Qt ``itemChange`` (selection, position,
    transform, visibility, opacity, z, flags, scene)."""

    _ver = 0

    def update(self, *args) -> None:
        self._ver += 1
        super().update(*args)

    def prepareGeometryChange(self) -> None:  # noqa: N802
        self._ver += 1
        super().prepareGeometryChange()

    def itemChange(self, change, value):  # noqa: N802
        self._ver += 1
        return super().itemChange(change, value)


def item_version(item: QGraphicsItem):
    """What fixes ``item``'s pixels besides the view: its version, a fingerprint, or None (unknown)."""
    if isinstance(item, Versioned):
        return item._ver
    if isinstance(item, QGraphicsSimpleTextItem):  # a feature's label
        p, t = item.pos(), item.sceneTransform()
        return ("text", item.text(), p.x(), p.y(), t.m11(), t.m22(), t.dx(), t.dy(), item.brush().color().rgba(),
                item.pen().color().rgba(), item.pen().widthF(), item.font().toString(), item.isVisible(),
                item.effectiveOpacity(), item.zValue(), item.flags().value)
    if isinstance(item, QGraphicsPixmapItem):  # the site picture
        t = item.sceneTransform()
        return ("pixmap", item.pixmap().cacheKey(), t.m11(), t.m12(), t.m21(), t.m22(), t.dx(), t.dy(),
                item.offset().x(), item.offset().y(), item.transformationMode().value, item.isVisible(),
                item.effectiveOpacity(), item.zValue(), item.flags().value)
    return None


def paint_item(painter: QPainter, item: QGraphicsItem, view_transform, widget, hints) -> None:
    """Paint ``item`` as Qt paints it for the view: its device transform, effective opacity and a fresh
    state; an item with a device-coordinate cache is drawn as Qt draws its cache, into a transparent
    image over its device box grown by a pixel, which is then blitted (text and anti-aliased edges
    round differently when drawn straight onto the frame)."""
    painter.save()
    painter.setRenderHints(_ALL_HINTS, False)
    painter.setRenderHints(hints, True)
    base = painter.worldTransform()  # identity, or a whole-pixel shift into a part of the viewport
    t = item.deviceTransform(view_transform)
    painter.setOpacity(item.effectiveOpacity())
    opt = QStyleOptionGraphicsItem()
    opt.state = QStyle.State_None
    if item.isEnabled():
        opt.state |= QStyle.State_Enabled
    if item.isSelected():
        opt.state |= QStyle.State_Selected
    rect = item.boundingRect()
    opt.exposedRect = rect
    opt.rect = rect.toAlignedRect()
    opt.palette = widget.palette()
    if item.cacheMode() == QGraphicsItem.DeviceCoordinateCache and t.type().value <= QTransform.TxScale.value:
        box = t.mapRect(rect).toRect().adjusted(-1, -1, 1, 1)  # as qgraphicsscene.cpp sizes the cache
        if box.width() > 0 and box.height() > 0:
            cache = QImage(box.width(), box.height(), QImage.Format_ARGB32_Premultiplied)
            cache.fill(Qt.transparent)
            cp = QPainter(cache)
            cp.setRenderHints(hints, True)
            cp.setWorldTransform(t * QTransform.fromTranslate(-box.x(), -box.y()))
            item.paint(cp, opt, widget)
            cp.end()
            painter.setWorldTransform(base)
            painter.drawImage(box.topLeft(), cache)
    else:
        painter.setWorldTransform(t * base)
        item.paint(painter, opt, widget)
    painter.restore()


def stacking_order(scene) -> list:
    """The scene's top-level items bottom first, as Qt paints them: by z, equal z in insertion order
    (``QGraphicsScene.items`` of an unindexed scene returns insertion order, whatever sort is asked)."""
    return sorted((it for it in scene.items(Qt.AscendingOrder) if it.parentItem() is None), key=QGraphicsItem.zValue)


def _with_children(item: QGraphicsItem) -> list:
    """``item`` and its descendants in paint order: children behind it (negative z or stacked behind) first."""
    kids = sorted(item.childItems(), key=QGraphicsItem.zValue)
    behind = [k for k in kids if k.zValue() < 0 or k.flags() & QGraphicsItem.ItemStacksBehindParent]
    out = []
    for k in behind:
        out.extend(_with_children(k))
    out.append(item)
    for k in kids:
        if k not in behind:
            out.extend(_with_children(k))
    return out


def _partly_cached(item: QGraphicsItem, view_transform, viewport) -> bool:
    """Whether Qt keeps only the visible part of ``item``'s device cache (see ``PARTIAL_CACHE_FACTOR``), or
    caches it in item coordinates: either way :func:`paint_item` would not draw it as Qt does."""
    if item.cacheMode() == QGraphicsItem.NoCache or not _drawn(item):
        return False
    if item.cacheMode() == QGraphicsItem.ItemCoordinateCache:
        return True  # drawn at the cache's own resolution: not copied here (no item of ours uses it)
    box = item.deviceTransform(view_transform).mapRect(item.boundingRect())
    return box.width() + 2 > PARTIAL_CACHE_FACTOR * viewport.width() or box.height() + 2 > PARTIAL_CACHE_FACTOR * viewport.height()


def _drawn(item: QGraphicsItem) -> bool:
    return (item.isVisible() and item.effectiveOpacity() > 0.0
            and not (item.flags() & QGraphicsItem.ItemHasNoContents))


class DragLayer:
    """The still image of one view and what it was built from; :meth:`paint` draws a frame with it."""

    def __init__(self) -> None:
        self.image: QImage | None = None
        self._frame: tuple | None = None  # view transform, size, grid, hints the image was built at
        self._order: list | None = None  # items below the overlay, in stacking order, at the build
        self._still: list[int] = []  # indices in ``_order`` of the items painted into the image
        self._built: list = []  # versions of ``_order`` at the build
        self._stack: tuple | None = None  # (scene items, their z, below, top) of the last frame
        self._steps: list = []  # above the image in stacking order: ("live", item) drawn every frame, ("seg", (image, top-left))
        self._last: tuple | None = None  # (frame, items, versions) of the last frame
        self._last_moved: frozenset | None = None
        self.builds = 0  # counters for tests and benchmarks
        self.frames = 0

    def drop(self) -> None:
        """Forget the image (the next frames are painted by Qt until a drag pattern shows again)."""
        self.image, self._frame, self._order, self._still, self._built, self._steps = None, None, None, [], [], []

    def paint(self, view, frame: tuple) -> bool:
        """Paint ``view``'s viewport with the still image when it holds; False: the caller paints normally.

        ``frame`` names everything besides the items that fixes the background (transform, size,
        grid, render hints, device pixel ratio).
        """
        raw = view.scene().items(Qt.AscendingOrder)
        zs = [it.zValue() for it in raw]
        stack = self._stack
        if stack is not None and stack[0] == raw and stack[1] == zs:  # no item added, removed or restacked
            below, top = stack[2], stack[3]
        else:
            below, top = [], []
            for root in stacking_order(view.scene()):
                (below if root.zValue() < theme.Z_OVERLAY else top).extend(_with_children(root))
            self._stack = (raw, zs, below, top)
        versions = [it._ver if isinstance(it, Versioned) else item_version(it) for it in below]
        last, self._last = self._last, (frame, below, versions)
        if any(v is None for v in versions):
            self.drop()
            return False
        vt = view.viewportTransform()
        vp = view.viewport()
        if any(_partly_cached(it, vt, vp) for it in top):  # drawn here every frame, as Qt draws them
            self.drop()
            return False
        if self.image is not None:
            built = self._built
            if frame == self._frame and below is self._order and all(versions[i] == built[i] for i in self._still):
                self._paint_frame(view, below, top)
                return True
            self.drop()
        # a drag: the same items changed since the last frame as in the frame before, at the same view
        if last is None or last[0] != frame or last[1] != below:
            self._last_moved = None
            return False
        moved = frozenset(i for i, (v0, v1) in enumerate(zip(last[2], versions)) if v0 != v1)
        if not moved:  # a frame for the overlay alone (a solve arriving) keeps the drag's pattern
            return False
        stable, self._last_moved = moved == self._last_moved, moved
        if not stable:
            return False
        plan = self._closure(view, below, moved)
        if plan is None:
            return False
        self._build(view, frame, below, versions, plan)
        self._paint_frame(view, below, top)
        return True

    def _closure(self, view, below: list, moved: frozenset) -> list | None:
        """Stacking-order plan of the frame: ("live", item) for each moved item and ("seg", [items]) for each run
        of still items that lie above a moved one and overlap it (or overlap such an item); None: too many."""
        vt = view.viewportTransform()
        vp = view.viewport()
        plan: list = []
        boxes: list[QRect] = []
        run: list = []
        n_live = 0
        for i, it in enumerate(below):
            if not _drawn(it):
                if i in moved:  # hidden now: nothing to draw, but a change of it must not stale the image
                    plan.append(("live", it))
                continue
            box = it.deviceTransform(vt).mapRect(it.boundingRect()).toAlignedRect().adjusted(
                -EDGE_PAD_PX, -EDGE_PAD_PX, EDGE_PAD_PX, EDGE_PAD_PX)
            if _partly_cached(it, vt, vp):
                return None  # Qt caches only the visible part of it, hatching aligned to that part: not copied here
            if i in moved:
                if run:
                    plan.append(("seg", run))
                    run = []
                plan.append(("live", it))
                boxes.append(box)
                n_live += 1
            elif boxes and any(box.intersects(b) for b in boxes):
                run.append((it, box))
                boxes.append(box)
        if run:
            plan.append(("seg", run))
        if n_live > MAX_LIVE_FRACTION * max(1, len(below)):
            return None
        return plan

    def _build(self, view, frame: tuple, below: list, versions: list, plan: list) -> None:
        vp = view.viewport()
        image = self.image
        if image is None or image.width() != vp.width() or image.height() != vp.height():
            image = QImage(max(1, vp.width()), max(1, vp.height()), QImage.Format_RGB32)  # as the backing store: a plain copy
        vt = view.viewportTransform()
        hints = view.renderHints()
        live = {it for kind, it in plan if kind == "live"}
        upper = {it for kind, run in plan if kind == "seg" for it, _box in run}
        p = QPainter(image)
        p.setRenderHints(_ALL_HINTS, False)
        p.setRenderHints(hints, True)
        p.setWorldTransform(vt)
        view.drawBackground(p, view.mapToScene(vp.rect()).boundingRect())
        p.resetTransform()
        still = []
        for i, it in enumerate(below):
            if it in live:
                continue
            still.append(i)
            if it not in upper and _drawn(it):
                paint_item(p, it, vt, vp, hints)
        p.end()
        steps = []
        area = QRect(0, 0, vp.width(), vp.height())
        for kind, what in plan:
            if kind == "live":
                steps.append(("live", what))
                continue
            r = QRect()
            for _it, box in what:
                r = r.united(box)
            r = r.intersected(area)
            if r.isEmpty():
                continue
            seg = QImage(r.width(), r.height(), QImage.Format_ARGB32_Premultiplied)
            seg.fill(Qt.transparent)
            sp = QPainter(seg)
            sp.setWorldTransform(QTransform.fromTranslate(-r.x(), -r.y()))  # device px of the viewport -> image
            for it, _box in what:
                paint_item(sp, it, vt, vp, hints)
            sp.end()
            steps.append(("seg", (seg, r.topLeft())))
        self.image, self._frame, self._order, self._still, self._built, self._steps = image, frame, below, still, versions, steps
        self.builds += 1

    def _paint_frame(self, view, below: list, top: list) -> None:
        vp = view.viewport()
        vt = view.viewportTransform()
        hints = view.renderHints()
        p = QPainter(vp)
        p.setCompositionMode(QPainter.CompositionMode_Source)  # the image is opaque (paper under everything): a copy
        p.drawImage(0, 0, self.image)
        p.setCompositionMode(QPainter.CompositionMode_SourceOver)
        for kind, what in self._steps:
            if kind == "seg":
                p.drawImage(what[1], what[0])
            elif _drawn(what):
                paint_item(p, what, vt, vp, hints)
        for it in top:
            if _drawn(it):
                paint_item(p, it, vt, vp, hints)
        p.setRenderHints(_ALL_HINTS, False)
        p.setRenderHints(hints, True)
        p.setWorldTransform(vt)
        view.drawForeground(p, view.mapToScene(vp.rect()).boundingRect())
        p.end()
        self.frames += 1


__all__ = ["DragLayer", "Versioned", "item_version", "paint_item"]
