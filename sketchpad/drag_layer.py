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
transform, size, grid or render hints drops the image.

Bookkeeping in proportion to what changed: a frame does not read the whole scene when it need
not.  Each version bump is logged for every layer (the item's id), so a frame reads the versions
of the logged items only, plus the fingerprints of the few items without a version (the site
picture, feature names).  The stacking order found by the last full read (:func:`stacking_order`,
a query over the whole scene) is kept while a structure counter is unchanged: it is bumped by a
:class:`Tracked` item's scene, parent, child, z, flags, visibility or opacity change (all reach
``itemChange`` whoever makes them) or ``stackBefore``, and by the scene's own adds and removes
(``SketchScene`` says ``tracks_structure``).  Only when the scene says so and every item in it is
tracked may a frame skip the full read; an untracked item (a tool's preview), more logged changes
than the log holds, or any bump reads it all again.  Not seen: an item's C++ object destroyed while
in the scene (``shiboken6.delete``; nothing here does that).

Still items above a changing one in the stacking order whose device boxes overlap it (or overlap
such an item) go into small cached run images laid down after it, so nothing is painted out of
order.  Items are painted as Qt paints them: device transform, effective opacity, a fresh painter
state, and a still item with a device cache drawn into a transparent image over its device box
first, as Qt's cache is (text and edges round differently otherwise).  A moving item is drawn
straight onto the frame: a cache image of it would be thrown away each frame, and its pixels stay
within the same 2/255 of Qt's (tested; our items draw their text from cached pixmaps either way).
Where Qt would cache only the visible part of an item (one reaching well past the view) the layer
is off; so it is at a device pixel ratio other than 1.  The frame equals Qt's own to 8-bit
rounding of compositing, 2/255 at most at anti-aliased edges (tested).

Damage: Qt's raster backing store keeps the last frame's pixels, so a frame painted into it right
after one of ours needs redrawing only where the two differ.  Each frame on screen records what
fixes its pixels beyond the still image: the moving items' versions and device boxes, the items
at and above the overlay (version and box; the force overlay instead says where its retained
layers were patched, ``ForceItem.prepare_retained`` before the clip is set), the HUD parts with
a key of what they show (``SketchView.foreground_rects``) and every widget Qt paints over the
viewport (each frame, so always redrawn: a translucent banner would be laid down twice).  The
next frame redraws, clipped to the union of what differs, exactly what a whole frame draws
there.  Only when the painter's device is the window's backing store (its image, size and the
viewport's place in it as at the last frame: a ``grab`` or ``render`` into a pixmap gets a whole
frame), the still image, transform, size and hints are those of the last frame, the last paint
was one of ours covering the viewport (any paint by Qt itself forgets it), and the paint event's
region covers the damage.  The backing store after many such frames equals a fresh paint (tested
on the store's own pixels).
"""

from __future__ import annotations

import logging
import weakref

import shiboken6
from PySide6.QtCore import QPoint, QRect, QRectF, Qt
from PySide6.QtGui import QImage, QPainter, QRegion, QTransform
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGraphicsPixmapItem,
    QGraphicsSimpleTextItem,
    QStyle,
    QStyleOptionGraphicsItem,
    QWidget,
)

from sketchpad import theme
from sketchpad.widgets_over import WidgetsOver

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


#: Item changes that can alter a scene's item set or stacking order (Qt sends each through ``itemChange``).
_STRUCTURAL = frozenset({
    QGraphicsItem.ItemSceneChange, QGraphicsItem.ItemSceneHasChanged, QGraphicsItem.ItemParentChange,
    QGraphicsItem.ItemParentHasChanged, QGraphicsItem.ItemChildAddedChange, QGraphicsItem.ItemChildRemovedChange,
    QGraphicsItem.ItemZValueChange, QGraphicsItem.ItemZValueHasChanged, QGraphicsItem.ItemFlagsChange,
    QGraphicsItem.ItemFlagsHaveChanged,
    # Qt's query leaves hidden and fully transparent items out, so :func:`stacking_order` places them by z alone:
    # once shown they need placing again
    QGraphicsItem.ItemVisibleHasChanged, QGraphicsItem.ItemOpacityHasChanged})

#: Bumped on every change that may alter any scene's item set or stacking order that this module hears of:
#: a tracked item's structural ``itemChange`` or ``stackBefore``, and the adds and removes of a scene that
#: says ``tracks_structure`` (:func:`note_structure_change`).  A layer whose scene holds tracked items only
#: and that saw this counter unchanged knows the stacking order it found last is still Qt's.
_structure = [0]
#: Per live :class:`DragLayer` (by id): the ids of ``Versioned`` items whose version changed since its last frame.
_logs: dict[int, set] = {}
#: In a log: more ids came than ``MAX_LOGGED`` (nobody painted for long): the next frame looks at every item.
OVERFLOW = -1
MAX_LOGGED = 4096


def note_structure_change() -> None:
    """Say that a scene's item set or stacking order may have changed (a scene's addItem, removeItem, ...)."""
    _structure[0] += 1


def _note(item) -> None:
    k = id(item)
    for log in _logs.values():
        log.add(k)
        if len(log) > MAX_LOGGED:
            log.clear()
            log.add(OVERFLOW)


class Tracked:
    """Mixin (before the Qt base) telling this module of every change of a graphics item that may alter the
    scene's item set or stacking order: its scene, parent, children, z and flags (Qt sends each through
    ``itemChange``, for any caller) and ``stackBefore`` (which Qt does not).  What it shows is not tracked:
    a ``Tracked`` item that is not :class:`Versioned` is fingerprinted every frame (:func:`item_version`)."""

    def itemChange(self, change, value):  # noqa: N802
        if change in _STRUCTURAL:
            _structure[0] += 1
        return super().itemChange(change, value)

    def stackBefore(self, sibling) -> None:  # noqa: N802
        _structure[0] += 1
        super().stackBefore(sibling)


class Versioned(Tracked):
    """Mixin (before the Qt base) giving a graphics item a ``_ver`` bumped on every change: our code's
    ``update()`` and ``prepareGeometryChange()`` and every Qt ``itemChange`` (selection, position,
    transform, visibility, opacity, z, flags, scene); each bump is also logged for every drag layer
    (:func:`_note`), so a frame learns what changed without reading every item's version."""

    _ver = 0

    def update(self, *args) -> None:
        self._ver += 1
        _note(self)
        super().update(*args)

    def prepareGeometryChange(self) -> None:  # noqa: N802
        self._ver += 1
        _note(self)
        super().prepareGeometryChange()

    def itemChange(self, change, value):  # noqa: N802
        self._ver += 1
        _note(self)
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


def paint_item(painter: QPainter, item: QGraphicsItem, view_transform, widget, hints, direct: bool = False) -> None:
    """Paint ``item`` as Qt paints it for the view: its device transform, effective opacity and a fresh
    state; an item with a device-coordinate cache is drawn as Qt draws its cache, into a transparent
    image over its device box grown by a pixel, which is then blitted (text and anti-aliased edges
    round differently when drawn straight onto the frame), unless ``direct`` (a moving item, whose
    image would be made and thrown away every frame: 8-bit rounding at edges only, 2/255 at most)."""
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
    if not direct and item.cacheMode() == QGraphicsItem.DeviceCoordinateCache and t.type().value <= QTransform.TxScale.value:
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


#: A scene rect holding every item (an empty bounding rect counts as a point where it is).
_EVERYWHERE = QRectF(-1e15, -1e15, 2e15, 2e15)


def stacking_order(scene) -> list:
    """The scene's top-level items bottom first, as Qt paints them: by z, equal z in insertion order.

    Qt sorts a query by area by its stacking order; ``QGraphicsScene.items()`` of an unindexed scene
    returns its index's list, whose order is no longer the insertion order once an item was removed
    (seen after a drag step added a point and the next took it away), so it cannot be used here.  An
    item the query misses (none should) is put in by z alone."""
    ordered = [it for it in scene.items(_EVERYWHERE, Qt.IntersectsItemBoundingRect, Qt.AscendingOrder)
               if it.parentItem() is None]
    everything = [it for it in scene.items() if it.parentItem() is None]
    if len(ordered) != len(everything):
        seen = set(map(id, ordered))
        ordered += [it for it in everything if id(it) not in seen]
    return sorted(ordered, key=QGraphicsItem.zValue)  # stable: equal z keeps Qt's order


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
        self._still_set: frozenset[int] = frozenset()
        # (below, top, scene, _structure at the scan, {id: index in below} and indices of the items fingerprinted
        # every frame -- both None when the scan must be done every frame) of the last scan
        self._stack: tuple | None = None
        self._steps: list = []  # above the image in stacking order: ("live", item) drawn every frame, ("seg", (image, top-left))
        self._last: tuple | None = None  # (frame, items, versions) of the last frame
        self._last_moved: frozenset | None = None
        self._moved_before: frozenset | None = None  # the moved set of the frame before the last one
        self._screen: tuple | None = None  # (key, record) of the frame the backing store holds, if painted here
        self.builds = 0  # counters for tests and benchmarks
        self.frames = 0
        self.damage_frames = 0  # frames that redrew only where they differ from the last one
        self.last_damage: QRegion | None = None  # what the last of them redrew
        self.scans = 0  # frames that read the whole scene (the stacking order or every version could not be known)
        self._log: set = set()  # ids of Versioned items changed since the last frame (filled by ``_note``)
        self._since_build: set[int] = set()  # indices in ``_order`` whose version may differ from ``_built``
        self._partly: dict = {}  # id -> (key, item, answer) of :meth:`_top_partly_cached`
        self._widgets: WidgetsOver | None = None  # the widgets over the viewport, kept until a widget event
        _logs[id(self)] = self._log
        weakref.finalize(self, _logs.pop, id(self), None)

    def forget_screen(self) -> None:
        """The viewport's pixels on screen may no longer be a frame of this layer: the next frame is painted whole."""
        self._screen = None

    def painted_by_qt(self, vp: QWidget) -> None:
        """Qt paints this frame of ``vp`` (from its paint event): if into the backing store, the screen is no longer
        a frame of this layer (a ``grab`` into a pixmap leaves it as it is)."""
        if self._screen is None:
            return
        p = QPainter(vp)
        on_screen = _store_key(vp, p) is not None
        p.end()
        if on_screen:
            self._screen = None

    def drop(self) -> None:
        """Forget the image (the next frames are painted by Qt until a drag pattern shows again)."""
        self.image, self._frame, self._order, self._still, self._built, self._steps = None, None, None, [], [], []

    def paint(self, view, frame: tuple, region: QRegion | None = None) -> bool:
        """Paint ``view``'s viewport with the still image when it holds; False: the caller paints normally.

        ``frame`` names everything besides the items that fixes the background (transform, size,
        grid, render hints, device pixel ratio); ``region`` is the paint event's (None: all of it).
        """
        painted = self._paint(view, frame, region)
        if not painted:
            self._screen = None  # Qt paints this frame
        return painted

    def _paint(self, view, frame: tuple, region: QRegion | None) -> bool:
        scene = view.scene()
        log = self._log
        stack, last = self._stack, self._last
        if (stack is not None and stack[3] == _structure[0] and stack[2] is scene and stack[4] is not None
                and last is not None and last[1] is stack[0] and OVERFLOW not in log):
            # nothing added, removed or restacked (every item tracked, the counter unchanged): read only the
            # versions that changed (logged) and the fingerprints of items without a version
            below, top, _scene, _serial, index, fingerprinted = stack
            changed = [index[k] for k in log if k in index]
            log.clear()
            changed.extend(fingerprinted)
            prev = last[2]
            versions = list(prev)
            for i in changed:
                it = below[i]
                versions[i] = it._ver if isinstance(it, Versioned) else item_version(it)
            moved_now = frozenset(i for i in changed if versions[i] != prev[i])
            unknown = any(versions[i] is None for i in changed)  # only fingerprinted items can be None, all in ``changed``
        else:
            log.clear()  # before reading: a change from here on is seen by the next frame
            below, top = self._scan(scene)
            versions = [it._ver if isinstance(it, Versioned) else item_version(it) for it in below]
            moved_now = None  # not known: computed from the whole lists when needed
            self._since_build = set(range(len(below)))
            unknown = any(v is None for v in versions)
        self._last = (frame, below, versions)
        if unknown:
            self.drop()
            return False
        vt = view.viewportTransform()
        vp = view.viewport()
        if self._top_partly_cached(top, frame, vt, vp):  # drawn here every frame, as Qt draws them
            self.drop()
            return False
        if moved_now is not None:
            self._since_build.update(moved_now)
        if self.image is not None:
            built, still = self._built, self._still_set
            if frame == self._frame and below is self._order and all(
                    versions[i] == built[i] for i in self._since_build if i in still):
                self._since_build.clear()  # every still item is as built: from now on only what changes is looked at
                self._paint_frame(view, below, top, region)
                return True
            self.drop()
        # a drag: the same items changed since the last frame as in the frame before, at the same view
        if last is None or last[0] != frame or (last[1] is not below and last[1] != below):
            self._last_moved = self._moved_before = None
            return False
        if moved_now is not None:
            moved = moved_now
        else:
            moved = frozenset(i for i, (v0, v1) in enumerate(zip(last[2], versions)) if v0 != v1)
        if not moved:  # a frame for the overlay alone (a solve arriving) keeps the drag's pattern
            return False
        # stable: the same items as in the frame before, or (only while the scene says its free points follow each
        # drag step's solve, ``SketchScene.points_follow_solve``) a drag whose frames alternate between two sets (the
        # mouse move's frame moves the dragged point, its solve's frame the free points that follow the solve:
        # a boat in the current) with the set of two frames before, the two sharing an item (the rope between
        # them) and the items of one set alone drawing live as Qt draws them (``paints_alike_live``: ropes, points,
        # rings; not a hatched zone); the still image then leaves out both sets
        last_moved, before = self._last_moved, self._moved_before
        self._last_moved, self._moved_before = moved, last_moved
        if moved == last_moved:
            pass
        elif (getattr(scene, "points_follow_solve", False) and before is not None and moved == before
              and last_moved is not None and moved & last_moved
              and all(getattr(below[i], "paints_alike_live", False) for i in moved ^ last_moved)):
            moved = moved | last_moved
        else:
            return False
        plan = self._closure(view, below, moved)
        if plan is None:
            return False
        self._build(view, frame, below, versions, plan)
        self._paint_frame(view, below, top, region)
        return True

    def _top_partly_cached(self, top: list, frame: tuple, vt, vp) -> bool:
        """Whether an item at or above the overlay is cached by Qt only in part (:func:`_partly_cached`).

        A top-level ``Versioned`` item's answer is kept while its version, cache mode and the view
        (``frame``: transform and size) are: its box, visibility, opacity and flags change only with
        its version; its cache mode is read each time (``setCacheMode`` is no item change)."""
        memo, known = self._partly, {}
        for it in top:
            if isinstance(it, Versioned) and it.parentItem() is None:
                key = (frame, it._ver, it.cacheMode())
                got = memo.get(id(it))
                if got is not None and got[0] == key and got[1] is it:
                    part = got[2]
                else:
                    part = _partly_cached(it, vt, vp)
                known[id(it)] = (key, it, part)
            else:
                part = _partly_cached(it, vt, vp)
            if part:
                self._partly = known
                return True
        self._partly = known
        return False

    def _scan(self, scene) -> tuple[list, list]:
        """The items below the overlay and at or above it, in Qt's stacking order, read from the whole scene.

        The very lists of the last scan when they hold the same items in the same order.  The stack also notes
        whether later frames may skip the scan: when ``scene`` says it ``tracks_structure`` and every item in
        it is :class:`Tracked`, any change of its item set or stacking order bumps ``_structure`` (an item added
        to or taken from the scene goes through the scene's own methods or a tracked parent's ``itemChange``),
        and every item's pixels are told by a logged version or a fingerprint read every frame."""
        self.scans += 1
        serial = _structure[0]
        below, top = [], []
        for root in stacking_order(scene):
            (below if root.zValue() < theme.Z_OVERLAY else top).extend(_with_children(root))
        stack = self._stack
        if stack is not None and stack[2] is scene and stack[0] == below and stack[1] == top:
            below, top = stack[0], stack[1]  # the same items in the same order: the still image may be kept
        index = fingerprinted = None
        if getattr(scene, "tracks_structure", False) and all(isinstance(it, Tracked) for it in below + top):
            index = {id(it): i for i, it in enumerate(below)}
            fingerprinted = [i for i, it in enumerate(below) if not isinstance(it, Versioned)]
        self._stack = (below, top, scene, serial, index, fingerprinted)
        return below, top

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
        self._still_set, self._since_build = frozenset(still), set()
        self.builds += 1

    def _paint_frame(self, view, below: list, top: list, region: QRegion | None) -> None:
        vp = view.viewport()
        vt = view.viewportTransform()
        hints = view.renderHints()
        p = QPainter(vp)
        damage = None
        store = _store_key(vp, p)
        if store is not None:  # on screen: what changed since the frame the backing store holds?
            last, self._screen = self._screen, None
            whole = QRegion(0, 0, vp.width(), vp.height())
            full_event = region is None or whole.subtracted(region).isEmpty()
            key = (store, self._frame, self.builds)
            record = self._record(view, vt, top)
            if record is not None and last is not None and last[0] == key and last[1][0] is top:
                damage = _changed(last[1], record).intersected(whole)
                if not full_event and not damage.subtracted(region).isEmpty():
                    damage = None  # the event repaints less than changed: the frame is whole inside it only
            if record is not None and (full_event or damage is not None):
                self._screen = (key, record)  # every pixel of the viewport is now this frame's
        if damage is not None:
            self.damage_frames += 1
            self.last_damage = damage
            if damage.isEmpty():
                p.end()
                self.frames += 1
                return
            p.setCompositionMode(QPainter.CompositionMode_Source)  # the image is opaque (paper under everything): a copy
            for r in damage:
                p.drawImage(r.topLeft(), self.image, r)
            p.setCompositionMode(QPainter.CompositionMode_SourceOver)
            p.setClipRegion(damage)  # everything else is as the last frame left it
        else:
            p.setCompositionMode(QPainter.CompositionMode_Source)
            p.drawImage(0, 0, self.image)
            p.setCompositionMode(QPainter.CompositionMode_SourceOver)
        for kind, what in self._steps:
            if kind == "seg":
                p.drawImage(what[1], what[0])
            elif _drawn(what):
                paint_item(p, what, vt, vp, hints, direct=True)
        for it in top:
            if _drawn(it):
                paint_item(p, it, vt, vp, hints)
        p.setRenderHints(_ALL_HINTS, False)
        p.setRenderHints(hints, True)
        p.setWorldTransform(vt)
        view.drawForeground(p, view.mapToScene(vp.rect()).boundingRect())
        p.end()
        self.frames += 1

    def _record(self, view, vt, top: list) -> tuple | None:
        """What fixes this frame's pixels beyond the still image, each part with the device box it can touch:
        (top items, live items' (version, box), top items' (mode, version, box), retained overlay damage,
        HUD parts' (x, y, w, h, key), rects of widgets over the viewport); None when some of it cannot be told (the frame is then painted whole)."""
        vp = view.viewport()
        fixed = view.foreground_rects()
        if fixed is None:
            return None
        live = []
        for kind, it in self._steps:
            if kind == "live":
                live.append((item_version(it), _device_box(it, vt) if _drawn(it) else None))
        tops = []
        retained = QRegion()
        area = QRect(0, 0, vp.width(), vp.height())
        for it in top:
            prepare = getattr(it, "prepare_retained", None)
            if not _drawn(it):
                tops.append(("hidden", None, None))
            elif prepare is not None:
                # the overlay patches its retained layers now (before the clip is set) and says where they changed
                t = it.deviceTransform(vt)
                retained_now = (it.effectiveOpacity() == 1.0 and t.m12() == 0.0 and t.m21() == 0.0 and t.isAffine()
                                and prepare(t, area) is not None)
                tops.append(("retained" if retained_now else "box", item_version(it), _device_box(it, vt)))
            else:
                tops.append(("box", item_version(it), _device_box(it, vt)))
            if prepare is not None:
                retained = retained.united(it.take_damage())
        widgets = self._widgets
        if widgets is None or widgets.vp is not vp:
            widgets = self._widgets = WidgetsOver(vp)
        return (top, live, tops, retained, fixed, widgets.rects())

def _changed(a: tuple, b: tuple) -> QRegion:
    """Device px where frame record ``b`` may differ from ``a`` (both of :meth:`DragLayer._record`, same top items)."""
    d = QRegion()
    for (v0, b0), (v1, b1) in zip(a[1], b[1]):  # the moving items
        if v0 != v1 or b0 != b1 or v1 is None:
            for r in (b0, b1):
                if r is not None:
                    d = d.united(r)
    for (m0, v0, b0), (m1, v1, b1) in zip(a[2], b[2]):  # overlay, zones, tool previews
        if m0 == m1 == "retained":
            continue  # the overlay's retained layers say where they changed (below)
        if m0 != m1 or v0 != v1 or b0 != b1 or v1 is None:
            for r in (b0, b1):
                if r is not None:
                    d = d.united(r)
    d = d.united(b[3])
    if a[4] != b[4]:  # scale bar, north arrow, legend: where one changed
        same = set(a[4]) & set(b[4])
        for x, y, w, h, _key in a[4] + b[4]:
            if (x, y, w, h, _key) not in same:
                d = d.united(QRect(x, y, w, h))
    for r in a[5] + b[5]:  # child widgets: always (Qt paints them over every frame)
        d = d.united(r)
    return d


def _device_box(item: QGraphicsItem, vt) -> QRect:
    return item.deviceTransform(vt).mapRect(item.boundingRect()).toAlignedRect().adjusted(
        -EDGE_PAD_PX, -EDGE_PAD_PX, EDGE_PAD_PX, EDGE_PAD_PX)


def _store_key(vp: QWidget, painter: QPainter) -> tuple | None:
    """What names the pixels ``painter`` paints into when they are the window's backing store (the last frame
    on screen, kept by Qt between paints): the store's image, its size and the viewport's place in it; None
    for any other device (a ``grab`` or ``render`` into a pixmap, which must get a whole frame)."""
    engine = painter.paintEngine()
    store = vp.backingStore()
    if engine is None or store is None:
        return None
    device, target = engine.paintDevice(), store.paintDevice()
    if device is None or target is None or shiboken6.getCppPointer(device)[0] != shiboken6.getCppPointer(target)[0]:
        return None
    serial = device.cacheKey() >> 32 if isinstance(device, QImage) else 0  # a new image after a resize
    at = vp.mapTo(vp.window(), QPoint(0, 0))
    size = store.size()
    return (shiboken6.getCppPointer(device)[0], serial, size.width(), size.height(), at.x(), at.y())


__all__ = ["DragLayer", "Versioned", "item_version", "paint_item"]
