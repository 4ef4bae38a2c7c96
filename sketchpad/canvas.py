"""The drawing surface: a scene of model-keyed items (metres, y down) and the view that shows it.

``SketchScene.sync(rig)`` adds, removes and updates items by model key
(``("point", id)``, ``("rope", id)``, ``("force", index)``, ``("feature", id)``),
so an overlay layer (z ``theme.Z_OVERLAY``) can sit on top and find items by id.
``SketchView`` zooms at the cursor with the wheel, pans with the middle button or
space+drag, draws the grid (m or ft), a scale bar and a north arrow, snaps, and
routes every other mouse and key event to the active tool (``sketchpad.tools``).
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass
from itertools import compress
from operator import is_not

from PySide6.QtCore import QEvent, QLineF, QPoint, QPointF, QRect, QRectF, QSize, Qt, Signal
from PySide6.QtGui import (
    QFontMetricsF,
    QKeyEvent,
    QMouseEvent,
    QPainter,
    QPaintEngine,
    QPixmap,
    QPixmapCache,
    QWheelEvent,
)
from PySide6.QtWidgets import QGraphicsItem, QGraphicsScene, QGraphicsView

from sketchpad import theme
from sketchpad.drag_layer import DragLayer, note_structure_change
from sketchpad.geometry import to_scene, to_site
from sketchpad.glyphs import paint_north_arrow
from sketchpad.grid_pixels import paint_grid_pixels
from sketchpad.items import (
    FeatureItem,
    ForceItem,
    PointItem,
    RopeItem,
    SketchItem,
    fmt_length,
    make_point_item,
)
from sketchpad.tools import ToolDefaults
from solver.model import Rig

log = logging.getLogger(__name__)

FT_IN_M = 0.3048  # NIST SP 811
SCENE_HALF_EXTENT_M = 20000.0  # room to pan in every direction
MIN_SCALE_PX_PER_M = 0.05
MAX_SCALE_PX_PER_M = 5000.0
WHEEL_ZOOM_PER_DEGREE = 1.01  # one wheel notch (15 degrees) zooms about 16 %
PICK_RADIUS_PX = 11.0  # a click this close to a point picks it
SNAP_RADIUS_PX = 10.0  # snapping to points within this distance
FIT_MARGIN_FRACTION = 0.12
PIXMAP_CACHE_KB = 96 * 1024  # room for the item caches of a big rig zoomed in (ropes clip to the viewport)


def unit_metres(unit: str) -> float:
    """Metres in one display length unit."""
    return FT_IN_M if unit == "ft" else 1.0


def nice_step(minimum: float) -> float:
    """The smallest 1, 2 or 5 x 10^n not below ``minimum`` (> 0)."""
    exp = math.floor(math.log10(minimum))
    for mant in (1.0, 2.0, 5.0, 10.0):
        step = mant * 10.0**exp
        if step >= minimum * (1 - 1e-9):
            return step
    return 10.0 ** (exp + 1)


class SketchScene(QGraphicsScene):
    """Holds one item per model thing, keyed by ``(kind, id)``, kept in step with the Rig by :meth:`sync`."""

    synced = Signal(object)  # the Rig just shown

    #: Every way to put an item into this scene or take one out bumps ``drag_layer``'s structure counter: the
    #: overrides below (Python's calls; Qt never calls them itself) and a tracked parent's ``itemChange``
    #: (a child made or reparented under it).  The drag layer may then skip reading the whole scene each frame.
    tracks_structure = True

    def addItem(self, item) -> None:  # noqa: N802
        note_structure_change()
        super().addItem(item)

    def removeItem(self, item) -> None:  # noqa: N802
        note_structure_change()
        super().removeItem(item)

    def clear(self) -> None:
        note_structure_change()
        self._items_serial = getattr(self, "_items_serial", 0) + 1  # the next sync is a full one
        super().clear()

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.setSceneRect(QRectF(-SCENE_HALF_EXTENT_M, -SCENE_HALF_EXTENT_M, 2 * SCENE_HALF_EXTENT_M, 2 * SCENE_HALF_EXTENT_M))
        self.setItemIndexMethod(QGraphicsScene.NoIndex)  # few items, all moving during drags
        self.items_by_key: dict[tuple, SketchItem] = {}
        self.rig = Rig()
        self._laid: tuple | None = None  # (ropes, m per px, points by id, rope indices through each point) last laid out
        self._synced: tuple | None = None  # (rig, points by id, _items_serial) of the last sync
        self._items_serial = 0  # bumped by every item added or removed by key
        self.scale_m_per_px = 0.05
        self.background_item: QGraphicsItem | None = None
        self.item_cache_mode = QGraphicsItem.NoCache  # SketchView turns on pixmap caching for the screen
        self.rope_names_in_overlay = False  # True while the force overlay places the rope names (sketchpad.rope_names)
        self.shown_at: dict[str, tuple[float, float]] = {}  # free points drawn where the solver put them (site m)
        self.drawn_places = None  # sketchpad.solved_places.DrawnPlaceItem, made on the first solved places
        self.bows: dict = {}  # rope id -> {piece: hidden points} the current bows (sketchpad.rope_bows.scene_bows)
        #: True while a drag's solves move free points (a boat in the current): the drag layer then lets the mouse
        #: move's frame and the solve's frame change different items (sketchpad.drag_layer)
        self.points_follow_solve = False

    # --- model -> items -----------------------------------------------------------------
    def sync(self, rig: Rig) -> None:
        """Make the items show ``rig``: add what is new, update what changed, remove what is gone.

        Model objects are frozen, so an unchanged point, feature, force or rope is the same object
        (or an equal one) as last time: only items whose model data or whose points changed are
        touched, and a moved point is only repositioned.
        """
        last = self._synced
        self.rig = rig
        shown_before = self.shown_at
        if self.shown_at and not self._shown_points_kept(rig, last):
            # a point drawn elsewhere (dragged, edited, gone) is shown where it is drawn again
            old = last[1] if last is not None else {}
            now = {p.id: p for p in rig.points}
            kept = {k: v for k, v in self.shown_at.items() if now.get(k) is not None and now[k] is old.get(k)}
            if len(kept) != len(self.shown_at):  # else the same places: the same dict, as _sync_moved's test reads
                self.shown_at = kept
        if last is not None and self._sync_moved(rig, *last):
            # _sync_moved touched only changed points, the forces at them and the ropes through them, and a changed
            # point has just left shown_at: with the same shown_at every point, force and ring shown at a solved
            # place is as _show_solved left it (tested equal to a full sync)
            if self.shown_at is not shown_before:
                self._show_solved()
            self.synced.emit(rig)
            return
        items = self.items_by_key
        wanted: set[tuple] = set()
        by_id = {}
        for p in rig.points:
            by_id[p.id] = p
            key = ("point", p.id)
            wanted.add(key)
            item = items.get(key)
            if item is not None and item.point.kind != p.kind:
                self._remove(key)
                item = None
            if item is None:
                self._add(make_point_item(p))
            elif item.point is not p and item.point != p:
                item.set_point(p)
        for f in rig.site.features:
            key = ("feature", f.id)
            wanted.add(key)
            item = items.get(key)
            if item is None:
                self._add(FeatureItem(f))
            elif item.feature is not f and item.feature != f:
                item.set_feature(f)
        unit = rig.display.force
        for i, f in enumerate(rig.forces):
            at = by_id.get(f.at)
            if at is None:
                continue
            key = ("force", i)
            wanted.add(key)
            item = items.get(key)
            if item is None:
                item = ForceItem(i, f, unit, rig.view)
                self._add(item)
            item.set_force(f, at.xy, unit, rig.view)
        for r in rig.ropes:
            key = ("rope", r.id)
            wanted.add(key)
            if key not in items:
                self._add(RopeItem(r))
        if len(items) != len(wanted):
            for key in [k for k in items if k not in wanted]:
                self._remove(key)
        self._layout_ropes(by_id)
        self._synced = (rig, by_id, self._items_serial)
        self._show_solved()
        self.synced.emit(rig)

    def _shown_points_kept(self, rig: Rig, last: tuple | None) -> bool:
        """True when every point of ``shown_at`` is the very Point object of the last sync (so :meth:`sync`'s filter
        keeps them all): as many points, and no id of a point that is another object (before or now) in
        ``shown_at`` -- every point with any other id sits at an index whose object did not change."""
        if last is None or len(rig.points) != len(last[0].points):
            return False
        pts, before, at = rig.points, last[0].points, self.shown_at
        for i in compress(range(len(pts)), map(is_not, pts, before)):
            if pts[i].id in at or before[i].id in at:
                return False
        return True

    def _sync_moved(self, rig: Rig, last_rig: Rig, last_by_id: dict, serial: int) -> bool:
        """Do :meth:`sync`'s work for ``rig`` when it differs from the last synced rig only in points that kept
        their id and kind (a drag step) and the items are those that sync left: False (nothing done) otherwise.

        The rigs' point tuples are compared in one pass by identity (a Rig is frozen: an unchanged point is
        the very object), so only the changed points, the forces at them and the ropes through them are
        touched; what the full sync would do to every other item is nothing (tested equal to a full sync)."""
        if (serial != self._items_serial or rig.ropes is not last_rig.ropes or rig.forces is not last_rig.forces
                or rig.site.features is not last_rig.site.features or rig.display.force != last_rig.display.force
                or rig.view != last_rig.view or len(rig.points) != len(last_rig.points)):
            return False
        changed = [(p, q) for p, q in zip(rig.points, last_rig.points) if p is not q]
        items = self.items_by_key
        for p, q in changed:
            if p.id != q.id or p.kind != q.kind or ("point", p.id) not in items:
                return False
        by_id = dict(last_by_id)
        moved = set()
        for p, _q in changed:
            by_id[p.id] = p
            moved.add(p.id)
        for p, _q in changed:
            item = items[("point", p.id)]
            if item.point is not p and item.point != p:
                item.set_point(p)
        if moved:
            unit = rig.display.force
            for i, f in enumerate(rig.forces):
                if f.at in moved:
                    item = items.get(("force", i))
                    if item is not None:
                        item.set_force(f, by_id[f.at].xy, unit, rig.view)
        self._layout_ropes(by_id, (last_by_id, moved))
        self._synced = (rig, by_id, serial)
        return True

    def _layout_ropes(self, by_id: dict | None = None, moved: tuple | None = None) -> None:
        """Rebuild the rope items whose rope, points (position or kind), colour or zoom changed.

        When the ropes and the zoom are those of the last layout, only ropes through a point that
        changed are looked at (a drag step moves one point: one or two ropes, not all of them).
        ``moved`` is (points by id, ids): ``by_id`` is that dict but at those ids, so when it is the
        last layout's the changed points are known without comparing every point.
        """
        rig = self.rig
        if by_id is None:
            by_id = {p.id: p for p in rig.points}
        k = self.scale_m_per_px
        ropes = rig.ropes
        last = self._laid
        if last is not None and last[0] is ropes and last[1] == k:
            before = last[2]
            if moved is not None and moved[0] is before:
                changed = moved[1]
            else:
                changed = {pid for pid, p in by_id.items() if before.get(pid) is not p}
                changed.update(pid for pid in before if pid not in by_id)
            through = last[3]
            indices = sorted({i for pid in changed for i in through.get(pid, ())})
        else:
            through = {}
            for i, r in enumerate(ropes):
                for ps in r.path:
                    through.setdefault(ps.at, set()).add(i)
            indices = range(len(ropes))
        for i in indices:
            r = ropes[i]
            item = self.items_by_key.get(("rope", r.id))
            if item is None:
                continue
            colour = theme.rope_colour(i)
            on_path = tuple(by_id.get(ps.at) for ps in r.path)
            solved = tuple(self.shown_at.get(ps.at) for ps in r.path) if self.shown_at else ()
            bows = self.bows.get(r.id)
            shown = (r, on_path, colour.rgba(), k, solved, bows)
            if item._shown == shown:
                continue
            drawn = [p for p in on_path if p is not None]  # a pass at a missing point is left out
            at = self.shown_at
            item.set_rope(r, {p.id: to_scene(*at.get(p.id, (p.x, p.y))) for p in drawn},
                          {p.id: p.kind for p in drawn}, colour, k, bows)
            item._shown = shown
        self._laid = (ropes, k, by_id, through)

    def set_scale(self, m_per_px: float) -> None:
        """The view's zoom changed: glyphs drawn in metres are resized to keep their pixel size."""
        if not math.isclose(m_per_px, self.scale_m_per_px, rel_tol=1e-9):
            self.scale_m_per_px = m_per_px
            self._layout_ropes()
            if self.item_cache_mode != QGraphicsItem.NoCache:
                # markers and force arrows keep their pixel size, so Qt would reuse their cached
                # pixmaps at the new zoom, placed to a whole pixel: draw them afresh instead
                for item in self.items_by_key.values():
                    if isinstance(item, (PointItem, ForceItem)):
                        item.update()

    def set_item_cache(self, mode: QGraphicsItem.CacheMode) -> None:
        """Cache mode of every rope, point and force item, now and later.

        A view on screen uses ``DeviceCoordinateCache``: an item that did not change since the
        last paint (every rope but the dragged one's during a drag, every point marker with its
        name) is blitted from a pixmap instead of being drawn again.  Exports keep ``NoCache``,
        since Qt would otherwise put those pixmaps into SVG and PDF files.
        """
        self.item_cache_mode = mode
        for item in self.items_by_key.values():
            if not isinstance(item, FeatureItem):
                item.setCacheMode(mode)

    def _add(self, item: SketchItem) -> None:
        if self.item_cache_mode != QGraphicsItem.NoCache and not isinstance(item, FeatureItem):
            item.setCacheMode(self.item_cache_mode)
        self.addItem(item)
        self.items_by_key[item.key] = item
        self._items_serial += 1

    def _remove(self, key: tuple) -> None:
        self._items_serial += 1
        item = self.items_by_key.pop(key)
        self.removeItem(item)

    # --- look-ups -------------------------------------------------------------------------
    def item_for(self, key: tuple) -> SketchItem | None:
        return self.items_by_key.get(key)

    def selected_keys(self) -> list[tuple]:
        """Keys of the selected items, in scene order (points first is not guaranteed)."""
        return [it.key for it in self.selectedItems() if isinstance(it, SketchItem)]

    def select_keys(self, keys, add: bool = False) -> None:
        """Select exactly ``keys`` (or add them to the selection)."""
        if not add:
            self.clearSelection()
        for k in keys:
            item = self.items_by_key.get(k)
            if item is not None:
                item.setSelected(True)

    def model_bounds(self, rig_first: bool = False) -> QRectF:
        """The scene rectangle (metres) covering every model item (not previews or overlays);
        with ``rig_first`` only the points when there are any (site features can span a whole river)."""
        rect = QRectF()
        for p in self.rig.points:
            q = to_scene(p.x, p.y)
            rect = rect.united(QRectF(q.x() - 0.5, q.y() - 0.5, 1.0, 1.0))
        if rig_first and not rect.isNull():
            return rect
        for f in self.rig.site.features:
            for x, y in f.coords:
                q = to_scene(x, y)
                rect = rect.united(QRectF(q.x() - 0.1, q.y() - 0.1, 0.2, 0.2))
        if self.background_item is not None:
            rect = rect.united(self.background_item.sceneBoundingRect())
        return rect

    # --- layers for other modules -------------------------------------------------------------
    def set_background_item(self, item: QGraphicsItem | None) -> None:
        """Put the site image (or nothing) at the bottom of the z-order."""
        if self.background_item is not None:
            self.removeItem(self.background_item)
        self.background_item = item
        if item is not None:
            item.setZValue(theme.Z_BACKGROUND)
            self.addItem(item)

    def set_solved(self, places) -> None:
        """Draw the free points in ``places`` (id -> site metres, :func:`sketchpad.solved_places.moved_free_points`) where
        the solver put them, with their ropes and forces, and a faint ring where they are drawn; None or {}: as drawn."""
        places = dict(places or {})
        if places == self.shown_at:
            return
        gone = set(self.shown_at) - set(places)
        self.shown_at = places
        for pid in gone:  # back to the drawn place
            item = self.items_by_key.get(("point", pid))
            if item is not None and self.rig.has_point(pid):
                p = self.rig.point(pid)
                item.setPos(to_scene(p.x, p.y))
                item.update()  # a move tells the drag layer through the item's version (no geometry notices)
        unit = self.rig.display.force
        for i, f in enumerate(self.rig.forces):
            if f.at in gone and self.rig.has_point(f.at):
                item = self.items_by_key.get(("force", i))
                if item is not None:
                    item.set_force(f, self.rig.point(f.at).xy, unit, self.rig.view)
        self._laid = None
        self._layout_ropes()
        self._show_solved()

    def set_bows(self, bows: dict) -> None:
        """Draw each rope piece the current bows along its hidden points (rope id -> {piece: scene points},
        :func:`sketchpad.rope_bows.scene_bows`; {}: every piece straight); only ropes whose bows changed are laid out."""
        if bows == self.bows:
            return
        changed = {r for r in set(bows) | set(self.bows) if bows.get(r) != self.bows.get(r)}
        self.bows = dict(bows)
        for r in changed:
            item = self.items_by_key.get(("rope", r))
            if item is not None:
                item._shown = None
        self._laid = None
        self._layout_ropes()

    def _show_solved(self) -> None:
        """Put the points (and forces) of ``shown_at`` at their solved places and faint rings at their drawn ones."""
        from sketchpad.solved_places import DrawnPlaceItem, drawn_place_pairs

        at = self.shown_at
        if at:
            unit = self.rig.display.force
            for pid, xy in at.items():
                item = self.items_by_key.get(("point", pid))
                pos = to_scene(*xy)
                if item is not None and item.pos() != pos:
                    item.setPos(pos)
                    item.update()  # a move tells the drag layer through the item's version (no geometry notices)
            for i, f in enumerate(self.rig.forces):
                if f.at in at:
                    item = self.items_by_key.get(("force", i))
                    if item is not None:
                        item.set_force(f, at[f.at], unit, self.rig.view)
        if self.drawn_places is None:
            if not at:
                return
            self.drawn_places = DrawnPlaceItem()
            self.addItem(self.drawn_places)
        pairs = drawn_place_pairs(self.rig, at)
        if pairs != self.drawn_places.pairs:
            self.drawn_places.set_pairs(pairs)

    def set_rope_names_in_overlay(self, on: bool) -> None:
        """Let the force overlay place the rope names (True) or the rope items draw them (False)."""
        if bool(on) != self.rope_names_in_overlay:
            self.rope_names_in_overlay = bool(on)
            for key, item in self.items_by_key.items():
                if key[0] == "rope":
                    item.update()

    def add_overlay_item(self, item: QGraphicsItem) -> None:
        """Add a result-overlay item above the model items (and below tool previews)."""
        item.setZValue(theme.Z_OVERLAY)
        self.addItem(item)


def _noting(name: str):
    """``QGraphicsScene.<name>`` (it adds, removes or regroups items in C++) bumping the structure counter first."""
    base = getattr(QGraphicsScene, name)

    def method(self, *args, **kwargs):
        note_structure_change()
        return base(self, *args, **kwargs)

    method.__name__ = name
    method.__doc__ = f"QGraphicsScene.{name}, telling the drag layer the scene's items changed."
    return method


for _name in ("addEllipse", "addLine", "addPath", "addPixmap", "addPolygon", "addRect", "addSimpleText", "addText",
              "addWidget", "createItemGroup", "destroyItemGroup"):
    setattr(SketchScene, _name, _noting(_name))


@dataclass
class CanvasEvent:
    """A mouse event as a tool sees it: scene position (metres, y down), snapped site position, buttons."""

    scene_pos: QPointF
    view_pos: QPoint
    button: Qt.MouseButton
    modifiers: Qt.KeyboardModifier

    @property
    def site(self) -> tuple[float, float]:
        return to_site(self.scene_pos)


class SketchView(QGraphicsView):
    """Shows the scene: zoom at cursor, pan, grid, scale bar, north arrow, snapping; routes input to the tool."""

    cursor_moved = Signal(float, float)  # site x, y in metres
    scale_changed = Signal(float)  # pixels per metre
    escape_pressed = Signal()  # the tool was cancelled: the window returns to select
    message = Signal(str)  # a hint or measurement for the status bar

    def __init__(self, scene: SketchScene, document, parent=None) -> None:
        super().__init__(scene, parent)
        self._scene_ref = scene  # a view does not own its scene
        self.document = document
        self.tool = None
        self.defaults = ToolDefaults()
        self.grid_visible = True
        self.snap_to_grid = False
        self.snap_to_points = True
        self._panning: QPoint | None = None
        self._space_held = False
        self._background: QPixmap | None = None  # paper and grid of the last frame (drawBackground)
        self._background_key: tuple | None = None
        self._background_seen: tuple | None = None  # the last frame's key, painted without the pixmap
        self._hud_cache: dict[tuple, QPixmap] = {}  # scale bar and north arrow (drawForeground)
        self._hud_frame: tuple = (None, [])  # (what fixes the HUD, its blits) of the last frame
        #: Still items of a drag kept in one image (sketchpad.drag_layer); ``use_drag_layer`` off paints every
        #: frame through Qt alone (tests compare the two)
        self.drag_layer = DragLayer()
        self.use_drag_layer = True
        #: Callables ``(painter, dpr or None)`` painting screen-fixed layers over the HUD each frame, in
        #: viewport pixels (the overlay's legend): part of the viewport's own paint, not a child widget
        self.foreground_painters: list = []
        #: For each foreground painter, a callable giving the viewport rects it paints in, each with a key of
        #: what it paints there (a list of (QRect, key)): a drag frame repaints a rect when its key changes
        #: (``foreground_rects``)
        self.foreground_areas: list = []
        #: callables giving the (width, height) px of a box kept clear in the bottom-right corner by
        #: zoom_to_fit (the force overlay's key), so the fitted rig is not hidden under it
        self.fit_reserves: list = []
        self.wheel_zooming = False  # True only while a wheel notch zooms (sketchpad.zoom_pacing defers labels)
        self.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing)
        self.setHorizontalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
        self.setVerticalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
        self.setTransformationAnchor(QGraphicsView.NoAnchor)
        self.setResizeAnchor(QGraphicsView.AnchorViewCenter)
        self.setViewportUpdateMode(QGraphicsView.FullViewportUpdate)  # grid and HUD follow every pan
        # every item sets the pen, brush and hints it draws with, and Qt sets each item's transform and
        # opacity itself: saving and restoring the painter around each of ~160 items is ~0.3 ms a frame
        self.setOptimizationFlag(QGraphicsView.DontSavePainterState, True)
        # drawBackground covers every pixel with paper: no fill with the palette before each frame
        self.viewport().setAutoFillBackground(False)
        self.viewport().setAttribute(Qt.WA_OpaquePaintEvent, True)
        self.setDragMode(QGraphicsView.NoDrag)
        self.setMouseTracking(True)
        self.setFocusPolicy(Qt.StrongFocus)
        self.setMinimumSize(320, 240)
        self.resetTransform()
        self.scale(20.0, 20.0)
        self.centerOn(0, 0)
        scene.set_scale(1.0 / 20.0)
        # unchanged items are blitted from pixmaps (a drag redraws only what moved); the item
        # caches live in QPixmapCache, whose 10 MB default holds only ~3 viewport-sized pixmaps
        if QPixmapCache.cacheLimit() < PIXMAP_CACHE_KB:
            QPixmapCache.setCacheLimit(PIXMAP_CACHE_KB)
        scene.set_item_cache(QGraphicsItem.DeviceCoordinateCache)

    # --- zoom and pan -----------------------------------------------------------------------
    @property
    def sketch_scene(self) -> SketchScene:
        return self._scene_ref

    @property
    def px_per_m(self) -> float:
        return float(self.transform().m11())

    def zoom_at(self, factor: float, view_pos: QPoint) -> None:
        """Zoom by ``factor`` keeping the scene point under ``view_pos`` where it is."""
        current = self.px_per_m
        factor = min(max(current * factor, MIN_SCALE_PX_PER_M), MAX_SCALE_PX_PER_M) / current
        if math.isclose(factor, 1.0):
            return
        before = self.mapToScene(view_pos)
        self.scale(factor, factor)
        after = self.mapFromScene(before)
        self._scroll_by(after - view_pos)
        self._scale_changed()

    def _scroll_by(self, delta: QPoint) -> None:
        h, v = self.horizontalScrollBar(), self.verticalScrollBar()
        h.setValue(h.value() + delta.x())
        v.setValue(v.value() + delta.y())

    def zoom_to_fit(self) -> None:
        """Fill the view with the rig's points, with a margin for labels (the site when there are no points)."""
        rect = self.sketch_scene.model_bounds(rig_first=True)
        if rect.isNull() or rect.width() < 1e-9 and rect.height() < 1e-9:
            rect = QRectF(-10, -10, 20, 20)
        m = max(rect.width(), rect.height()) * FIT_MARGIN_FRACTION + 1.0
        rect = rect.adjusted(-m, -m, m, m)
        vp = self.viewport().rect()
        if vp.width() < 10 or vp.height() < 10:
            return
        bw, bh = max([f() for f in self.fit_reserves] or [(0, 0)], key=lambda wh: wh[0] * wh[1])
        w, h = vp.width(), vp.height()
        # beside the kept box or above it, whichever leaves the rig larger
        beside = min(max(w - bw, 10) / rect.width(), h / rect.height())
        above = min(w / rect.width(), max(h - bh, 10) / rect.height())
        s = min(max(max(beside, above), MIN_SCALE_PX_PER_M), MAX_SCALE_PX_PER_M)
        shift = QPointF(bw / (2 * s), 0.0) if beside >= above else QPointF(0.0, bh / (2 * s))
        self.resetTransform()
        self.scale(s, s)
        self.centerOn(rect.center() + shift)
        self._scale_changed()

    def _scale_changed(self) -> None:
        self.sketch_scene.set_scale(1.0 / self.px_per_m)
        self.scale_changed.emit(self.px_per_m)
        self.viewport().update()

    def wheelEvent(self, event: QWheelEvent) -> None:  # noqa: N802
        degrees = event.angleDelta().y() / 8.0
        if degrees:
            self.wheel_zooming = True  # a notch of a wheel gesture (sketchpad.zoom_pacing); fits and menu zooms are not
            try:
                self.zoom_at(WHEEL_ZOOM_PER_DEGREE**degrees, event.position().toPoint())
            finally:
                self.wheel_zooming = False
        event.accept()

    # --- snapping and picking --------------------------------------------------------------
    @property
    def length_unit(self) -> str:
        return self.sketch_scene.rig.display.length

    def grid_step_m(self) -> float:
        """Minor grid spacing in metres for the current zoom and display unit."""
        u = unit_metres(self.length_unit)
        return nice_step(theme.GRID_MIN_SPACING_PX / (self.px_per_m * u)) * u

    def pick_point(self, view_pos: QPoint, exclude=(), kinds=None) -> str | None:
        """The id of the point nearest ``view_pos`` within the pick radius, or None."""
        best, best_d = None, PICK_RADIUS_PX
        shown_at = self.sketch_scene.shown_at
        for p in self.sketch_scene.rig.points:
            if p.id in exclude or (kinds is not None and p.kind not in kinds):
                continue
            for xy in ((p.x, p.y), shown_at[p.id]) if p.id in shown_at else ((p.x, p.y),):  # marker or its drawn place
                q = self.mapFromScene(to_scene(*xy))
                d = math.hypot(q.x() - view_pos.x(), q.y() - view_pos.y())
                if d <= best_d:
                    best, best_d = p.id, d
        return best

    def item_at(self, view_pos: QPoint) -> SketchItem | None:
        """The topmost model item under ``view_pos`` (labels count as their feature)."""
        for it in self.items(view_pos):
            while it is not None and not isinstance(it, SketchItem):
                it = it.parentItem()
            if isinstance(it, SketchItem):
                return it
        return None

    def snap(self, scene_pos: QPointF, exclude=()) -> tuple[float, float]:
        """Site (x, y) metres for ``scene_pos``: onto a nearby point if enabled, else onto the grid if enabled."""
        if self.snap_to_points:
            pid = self.pick_point(self.mapFromScene(scene_pos), exclude=exclude)
            if pid is not None and SNAP_RADIUS_PX > 0:
                p = self.sketch_scene.rig.point(pid)
                q = self.mapFromScene(to_scene(p.x, p.y))
                v = self.mapFromScene(scene_pos)
                if math.hypot(q.x() - v.x(), q.y() - v.y()) <= SNAP_RADIUS_PX:
                    return (p.x, p.y)
        x, y = to_site(scene_pos)
        if self.snap_to_grid:
            g = self.grid_step_m()
            x, y = round(x / g) * g, round(y / g) * g
        return (x, y)

    def status_message(self, text: str) -> None:
        self.message.emit(text)

    # --- events -> tool -------------------------------------------------------------------------
    def set_tool(self, tool) -> None:
        if self.tool is not None:
            self.tool.deactivate()
        self.tool = tool
        if tool is not None:
            tool.activate()
            self.viewport().setCursor(tool.cursor)

    def _event(self, event: QMouseEvent) -> CanvasEvent:
        vp = event.position().toPoint()
        return CanvasEvent(self.mapToScene(vp), vp, event.button(), event.modifiers())

    def mousePressEvent(self, event: QMouseEvent) -> None:  # noqa: N802
        if event.button() == Qt.MiddleButton or (event.button() == Qt.LeftButton and self._space_held):
            self._panning = event.position().toPoint()
            self.viewport().setCursor(Qt.ClosedHandCursor)
            event.accept()
            return
        self.setFocus()
        if self.tool is not None:
            self.tool.press(self._event(event))
        event.accept()

    def mouseMoveEvent(self, event: QMouseEvent) -> None:  # noqa: N802
        vp = event.position().toPoint()
        if self._panning is not None:
            self._scroll_by(self._panning - vp)
            self._panning = vp
            event.accept()
            return
        ev = self._event(event)
        self.cursor_moved.emit(*ev.site)
        if self.tool is not None:
            self.tool.move(ev)
        event.accept()

    def mouseReleaseEvent(self, event: QMouseEvent) -> None:  # noqa: N802
        self.drag_layer.drop()  # a drag ends here: its still image goes (the next frames are Qt's own)
        if self._panning is not None:
            self._panning = None
            self.viewport().setCursor(Qt.OpenHandCursor if self._space_held else (self.tool.cursor if self.tool else Qt.ArrowCursor))
            event.accept()
            return
        if self.tool is not None:
            self.tool.release(self._event(event))
        event.accept()

    def mouseDoubleClickEvent(self, event: QMouseEvent) -> None:  # noqa: N802
        if self.tool is not None and event.button() == Qt.LeftButton:
            self.tool.double_click(self._event(event))
        event.accept()

    def event(self, event) -> bool:  # noqa: A003
        # a key the tool claims (Backspace while drawing a rope) must beat the window's shortcut
        claims = getattr(self.tool, "overrides_shortcut", None)
        if event.type() == QEvent.ShortcutOverride and claims is not None and claims(event):
            event.accept()
            return True
        return super().event(event)

    def keyPressEvent(self, event: QKeyEvent) -> None:  # noqa: N802
        key = event.key()
        if key == Qt.Key_Space and not event.isAutoRepeat():
            self._space_held = True
            self.viewport().setCursor(Qt.OpenHandCursor)
            event.accept()
            return
        if key == Qt.Key_Escape:
            if self.tool is not None:
                self.tool.cancel()
            self.escape_pressed.emit()
            event.accept()
            return
        if key in (Qt.Key_Return, Qt.Key_Enter) and self.tool is not None:
            self.tool.finish()
            event.accept()
            return
        if self.tool is not None and self.tool.key(event):
            event.accept()
            return
        super().keyPressEvent(event)

    def keyReleaseEvent(self, event: QKeyEvent) -> None:  # noqa: N802
        if event.key() == Qt.Key_Space and not event.isAutoRepeat():
            self._space_held = False
            self.viewport().setCursor(self.tool.cursor if self.tool else Qt.ArrowCursor)
            event.accept()
            return
        super().keyReleaseEvent(event)

    # --- painting ------------------------------------------------------------------------------
    def paintEvent(self, event) -> None:  # noqa: N802
        """A drag frame from the still image of the items that do not move (sketchpad.drag_layer) when
        it holds, else Qt's own paint of every item."""
        if self.use_drag_layer:
            vp = self.viewport()
            t = self.viewportTransform()
            dpr = vp.devicePixelRatioF()
            frame = (t.m11(), t.m12(), t.m21(), t.m22(), t.dx(), t.dy(), vp.width(), vp.height(), dpr,
                     self.grid_visible, self.grid_step_m() if self.grid_visible else 0.0, self.renderHints().value,
                     self.optimizationFlags().value)
            try:
                if dpr == 1.0 and self.drag_layer.paint(self, frame, event.region()):
                    return
            except Exception:  # never lose the canvas to a cache: paint it as Qt does from now on
                log.exception("drag layer failed; the view paints without it")
                self.use_drag_layer = False
                self.drag_layer.drop()
        self.drag_layer.painted_by_qt(self.viewport())  # on screen, the next drag frame is painted whole
        super().paintEvent(event)

    # --- grid, scale bar, north arrow ---------------------------------------------------------
    def _screen_dpr(self, painter: QPainter) -> float | None:
        """The device pixel ratio when ``painter`` paints this view's viewport as on screen (raster, the
        view's own transform), else None (a scaled or vector render: draw directly)."""
        engine = painter.paintEngine()
        if engine is None or engine.type() != QPaintEngine.Raster or painter.viewTransformEnabled():
            return None
        if painter.worldTransform() != self.viewportTransform():
            return None
        return float(painter.device().devicePixelRatioF())

    def drawBackground(self, painter: QPainter, rect: QRectF) -> None:  # noqa: N802
        """Paper and grid; on screen blitted from a viewport-sized pixmap drawn again only when the
        zoom, pan, size or grid changes (a drag step repaints the viewport ~60 times a second)."""
        dpr = self._screen_dpr(painter)
        if dpr is None:
            painter.save()  # the grid turns antialiasing off; the items after it want it on
            self._paint_background(painter, rect)
            painter.restore()
            return
        vp = self.viewport()
        t = self.viewportTransform()
        key = (t.m11(), t.m22(), t.dx(), t.dy(), vp.width(), vp.height(), dpr, self.grid_visible,
               self.grid_step_m() if self.grid_visible else 0.0)
        if key != self._background_key and dpr == 1.0 and key != self._background_seen:
            # a frame at a new zoom or pan (a wheel step) paints it straight onto the frame; a second frame
            # showing the same keeps it in the pixmap (one viewport-sized blit less per zoom step)
            self._background_seen = key
            painter.save()
            painter.resetTransform()
            self._paint_screen_background(painter, t, vp.width(), vp.height())
            painter.restore()
            return
        if key != self._background_key:
            pix = self._background  # painted over whole (a zoom step would otherwise allocate a viewport's pixmap)
            if pix is None or pix.size() != QSize(max(1, round(vp.width() * dpr)), max(1, round(vp.height() * dpr))) \
                    or pix.devicePixelRatio() != dpr:
                pix = QPixmap(max(1, round(vp.width() * dpr)), max(1, round(vp.height() * dpr)))
                pix.setDevicePixelRatio(dpr)
            p = QPainter(pix)
            if dpr == 1.0:
                self._paint_screen_background(p, t, pix.width(), pix.height())
            else:
                p.setTransform(t)
                self._paint_background(p, t.inverted()[0].mapRect(QRectF(vp.rect())).adjusted(-1, -1, 1, 1))
            p.end()
            self._background, self._background_key = pix, key
        painter.save()
        painter.resetTransform()
        painter.drawPixmap(0, 0, self._background)
        painter.restore()

    def _paint_screen_background(self, painter: QPainter, t, width: int, height: int) -> None:
        """Paper and grid over ``width`` x ``height`` device px from the painter's origin (no transform) at the view's
        zoom and pan ``t``: the grid as the pixels its aliased lines light, filled (``sketchpad.grid_pixels``)."""
        painter.fillRect(QRect(0, 0, width, height), theme.PAPER)
        if self.grid_visible:
            step = self.grid_step_m()
            area = t.inverted()[0].mapRect(QRectF(self.viewport().rect())).adjusted(-1, -1, 1, 1)
            paint_grid_pixels(painter, t, area, [(step, theme.GRID_MINOR), (step * theme.GRID_MAJOR_EVERY, theme.GRID_MAJOR)],
                              theme.GRID_AXIS, (width, height))

    def _paint_background(self, painter: QPainter, rect: QRectF) -> None:
        painter.fillRect(rect, theme.PAPER)
        if not self.grid_visible:
            return
        step = self.grid_step_m()
        major = step * theme.GRID_MAJOR_EVERY
        painter.setRenderHint(QPainter.Antialiasing, False)
        for spacing, colour in ((step, theme.GRID_MINOR), (major, theme.GRID_MAJOR)):
            painter.setPen(theme.cosmetic_pen(colour, 1.0))
            x = math.floor(rect.left() / spacing) * spacing
            top, bottom, left, right = rect.top(), rect.bottom(), rect.left(), rect.right()
            lines = []
            while x <= right:
                lines.append(QLineF(x, top, x, bottom))
                x += spacing
            y = math.floor(top / spacing) * spacing
            while y <= bottom:
                lines.append(QLineF(left, y, right, y))
                y += spacing
            painter.drawLines(lines)  # one call: the grid has a hundred lines or more
        painter.setPen(theme.cosmetic_pen(theme.GRID_AXIS, 1.0))
        painter.drawLine(QPointF(0, rect.top()), QPointF(0, rect.bottom()))
        painter.drawLine(QPointF(rect.left(), 0), QPointF(rect.right(), 0))

    def drawForeground(self, painter: QPainter, rect: QRectF) -> None:  # noqa: N802
        """Scale bar and north arrow; on screen each is blitted from a small pixmap drawn again only
        when what it shows changes (its anti-aliased translucent box and text cost ~0.5 ms a frame)."""
        dpr = self._screen_dpr(painter)
        painter.save()
        painter.resetTransform()
        painter.setRenderHint(QPainter.Antialiasing, True)
        if dpr is None:
            self._draw_scale_bar(painter)
            self._draw_orientation(painter)
        else:
            for x, y, pix in self._hud_blits(dpr):
                painter.drawPixmap(x, y, pix)
        for paint_on_top in self.foreground_painters:  # screen-fixed layers of other modules (the legend)
            paint_on_top(painter, dpr)
        painter.restore()

    def _hud_blits(self, dpr: float) -> list[tuple[int, int, QPixmap]]:
        """(x, y, pixmap) of the scale bar and the north arrow on screen at ``dpr``."""
        vp = self.viewport()
        elevation = self.sketch_scene.rig.view == "elevation"
        frame = (self.px_per_m, self.length_unit, vp.width(), vp.height(), elevation, dpr)
        if self._hud_frame[0] != frame:  # what the two parts show and where: worked out once per frame kind
            length_m = self.scale_bar_length_m()
            blits = [self._hud_pixmap(dpr, ("scale", length_m, self.px_per_m, self.length_unit, vp.height()),
                                      self._scale_bar_rect(length_m), self._draw_scale_bar),
                     self._hud_pixmap(dpr, ("orientation", elevation, vp.width()),
                                      self._orientation_rect(), self._draw_orientation)]
            self._hud_frame = (frame, blits)
        return self._hud_frame[1]

    def foreground_rects(self) -> list[tuple] | None:
        """(x, y, w, h, key) of the viewport px (at a device pixel ratio of 1) that :meth:`drawForeground` paints
        on screen this frame: the scale bar, the north arrow and each foreground painter's area, each with a
        key that changes when what it shows there changes; None if a painter does not say where it paints."""
        if len(self.foreground_areas) != len(self.foreground_painters):
            return None
        rects = [(x, y, pix.width(), pix.height(), pix.cacheKey()) for x, y, pix in self._hud_blits(1.0)]
        for areas in self.foreground_areas:
            for r, key in areas():
                rects.append((r.x(), r.y(), r.width(), r.height(), key))
        return rects

    def _hud_pixmap(self, dpr: float, key: tuple, rect: QRect, draw) -> tuple[int, int, QPixmap]:
        """(x, y, pixmap): the HUD part ``draw`` paints inside ``rect`` (viewport px), cached by ``key``."""
        full = (key, rect.x(), rect.y(), rect.width(), rect.height(), dpr)
        pix = self._hud_cache.get(full)
        if pix is None:
            if len(self._hud_cache) > 16:
                self._hud_cache.clear()
            pix = QPixmap(max(1, round(rect.width() * dpr)), max(1, round(rect.height() * dpr)))
            pix.setDevicePixelRatio(dpr)
            pix.fill(Qt.transparent)
            p = QPainter(pix)
            p.setRenderHint(QPainter.Antialiasing, True)
            p.translate(-rect.x(), -rect.y())
            draw(p)
            p.end()
            self._hud_cache[full] = pix
        return rect.x(), rect.y(), pix

    def _scale_bar_rect(self, length_m: float) -> QRect:
        """Viewport px the scale bar (box, bar and text) stays inside."""
        fm = QFontMetricsF(theme.font(theme.HUD_POINT_SIZE))
        w = length_m * self.px_per_m
        h = theme.SCALE_BAR_HEIGHT_PX
        m = theme.HUD_MARGIN_PX
        x0, y0 = m + 6, self.viewport().height() - m - h
        text_w = fm.horizontalAdvance(fmt_length(length_m, self.length_unit))
        box = QRectF(x0 - 6, y0 - fm.height() - 6, max(w, text_w) + 12, h + fm.height() + 10)
        return box.adjusted(-2, -2, 2, 2).toAlignedRect()

    def _orientation_rect(self) -> QRect:
        """Viewport px the north arrow (disc, arrow and letter) stays inside."""
        s = theme.NORTH_ARROW_PX
        m = theme.HUD_MARGIN_PX
        cx, top = self.viewport().width() - m - s / 2, m + 4
        fm = QFontMetricsF(theme.font(theme.HUD_POINT_SIZE, bold=True))
        r = s * 0.72
        upper = min(top + s * 0.62 - r, top - 1)  # the disc reaches above the arrow's tip
        bottom = max(top + s * 0.62 + r, top + s + fm.height() + 1)
        return QRectF(cx - r, upper, 2 * r, bottom - upper).adjusted(-2, -2, 2, 2).toAlignedRect()

    def scale_bar_length_m(self) -> float:
        """The scale bar's length in metres: a round number of display units near the target width."""
        u = unit_metres(self.length_unit)
        return nice_step(theme.SCALE_BAR_TARGET_PX / (self.px_per_m * u) * 0.7) * u

    def _draw_scale_bar(self, painter: QPainter) -> None:
        length_m = self.scale_bar_length_m()
        w = length_m * self.px_per_m
        h = theme.SCALE_BAR_HEIGHT_PX
        m = theme.HUD_MARGIN_PX
        vp = self.viewport().rect()
        x0, y0 = m + 6, vp.height() - m - h
        f = theme.font(theme.HUD_POINT_SIZE)
        fm = QFontMetricsF(f)
        text = fmt_length(length_m, self.length_unit)
        painter.setPen(Qt.NoPen)
        painter.setBrush(theme.HUD_BACK)
        painter.drawRoundedRect(QRectF(x0 - 6, y0 - fm.height() - 6, max(w, fm.horizontalAdvance(text)) + 12, h + fm.height() + 10), 4, 4)
        painter.setPen(theme.pixel_pen(theme.HUD_TEXT, 1.0))
        for i in range(2):
            painter.setBrush(theme.HUD_TEXT if i == 0 else theme.PAPER)
            painter.drawRect(QRectF(x0 + i * w / 2, y0, w / 2, h))
        painter.setFont(f)
        painter.drawText(QPointF(x0, y0 - 4), text)

    def _draw_orientation(self, painter: QPainter) -> None:
        """North arrow in plan view; an arrow labelled "up" in elevation view."""
        vp = self.viewport().rect()
        s = theme.NORTH_ARROW_PX
        m = theme.HUD_MARGIN_PX
        cx, top = vp.width() - m - s / 2, m + 4
        elevation = self.sketch_scene.rig.view == "elevation"
        painter.setPen(Qt.NoPen)
        painter.setBrush(theme.HUD_BACK)
        painter.drawEllipse(QPointF(cx, top + s * 0.62), s * 0.72, s * 0.72)
        paint_north_arrow(painter, QPointF(cx, top + s * 0.6), s, elevation, theme.font(theme.HUD_POINT_SIZE, bold=True))


__all__ = ["SketchScene", "SketchView", "CanvasEvent", "PointItem", "RopeItem", "nice_step", "unit_metres"]
