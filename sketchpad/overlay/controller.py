"""The overlay's controller: draws each Result over the sketch through the force item, the zones and the legend,
places the labels when the result or the zoom changes, keeps the last good overlay greyed under a failure banner,
and holds the View menu's layer toggles."""

from __future__ import annotations

import logging

from PySide6.QtCore import QEvent, QObject
from PySide6.QtGui import QAction, QFontMetricsF
from PySide6.QtWidgets import QGraphicsItem

from sketchpad import theme
from sketchpad.messages import failure_text
from sketchpad.overlay.force_item import ForceItem
from sketchpad.overlay.labels import LAYERS, OverlayLabel, PerPoint, build_labels, scene_positions, scene_xy
from sketchpad.overlay.legend import Banner, Legend, summary_lines
from sketchpad.overlay.placement import ObstacleCache, place_labels, placement_memo
from sketchpad.overlay.zones import ZoneItem
from sketchpad.hardware_marks import hardware_labels
from sketchpad.rope_names import rope_name_labels  # names placed with the numbers, never under them
from sketchpad.short_text import drawn
from sketchpad.water_labels import shown, water_labels  # wet-end tensions and the current's push, placed with the rest
from sketchpad.water_layer import WaterItem
from sketchpad.feature_names import FeatureNameBoxes
from solver.model import Rig
from solver.result import Result

log = logging.getLogger(__name__)

# --- the controller -----------------------------------------------------------------------------------
class ResultOverlay(QObject):
    """Shows Results on a SketchView: zone and force items in its scene, banner and legend on its viewport."""

    def __init__(self, view, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.view = view
        self.scene = view.sketch_scene
        self.layers: dict[str, bool] = {name: True for name in LAYERS}
        self.zones_item = ZoneItem()
        self.zones_item.setZValue(theme.Z_FEATURE + 1.0)  # under the ropes, over the water
        self.zones_item.setCacheMode(QGraphicsItem.DeviceCoordinateCache)  # hatching is slow; pans reuse it
        self.scene.addItem(self.zones_item)
        self.force_item = ForceItem()
        self.scene.add_overlay_item(self.force_item)
        self.water_item = WaterItem()  # the current's arrows and the ropes it bows
        self.water_item.add_to(self.scene, under=self.force_item)
        view.scale_changed.connect(self.water_item.follow_zoom)  # its pixel-sized texts reach further zoomed out
        self.banner = Banner(view.viewport())
        self.legend = Legend(view.viewport())
        view.foreground_painters.append(self.legend.paint_on)
        view.foreground_areas.append(self.legend.areas)
        view.fit_reserves.append(lambda: (self.legend.width() + theme.LEGEND_MARGIN_PX,
                                          self.legend.height() + theme.LEGEND_MARGIN_PX) if self.legend.shown else (0, 0))
        view.viewport().installEventFilter(self)
        from sketchpad.zoom_pacing import ZoomPacer

        self.zoom_pacer = ZoomPacer(self)  # a wheel gesture re-places the labels once, when it stops
        self.rig: Rig | None = None  # the rig the drawn overlay belongs to
        self.result: Result | None = None  # the result drawn (the last good one when greyed)
        self.failed: Result | None = None  # the current failed result, if any
        self.zones: list = []
        self.pieces: list = []
        self.skipped = 0
        self.layer_actions: dict[str, QAction] = {}
        self._memo: dict = {}
        self._memo_scale = 0.0
        self._label_memo: dict = {}  # build_labels' reuse of unchanged labels between solves
        self._obstacles = ObstacleCache()  # the placer's obstacles, updated by difference between solves
        self._zones_due = True
        self._keep_hidden = False
        self._summary: list[str] = []  # summary_lines of the result drawn
        self._name_fm = QFontMetricsF(theme.font())
        self._name_box_cache: dict[tuple[str, str], tuple[float, float, float, float]] = {}
        self._name_box_of = PerPoint(self._name_box)  # name box of each point of the last rig
        self._shown_boxes: tuple = ([], None, [])  # (name boxes, shown_at, boxes moved to shown_at) of the last call
        self._markers_for: tuple = (None, None, [])  # (rig.points, result, markers) of the last call
        self._pos: tuple = (None, {})  # (result, its scene_positions) of the last rebuild
        #: How many placements continued the last one (only the labels that changed looked at again) and how
        #: many were made afresh: what tests read to see the fast path taken, never the placer's memo.
        self.placement_counts: dict[str, int] = {"continued": 0, "afresh": 0}

    # --- public -------------------------------------------------------------------------------------
    @property
    def labels(self) -> list[OverlayLabel]:
        """The label model (numbers and texts as drawn), for tests and reports."""
        return self.force_item.labels

    def forget_placement(self) -> None:
        """Drop what label placement keeps between calls (its memo, obstacles and kept labels): the next
        placement is made from scratch, as a freshly opened rig's is."""
        self._memo, self._obstacles = {}, ObstacleCache()

    @property
    def greyed(self) -> bool:
        return self.force_item.grey

    @property
    def banner_text(self) -> str:
        return self.banner.text() if not self.banner.isHidden() else ""

    def show_result(self, rig: Rig, result: Result, good_rig: Rig | None = None, good: Result | None = None,
                    settled: bool = True) -> None:
        """Draw ``result`` of ``rig``; if it failed, the banner names why and ``good`` (of ``good_rig``) is drawn greyed.

        ``settled`` is False for drag-time results: danger zones are then left as they were and
        redrawn with the settled result that follows once the drag pauses (``SolveScheduler``).
        """
        self._zones_due = settled or self.result is None
        self._keep_hidden = not settled  # a drag step: labels hidden at the last step stay hidden
        if settled:  # give labels skipped during a drag another try
            self._memo = {k: v for k, v in self._memo.items() if v[3] is not None}
        if result.ok:
            self.failed = None
            self.rig, self.result = rig, result
            self.banner.hide()
        else:
            self.failed = result
            self.rig, self.result = (good_rig, good) if good is not None and good.ok else (None, None)
            self.banner.setText(failure_text(result, rig) + ("  (last good result shown grey)" if self.result else ""))
            self.banner.place()
            self.banner.show()
        fail_point = None
        if not result.ok and result.subject and rig.has_point(result.subject):
            fail_point = scene_xy(rig.point(result.subject).xy)
        self.force_item.fail_point = fail_point
        self.water_item.show(rig, self.result, settled)
        self.rebuild()

    def set_layer(self, name: str, on: bool) -> None:
        if name not in self.layers:
            raise KeyError(name)
        self.layers[name] = bool(on)
        act = self.layer_actions.get(name)
        if act is not None and act.isChecked() != bool(on):
            act.setChecked(bool(on))
        self.rebuild()

    def make_layer_actions(self, parent: QObject) -> dict[str, QAction]:
        """Checkable actions (one per layer) for the View menu."""
        for name, text in LAYERS.items():
            act = QAction(text, parent)
            act.setCheckable(True)
            act.setChecked(self.layers[name])
            act.setObjectName(f"action_layer_{name}")
            self.layer_actions[name] = act
            act.toggled.connect(self._layers_from_actions)  # no-argument slot: reads every action
        return self.layer_actions

    def _layers_from_actions(self) -> None:
        wanted = {n: a.isChecked() for n, a in self.layer_actions.items()}
        if any(self.layers[n] != on for n, on in wanted.items()):
            self.layers.update(wanted)
            self.rebuild()

    # --- building -------------------------------------------------------------------------------------
    def rebuild(self) -> None:
        """Labels, bands, zones and legend from the current rig and result, then place labels."""
        grey = self.failed is not None
        for item in (self.force_item, self.zones_item):
            if item.grey != grey:  # a new look: Qt's cache of the item and the drag layer's still image must follow
                item.grey = grey
                item.update()
        if self.result is None or self.rig is None:
            self.force_item.bands, self.force_item.moved_points = [], []
            self.force_item.set_labels([], [], self._m_per_px())
            self.zones_item.set_zones([])
            self.legend.set_shown(False)
            self.scene.set_rope_names_in_overlay(False)  # the rope items name themselves again
            return
        rig, result = self.rig, self.result
        pos = scene_positions(rig, result)
        self._pos = (result, pos)
        self.pieces = self.force_item.set_bands(rig, result, pos)
        labels, arrows = build_labels(rig, result, [k for k, on in self.layers.items() if on], self._label_memo, pos)
        if self.layers["anchors"]:  # overloaded pulleys and edges marked like anchors (made again once a drag pauses)
            if getattr(self, "_zones_due", True) or not hasattr(self, "_hw_labels"):
                self._hw_labels = hardware_labels(rig, result, pos)
            labels = labels + self._hw_labels if self._hw_labels else labels
        pieces_labelled = self.layers["tensions"] or self.layers["stretch"]
        if pieces_labelled:
            labels = labels + rope_name_labels(rig, pos, self.__dict__.setdefault("_name_memo", {}))
        wet = water_labels(rig, result, self.__dict__.setdefault("_water_memo", {}), pos)
        if wet:  # wet-end tensions with the tensions, the current's push with the forces
            labels = labels + shown(wet, self.layers.__getitem__)
        self.scene.set_rope_names_in_overlay(pieces_labelled)
        self.force_item.labels, self.force_item.arrows = labels, arrows
        if self.layers["zones"] and not getattr(self, "_zones_due", True):
            pass  # a drag step: zones follow the settled result
        elif self.layers["zones"]:
            from solver.danger import danger_zones

            try:
                self.zones = danger_zones(rig, result)
            except Exception:  # noqa: BLE001 - a zone bug must not hide the forces
                log.exception("danger zones failed")
                self.zones = []
            self.zones_item.set_zones(self.zones)
        else:
            self.zones = []
            self.zones_item.set_zones(self.zones)
        self._zones_due = True
        self._summary = summary_lines(rig, result)
        self.relayout()
        self.legend.set_shown(True)

    def _update_legend(self) -> None:
        """The legend's lines: the system summary, how many labels the placer hid, and a failed solve."""
        lines = list(self._summary)
        if self.skipped:
            lines.append(f"{self.skipped} label{'s' if self.skipped != 1 else ''} hidden to avoid overlap: zoom in")
        grey = self.failed is not None
        if grey:
            lines.append(getattr(self, "grey_reason", "solve failed: last good result, greyed"))
        self.legend.set_content(lines, self.layers["zones"], grey)

    def _m_per_px(self) -> float:
        return 1.0 / max(self.view.px_per_m, 1e-12)

    def relayout(self) -> None:
        """Place the labels for the current zoom (pixel offsets are pan-invariant, so only zoom re-places)."""
        t = self.view.transform()
        m11, dx, dy = t.m11(), t.dx(), t.dy()

        def to_px(p: tuple[float, float]) -> tuple[float, float]:
            return (p[0] * m11 + dx, p[1] * m11 + dy)

        markers, boxes = [], []
        if self.rig is not None:
            boxes = self._name_boxes(self.rig) + self.water_item.text_boxes()  # keep off the speeds and sides
            boxes += self.__dict__.setdefault("_feature_boxes", FeatureNameBoxes()).of(self.scene, self.rig)
            markers = self._markers(self.rig, self.result)
        previous = self._memo if self._memo_scale == m11 else None
        frame = (m11, t.m22(), dx, dy)
        same = self._obstacles.frame == frame  # the last memo was made with this very to_px
        self.skipped = place_labels(self.force_item.labels, to_px, self.force_item.label_size, markers, self.pieces,
                                    boxes, previous, self._obstacles, frame,
                                    keep_hidden=self._keep_hidden)
        labels, kept = self.force_item.labels, self._obstacles.kept
        self.placement_counts["continued" if kept.touched is not None else "afresh"] += 1
        memo = kept.memo_for(labels, to_px, previous if same else None)
        self._memo = memo if memo is not None else placement_memo(labels, to_px, previous if same else None)
        kept.remember(labels, self._memo)
        self._memo_scale = m11
        self.force_item.refresh_rect(self._m_per_px())
        if self.result is not None and self.rig is not None:
            self._update_legend()  # after a zoom too: how many labels are hidden changes with it

    def _markers(self, rig: Rig, result: Result | None) -> list[tuple[float, float]]:
        """Scene points of every marker: each point where it is drawn and, if the solver moved it, where it was solved."""
        if self._markers_for[0] is rig.points and self._markers_for[1] is result:
            return self._markers_for[2]
        markers = list(self.force_item._drawn_positions(rig).values())
        if result is not None:
            if self._pos[0] is result:  # scene_positions' tuples: the same objects for points that did not move
                pos = self._pos[1]
                markers += [pos[pid] for pid in result.points]
            else:
                markers += [(float(x), -float(y)) for x, y in result.points.values()]
        markers = list(dict.fromkeys(markers))  # a fixed point's solved place is its drawn one
        self._markers_for = (rig.points, result, markers)
        return markers

    def _name_boxes(self, rig: Rig) -> list:
        """Pixel rects of the point names the canvas draws beside each marker (sketchpad.items.PointItem):
        (scene point, rect relative to it) per point, made again only for points that changed."""
        if len(self._name_box_cache) > 4 * len(rig.points) + 64:
            self._name_box_cache.clear()
        boxes = self._name_box_of.values(rig.points)
        at = getattr(self.scene, "shown_at", None)  # points drawn where the solver put them (sketchpad.solved_places)
        if not at:
            return boxes
        # the placer's obstacle cache takes an entry that is the very object of its last list as unchanged: a box
        # whose point and solved place are those of the last call is handed on as the same tuple (the scene keeps
        # its shown_at dict while no place in it changes)
        last_in, last_at, last_out = self._shown_boxes
        if last_at is at and last_in is boxes:
            return last_out
        if last_at is at and len(last_in) == len(boxes):
            out = [o if b is lb else (scene_xy(at[p.id]), b[1]) if p.id in at else b
                   for p, b, lb, o in zip(rig.points, boxes, last_in, last_out)]
        else:
            out = [(scene_xy(at[p.id]), b[1]) if p.id in at else b for p, b in zip(rig.points, boxes)]
        self._shown_boxes = (boxes, at, out)
        return out

    def _name_box(self, p) -> tuple:
        key = (p.name, p.kind)
        box = self._name_box_cache.get(key)
        if box is None:
            fm = self._name_fm
            r = theme.POINT_RADIUS_PX.get(p.kind, 5.0)
            box = self._name_box_cache[key] = (r + theme.LABEL_GAP_PX, -r - fm.ascent(), fm.horizontalAdvance(drawn(p.name)),
                                               fm.height())
        return (scene_xy(p.xy), box)

    def eventFilter(self, obj, event) -> bool:  # noqa: N802
        if event.type() == QEvent.Resize:
            self.legend.place()
            if not self.banner.isHidden():
                self.banner.place()
        return False
