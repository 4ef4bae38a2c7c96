"""Canvas tools: small state machines that turn mouse and key events into ``Document.apply`` edits.

The view (``sketchpad.canvas.SketchView``) routes press/move/release/double-click
and keys to the active tool; Esc calls :meth:`Tool.cancel` and the window returns
to the select tool.  Tools never write the rig: they build a new Rig with the
pure edit functions at the top of this module and push one command, so every
edit is undoable.  A drag shows its progress through ``Document.preview`` and
pushes a single command on release.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, replace

from PySide6.QtCore import QLineF, QPointF, QRectF, Qt
from PySide6.QtGui import QKeyEvent, QPainterPath, QPolygonF
from PySide6.QtWidgets import QGraphicsLineItem, QGraphicsPathItem, QGraphicsRectItem, QGraphicsSimpleTextItem, QGraphicsItem

from sketchpad import theme
from sketchpad.geometry import to_scene
from sketchpad.items import fmt_length
from solver.model import MIDDLE_HOWS, Feature, Force, Pass, Point, Rig, Rope
from solver.templates import capture_grab_for

log = logging.getLogger(__name__)

# --- defaults for new things (the planner edits each one in the property panel) ---------
ID_PREFIX = {"anchor": "A", "load": "L", "haul": "H", "point": "J", "person": "P"}
FEATURE_PREFIX = {"water": "W", "boulder": "R", "bank": "B", "hazard": "X", "note": "N"}
KIND_NAMES = {"anchor": "anchor", "load": "load", "haul": "haul team", "point": "free point", "person": "person"}
DEMO_HAUL_TEAM = 4  # demo default, the same team as the samples
DEMO_FORCE_PER_PERSON_N = 220.0  # demo default, the same as the samples; set the real value per team
DEMO_FORCE_N = 300.0  # demo default for a new external force; the planner types the real one
DRAG_THRESHOLD_PX = 4


@dataclass
class ToolDefaults:
    """What new ropes, passes, forces and features get unless the planner says otherwise."""

    how: str = "pulley"  # middle passes: tied | pulley | sliding | edge
    material: str = "kern-11"
    pulley_hardware: str = "pulley-large"
    edge_hardware: str = "edge-rock"
    feature_kind: str = "water"
    force_N: float = DEMO_FORCE_N


# --- pure edits: Rig in, Rig out ------------------------------------------------------------
def add_point(rig: Rig, kind: str, x: float, y: float) -> tuple[Rig, str]:
    """``rig`` with a new point of ``kind`` at site (x, y) metres, and the new id."""
    pid = rig.new_id(ID_PREFIX.get(kind, "J"))
    extra = {}
    if kind == "haul":
        extra = {"team": DEMO_HAUL_TEAM, "force_per_person_N": DEMO_FORCE_PER_PERSON_N}
    return rig.with_point(Point(pid, kind, float(x), float(y), **extra)), pid


def move_points(rig: Rig, ids, dx: float, dy: float) -> Rig:
    """``rig`` with the points ``ids`` moved by (dx, dy) metres."""
    for pid in ids:
        if rig.has_point(pid):
            p = rig.point(pid)
            rig = rig.moved(pid, p.x + dx, p.y + dy)
    return rig


def delete_keys(rig: Rig, keys) -> Rig:
    """``rig`` without the selected things and everything that depends on them (passes, forces, short ropes)."""
    keys = list(keys)
    force_idx = {k[1] for k in keys if k[0] == "force"}
    if force_idx:
        rig = replace(rig, forces=tuple(f for i, f in enumerate(rig.forces) if i not in force_idx))
    feature_ids = {k[1] for k in keys if k[0] == "feature"}
    if feature_ids:
        rig = replace(rig, site=replace(rig.site, features=tuple(f for f in rig.site.features if f.id not in feature_ids)))
    for k in keys:
        if k[0] == "rope":
            rig = rig.without_rope(k[1])
    for k in keys:
        if k[0] == "point" and rig.has_point(k[1]):
            rig = rig.without_point(k[1])
    return rig


def _spec_ok(rig: Rig, how: str, hw_id: str | None) -> bool:
    """True if ``hw_id`` names hardware (embedded or built-in) that a ``how`` pass can run over."""
    if not hw_id:
        return False
    try:
        from solver.materials import hardware_for

        hw = hardware_for(rig, hw_id)
    except Exception:  # unknown id (RigModelError) or no library: not usable
        return False
    if how == "edge":
        return hw.kind == "edge" and hw.friction_coefficient is not None
    return hw.kind != "edge" and hw.efficiency is not None


def hardware_options(rig: Rig, how: str) -> tuple[tuple[str, str], ...]:
    """(id, name) of every spec a ``how`` ("pulley" or "edge") pass can use: the rig's own first, then the library."""
    try:
        from solver.materials import LIBRARY_HARDWARE
    except ImportError:
        LIBRARY_HARDWARE = {}
    out: dict[str, str] = {}
    for hw in (*rig.hardware, *LIBRARY_HARDWARE.values()):
        if hw.id not in out and _spec_ok(rig, how, hw.id):
            out[hw.id] = hw.name  # the rig's own spec wins over a library one of the same id
    return tuple(out.items())


def pass_hardware(rig: Rig, how: str, defaults: ToolDefaults, wanted: str | None = None) -> str | None:
    """Hardware a new ``how`` pass names: ``wanted`` if it fits, else the toolbar's, else the first that fits.

    Pulley, capture (its pulley) and edge passes always name hardware (rig-format.md); tied,
    sliding and hauled passes name none.
    """
    if how == "capture":
        how = "pulley"
    if how not in ("pulley", "edge"):
        return None
    fallback = "pulley-large" if how == "pulley" else "edge-rock"
    toolbar = defaults.pulley_hardware if how == "pulley" else defaults.edge_hardware
    for candidate in (wanted, toolbar, fallback):
        if _spec_ok(rig, how, candidate):
            return candidate
    options = hardware_options(rig, how)
    return options[0][0] if options else fallback


def rope_material(rig: Rig, defaults: ToolDefaults) -> str:
    """The material id for a new rope: the toolbar's if the rig or the library has it, else kern-11."""
    if any(m.id == defaults.material for m in rig.materials):
        return defaults.material
    try:
        from solver.materials import LIBRARY_MATERIALS
    except ImportError:
        return defaults.material
    return defaults.material if defaults.material in LIBRARY_MATERIALS else "kern-11"


def finish_passes(rig: Rig, picks, defaults: ToolDefaults) -> tuple[Pass, ...]:
    """Passes for a rope clicked through ``picks`` = [(point id, how[, hardware])] that the file format accepts.

    The first pass is tied; the last is hauled at a haul team and tied anywhere
    else; middle passes keep their kind (anything else becomes tied); a point
    clicked twice in a row counts once; pulley and edge passes always name
    hardware that fits (:func:`pass_hardware`).
    """
    clean: list[tuple[str, str, str | None]] = []
    for pick in picks:
        pid, how = pick[0], pick[1]
        if clean and clean[-1][0] == pid:
            continue
        clean.append((pid, how, pick[2] if len(pick) > 2 else None))
    passes = []
    n = len(clean)
    for i, (pid, how, hw) in enumerate(clean):
        if i == 0:
            how = "tied"
        elif i == n - 1:
            how = "hauled" if rig.has_point(pid) and rig.point(pid).kind == "haul" else "tied"
        elif how not in MIDDLE_HOWS:
            how = "tied"
        grab = capture_grab_for(rig) if how == "capture" else None
        passes.append(Pass(pid, how, pass_hardware(rig, how, defaults, hw), grab=grab))
    return tuple(passes)


def add_rope(rig: Rig, passes: tuple[Pass, ...], material: str) -> tuple[Rig, str]:
    rid = rig.new_id("rope")
    return rig.with_rope(Rope(rid, material, tuple(passes))), rid


def add_force(rig: Rig, at: str, magnitude_N: float, direction_deg: float) -> Rig:
    return replace(rig, forces=rig.forces + (Force(at, float(magnitude_N), float(direction_deg)),))


def add_feature(rig: Rig, kind: str, coords, closed: bool) -> tuple[Rig, str]:
    fid = rig.new_id(FEATURE_PREFIX.get(kind, "F"))
    pts = tuple((float(x), float(y)) for x, y in coords)
    feature = Feature(fid, kind, polygon=pts if closed else None, line=None if closed else pts)
    return replace(rig, site=replace(rig.site, features=rig.site.features + (feature,))), fid


def set_display(rig: Rig, length: str, force: str) -> Rig:
    return replace(rig, display=replace(rig.display, length=length, force=force))


def with_article(noun: str) -> str:
    """``noun`` with "a" or "an" before it ("an anchor", "a load")."""
    return ("an " if noun[:1].lower() in "aeiou" else "a ") + noun


def how_for_modifiers(modifiers, default: str) -> str:
    """How a rope passes a clicked point: Ctrl tied, Shift pulley, Alt sliding, Ctrl+Shift edge, else ``default``."""
    ctrl = bool(modifiers & Qt.ControlModifier)
    shift = bool(modifiers & Qt.ShiftModifier)
    if ctrl and shift:
        return "edge"
    if ctrl:
        return "tied"
    if shift:
        return "pulley"
    if modifiers & Qt.AltModifier:
        return "sliding"
    return default


# --- tools ------------------------------------------------------------------------------------
class Tool:
    """Base tool: ignores everything; subclasses override the events they use."""

    name = "tool"
    label = "Tool"
    hint = ""
    cursor = Qt.CrossCursor

    def __init__(self, view) -> None:
        self.view = view

    @property
    def document(self):
        return self.view.document

    @property
    def scene(self):
        return self.view.sketch_scene

    @property
    def defaults(self) -> ToolDefaults:
        return self.view.defaults

    def status(self, text: str) -> None:
        self.view.status_message(text)

    def activate(self) -> None:
        self.status(self.hint)

    def deactivate(self) -> None:
        self.cancel()

    def press(self, ev) -> None: ...

    def move(self, ev) -> None: ...

    def release(self, ev) -> None: ...

    def double_click(self, ev) -> None: ...

    def key(self, event: QKeyEvent) -> bool:
        return False

    def overrides_shortcut(self, event: QKeyEvent) -> bool:
        """True if this key belongs to the tool now rather than to a window shortcut (e.g. Backspace)."""
        return False

    def finish(self) -> None: ...

    def cancel(self) -> bool:
        """Drop whatever is in progress; True if something was."""
        return False

    def _preview_item(self, item: QGraphicsItem) -> QGraphicsItem:
        item.setZValue(theme.Z_PREVIEW)
        self.scene.addItem(item)
        return item

    def _remove(self, item: QGraphicsItem | None) -> None:
        if item is not None and item.scene() is not None:
            item.scene().removeItem(item)


class SelectTool(Tool):
    """Click to select, Ctrl/Shift to add, rubber band on empty space, drag points (one command on release)."""

    name = "select"
    label = "Select / move"
    hint = "Click to select, drag to move points, drag on empty space to select an area. Delete removes."
    cursor = Qt.ArrowCursor

    def __init__(self, view) -> None:
        super().__init__(view)
        self._before: Rig | None = None
        self._drag_ids: list[str] = []
        self._grab: tuple[str, float, float] | None = None
        self._press_view = None
        self._moved = False
        self._band: QGraphicsRectItem | None = None
        self._band_origin: QPointF | None = None
        self._band_add = False

    def press(self, ev) -> None:
        if ev.button != Qt.LeftButton:
            return
        add = bool(ev.modifiers & (Qt.ControlModifier | Qt.ShiftModifier))
        pid = self.view.pick_point(ev.view_pos)
        if pid is not None:
            item = self.scene.item_for(("point", pid))
            if add and item.isSelected():
                item.setSelected(False)
                return
            if not item.isSelected():
                self.scene.select_keys([("point", pid)], add=add)
            self._before = self.document.rig
            self._drag_ids = [k[1] for k in self.scene.selected_keys() if k[0] == "point"]
            p = self._before.point(pid)
            self._grab = (pid, p.x, p.y)
            self._press_view = ev.view_pos
            self._moved = False
            return
        item = self.view.item_at(ev.view_pos)
        if item is not None:
            if add:
                item.setSelected(not item.isSelected())
            else:
                self.scene.select_keys([item.key])
            return
        if not add:
            self.scene.clearSelection()
        self._band_add = add
        self._band_origin = ev.scene_pos
        self._band = self._preview_item(QGraphicsRectItem(QRectF(ev.scene_pos, ev.scene_pos)))
        self._band.setPen(theme.cosmetic_pen(theme.PREVIEW, 1.0, Qt.DashLine))
        self._band.setBrush(theme.RUBBER_BAND_FILL)

    def move(self, ev) -> None:
        if self._grab is not None and self._before is not None:
            if not self._moved:
                d = ev.view_pos - self._press_view
                if abs(d.x()) + abs(d.y()) < DRAG_THRESHOLD_PX:
                    return
                self._moved = True
            pid, x0, y0 = self._grab
            x, y = self.view.snap(ev.scene_pos, exclude=set(self._drag_ids))
            new = move_points(self._before, self._drag_ids, x - x0, y - y0)
            if new != self.document.rig:
                self.document.preview(new)
            self.status(f"Moving {self._describe()}: {fmt_length(x, self.view.length_unit)}, {fmt_length(y, self.view.length_unit)}")
        elif self._band is not None:
            self._band.setRect(QRectF(self._band_origin, ev.scene_pos).normalized())

    def _describe(self) -> str:
        if len(self._drag_ids) == 1:
            return self._before.point(self._drag_ids[0]).name
        return f"{len(self._drag_ids)} points"

    def release(self, ev) -> None:
        if self._grab is not None and self._before is not None:
            before, self._before, self._grab = self._before, None, None
            if self._moved:
                what = self._describe_ids(before)
                self.document.apply(self.document.rig, f"Move {what}", before=before)
                self.status(f"Moved {what}.")
            self._drag_ids = []
            return
        if self._band is not None:
            rect = self._band.rect()
            self._remove(self._band)
            self._band = None
            hits = self.scene.items(rect, Qt.IntersectsItemShape, Qt.DescendingOrder, self.view.transform())
            keys = [it.key for it in hits if hasattr(it, "key")]
            self.scene.select_keys(keys, add=True)

    def _describe_ids(self, rig: Rig) -> str:
        if len(self._drag_ids) == 1 and rig.has_point(self._drag_ids[0]):
            return rig.point(self._drag_ids[0]).name
        return f"{len(self._drag_ids)} points"

    def cancel(self) -> bool:
        if self._grab is not None and self._before is not None:
            if self.document.rig != self._before:
                self.document.preview(self._before)  # Esc during a drag: back to the press-time rig
            self._before, self._grab, self._drag_ids = None, None, []
            self.status("Move cancelled")
            return True
        if self._band is not None:
            self._remove(self._band)
            self._band = None
            return True
        return False


class PlacePointTool(Tool):
    """Click to place a point of one kind (anchor, load, haul team, free point, person)."""

    def __init__(self, view, kind: str) -> None:
        super().__init__(view)
        self.kind = kind
        self.name = f"place-{kind}"
        self.label = f"Place {KIND_NAMES[kind]}"
        self.hint = f"Click to place {with_article(KIND_NAMES[kind])}. Esc returns to select."

    def press(self, ev) -> None:
        if ev.button != Qt.LeftButton:
            return
        x, y = self.view.snap(ev.scene_pos)
        if self.view.pick_point(self.view.mapFromScene(to_scene(x, y))) is not None and self.view.snap_to_points:
            self.status("A point is already there: place it somewhere else or turn point snapping off.")
            return
        rig, pid = add_point(self.document.rig, self.kind, x, y)
        self.document.apply(rig, f"Place {KIND_NAMES[self.kind]} {pid}")
        self.scene.select_keys([("point", pid)])


class RopeTool(Tool):
    """Click through points to lay a rope from the load end; only ever commits a rope the file format accepts.

    Empty space makes a free point (pass kind from the modifier keys or the
    toolbar).  A plain click on an existing point asks how the rope passes it
    (:mod:`sketchpad.pass_chooser`) once the double-click time has gone by; a
    modifier skips the question (Shift pulley, Ctrl tied, Alt sliding, Ctrl+Shift
    edge).  A haul team ends the rope hauled; Enter or a double-click ends it
    tied.  Right-click or Backspace takes back the last pass; Esc drops the rope.
    A dashed line runs from the last pass to the cursor.
    """

    name = "rope"
    label = "Draw rope"
    hint = ("Draw from the load end: click the load, then each point the rope runs over, then the haul team. "
            "At each point choose how the rope passes it: over a pulley (Shift+click), tied (Ctrl), through a "
            "ring (Alt), over an edge (Ctrl+Shift), or pick in the menu a plain click opens; 'Passes points as' "
            "in the tool bar sets the usual choice. Empty space makes a free point. Enter or double-click ends; "
            "right-click or Backspace takes back the last pass.")

    def __init__(self, view) -> None:
        super().__init__(view)
        self._start: Rig | None = None
        self._work: Rig | None = None  # start + the free points made so far
        self._picks: list[tuple[str, str, str | None]] = []  # (point id, how, hardware)
        self._created: list[str] = []  # free points this rope made, in order
        self._line: QGraphicsLineItem | None = None
        self._cursor: QPointF | None = None
        self._hover: str | None = None
        self.chooser = None  # a pass_chooser.Chooser; None: the popup menu, made on first use
        self.chooser_delay_ms: int | None = None  # None: the platform's double-click time
        self._timer = None
        self._asking: int | None = None  # serial of the open question, if any
        self._serial = 0
        self._global_pos = None  # screen position of the click the chooser asks about

    @property
    def active(self) -> bool:
        return self._start is not None

    @property
    def picks(self) -> list[tuple[str, str, str | None]]:
        """The passes clicked so far: (point id, how, hardware)."""
        return list(self._picks)

    @property
    def asking(self) -> bool:
        """True while a click waits for the pass chooser (or for the double-click time)."""
        return self._asking is not None or (self._timer is not None and self._timer.isActive())

    # --- clicks -----------------------------------------------------------------------------
    def press(self, ev) -> None:
        if ev.button == Qt.RightButton:
            if self.active:
                self.take_back()
            return
        if ev.button != Qt.LeftButton:
            return
        self._settle_question()
        pid = self.view.pick_point(ev.view_pos)
        rig = self._work if self._work is not None else self.document.rig
        if pid is not None and rig.point(pid).kind == "person":
            self.status(f"{rig.point(pid).name} marks a person, not part of the rig: a rope cannot pass there.")
            return
        if pid is None:
            x, y = self.view.snap(ev.scene_pos)
            pid = self._point_at(rig, x, y)
            if pid is not None and rig.point(pid).kind == "person":
                self.status(f"{rig.point(pid).name} marks a person, not part of the rig: a rope cannot pass there.")
                return
        if pid is not None and self._picks and self._picks[-1][0] == pid:
            self.status(f"The rope is already at {rig.point(pid).name}: a rope cannot pass the same point twice "
                        "in a row. Click the next point, or Enter to end here.")
            return
        if self._start is None:
            self._start = self.document.rig
            self._work = self._start
        if pid is None:
            self._work, pid = add_point(self._work, "point", x, y)
            self._created.append(pid)
            self._add_pick(pid, how_for_modifiers(ev.modifiers, self.defaults.how))
            return
        point = self._work.point(pid)
        if not self._picks:
            self._add_pick(pid, "tied")
            return
        if point.kind == "haul":
            self._add_pick(pid, "hauled")
            self.finish()
            return
        if point.kind == "load" and self._started_at_haul():
            self._add_pick(pid, "tied")  # drawn from the haul team: the load ends it (turned round on finishing)
            self.finish()
            return
        how = how_for_modifiers(ev.modifiers, "")
        if how:
            self._add_pick(pid, how)
            return
        self._add_pick(pid, self.defaults.how)  # shown as the default while the chooser asks
        self._ask_later(ev)

    def _started_at_haul(self) -> bool:
        """True if the rope being drawn began at a haul team (drawn toward the load)."""
        return bool(self._picks) and self._work.point(self._picks[0][0]).kind == "haul"

    @staticmethod
    def _point_at(rig: Rig, x: float, y: float) -> str | None:
        """An existing point exactly at site (x, y) (a grid snap can land on one), else None."""
        for p in rig.points:
            if math.isclose(p.x, x, abs_tol=1e-9) and math.isclose(p.y, y, abs_tol=1e-9):
                return p.id
        return None

    def _add_pick(self, pid: str, how: str, hardware: str | None = None) -> None:
        self._picks.append((pid, how, pass_hardware(self._work, how, self.defaults, hardware)))
        self._show()

    def double_click(self, ev) -> None:
        self.finish()

    def take_back(self) -> None:
        """Remove the last pass (and the free point it made, if nothing else uses it); none left drops the rope."""
        if not self._picks:
            return
        self._drop_question()
        pid = self._picks.pop()[0]
        name = self._work.point(pid).name if self._work.has_point(pid) else pid
        if pid in self._created and all(p[0] != pid for p in self._picks):
            self._created.remove(pid)
            self._work = self._work.without_point(pid)
        if not self._picks:
            self.cancel()
            self.status(f"Took back {name}: no rope left.")
            return
        self._show(f"Took back {name}. ")

    def key(self, event: QKeyEvent) -> bool:
        if event.key() == Qt.Key_Backspace and self.active:
            self.take_back()
            return True
        return False

    def overrides_shortcut(self, event: QKeyEvent) -> bool:
        """Backspace takes back a pass while a rope is being drawn (instead of deleting the selection)."""
        return event.key() == Qt.Key_Backspace and event.modifiers() == Qt.NoModifier and self.active

    # --- the pass chooser -------------------------------------------------------------------
    def _ask_later(self, ev) -> None:
        """Ask how the rope passes the point just clicked, after the double-click time (a double-click ends there)."""
        from PySide6.QtCore import QTimer
        from PySide6.QtWidgets import QApplication

        delay = self.chooser_delay_ms
        if delay is None:
            delay = QApplication.doubleClickInterval()
        self._global_pos = self.view.viewport().mapToGlobal(ev.view_pos)
        if delay <= 0:
            self._ask()
            return
        if self._timer is None:
            self._timer = QTimer(self.view)
            self._timer.setSingleShot(True)
            self._timer.timeout.connect(self._ask)
        self._timer.start(delay)

    def _ask(self) -> None:
        if not self._picks:
            return
        from sketchpad.pass_chooser import PassRequest, PopupChooser

        if self.chooser is None:
            self.chooser = PopupChooser(self.view.viewport())
        pid, how, _hw = self._picks[-1]
        d = self.defaults
        request = PassRequest(
            point_id=pid, point_name=self._work.point(pid).name, default_how=d.how,
            pulley_hardware=pass_hardware(self._work, "pulley", d), edge_hardware=pass_hardware(self._work, "edge", d),
            pulley_options=hardware_options(self._work, "pulley"), edge_options=hardware_options(self._work, "edge"),
            global_pos=self._global_pos)
        self._serial += 1
        serial = self._serial
        self._asking = serial
        self.status(f"How does the rope pass {request.point_name}? Pick in the menu; Esc drops the click.")
        self.chooser(request, lambda choice: self._answered(serial, choice))

    def _answered(self, serial: int, choice) -> None:
        if serial != self._asking or not self._picks:
            return  # the rope moved on (finished, cancelled, taken back) while the question was open
        self._asking = None
        pid = self._picks[-1][0]
        name = self._work.point(pid).name
        if choice is None:
            self._picks.pop()
            if not self._picks:
                self.cancel()
                self.status(f"Click on {name} dropped.")
                return
            self._show(f"Click on {name} dropped. ")
            return
        if choice.end:
            self._picks[-1] = (pid, "tied", None)
            self.finish()
            return
        how = choice.how if choice.how in MIDDLE_HOWS else "tied"
        self._picks[-1] = (pid, how, pass_hardware(self._work, how, self.defaults, choice.hardware))
        self._show()

    def _settle_question(self) -> None:
        """A new click while a question is pending: the pending pass keeps the default kind."""
        if self._timer is not None and self._timer.isActive():
            self._timer.stop()
        self._close_chooser()

    def _drop_question(self) -> None:
        if self._timer is not None:
            self._timer.stop()
        self._close_chooser()

    def _close_chooser(self) -> None:
        self._asking = None
        close = getattr(self.chooser, "close", None)
        if callable(close):
            close()

    # --- preview ----------------------------------------------------------------------------
    def _with_rope(self) -> Rig:
        if len(self._picks) < 2:
            return self._work
        rig, _ = add_rope(self._work, finish_passes(self._work, self._picks, self.defaults),
                          rope_material(self._work, self.defaults))
        return rig

    def _describe(self) -> str:
        parts = []
        for i, (pid, how, hw) in enumerate(self._picks):
            name = self._work.point(pid).name
            if 0 < i:
                parts.append(f"{name} ({how if how != 'pulley' and how != 'edge' else hw})")
            else:
                parts.append(name)
        return " → ".join(parts)

    def _show(self, prefix: str = "") -> None:
        self.document.preview(self._with_rope(), sketching=True)
        if self._line is None:
            self._line = self._preview_item(QGraphicsLineItem())
            self._line.setPen(theme.cosmetic_pen(theme.PREVIEW, 1.5, Qt.DashLine))
        self._update_line()
        self.status(f"{prefix}Rope: {self._describe()} · Enter ends · Backspace takes back")

    def _update_line(self) -> None:
        if self._line is None:
            return
        if not self._picks or self._cursor is None:
            self._line.setVisible(False)
            return
        p = self._work.point(self._picks[-1][0])
        x, y = self.view.snap(self._cursor)
        self._line.setLine(QLineF(to_scene(p.x, p.y), to_scene(x, y)))
        self._line.setVisible(True)

    def move(self, ev) -> None:
        self._cursor = ev.scene_pos
        self._update_line()
        if not self.active:
            return
        pid = self.view.pick_point(ev.view_pos)
        if pid == self._hover:
            return
        self._hover = pid
        if pid is None or not self._work.has_point(pid):
            return
        p = self._work.point(pid)
        if p.kind == "person":
            self.status(f"{p.name} marks a person: a rope cannot pass there.")
        elif self._picks and self._picks[-1][0] == pid:
            self.status(f"The rope is already at {p.name}.")
        elif p.kind == "haul":
            self.status(f"Click to end the rope hauled by the team at {p.name}.")

    # --- ending -----------------------------------------------------------------------------
    def finish(self) -> None:
        if self._start is None:
            return
        self._drop_question()
        if len(self._picks) < 2:
            self.cancel()
            self.status("A rope needs at least two points: nothing was drawn.")
            return
        turned = self._started_at_haul() and self._work.point(self._picks[-1][0]).kind != "haul"
        if turned:  # ropes run from the load end to the haul team: the same rope, one edit
            self._picks.reverse()
        rig = self._with_rope()
        start = self._start
        self._reset()
        rid = rig.ropes[-1].id
        self.document.apply(rig, f"Draw rope {rid}", before=start)
        self.scene.select_keys([("rope", rid)])
        if turned:
            rope = rig.ropes[-1]
            self.status(f"Drew {rid} from {rig.point(rope.path[0].at).name} to the haul team at "
                        f"{rig.point(rope.path[-1].at).name}: ropes run from the load end, so it was turned round.")
        else:
            self.status(f"Drew {rid}. Click the start of the next rope, or Esc.")

    def _reset(self) -> None:
        self._drop_question()
        self._start, self._work, self._picks, self._created = None, None, [], []
        self._hover = None
        self._remove(self._line)
        self._line = None

    def deactivate(self) -> None:
        self.finish()  # switching tools keeps what was drawn

    def cancel(self) -> bool:
        if self._start is None:
            self._drop_question()
            return False
        start = self._start
        self._reset()
        if self.document.rig != start:
            self.document.preview(start)
        return True


class ForceTool(Tool):
    """Drag from a free point to add an external force in that direction (default size from the toolbar)."""

    name = "force"
    label = "Add force"
    hint = "Drag from a free point in the direction of the pull. Edit the size in the property panel."

    def __init__(self, view) -> None:
        super().__init__(view)
        self._at: str | None = None
        self._line: QGraphicsLineItem | None = None

    def press(self, ev) -> None:
        if ev.button != Qt.LeftButton:
            return
        pid = self.view.pick_point(ev.view_pos)
        if pid is None:
            self.status("Press on a free point and drag toward the pull.")
            return
        if self.document.rig.point(pid).is_fixed:
            self.status("Forces go on free points; anchors, loads and haul points are held still.")
            return
        self._at = pid
        p = self.document.rig.point(pid)
        self._line = self._preview_item(QGraphicsLineItem(QLineF(to_scene(p.x, p.y), ev.scene_pos)))
        self._line.setPen(theme.cosmetic_pen(theme.FORCE_COLOUR, 2.0, Qt.DashLine))

    def move(self, ev) -> None:
        if self._line is not None:
            line = self._line.line()
            self._line.setLine(QLineF(line.p1(), ev.scene_pos))

    def release(self, ev) -> None:
        if self._at is None:
            return
        at, line = self._at, self._line.line()
        self.cancel()
        start = self.view.mapFromScene(line.p1())
        if math.hypot(ev.view_pos.x() - start.x(), ev.view_pos.y() - start.y()) < DRAG_THRESHOLD_PX * 2:
            self.status("Drag further to give the force a direction.")
            return
        d = ev.scene_pos - line.p1()
        angle = math.degrees(math.atan2(-d.y(), d.x()))  # scene y is down, site y is up
        self.document.apply(add_force(self.document.rig, at, self.defaults.force_N, round(angle, 1)),
                            f"Add force at {self.document.rig.point(at).name}")

    def cancel(self) -> bool:
        busy = self._at is not None
        self._at = None
        self._remove(self._line)
        self._line = None
        return busy


class FeatureTool(Tool):
    """Click the corners of a site feature (kind from the toolbar); Enter or double-click closes it."""

    name = "feature"
    label = "Draw site feature"
    hint = "Click the corners of the water, boulder, bank or hazard. Enter or double-click finishes."

    def __init__(self, view) -> None:
        super().__init__(view)
        self._coords: list[tuple[float, float]] = []
        self._path: QGraphicsPathItem | None = None
        self._cursor: QPointF | None = None

    def closed(self) -> bool:
        return self.defaults.feature_kind not in ("bank", "note")

    def press(self, ev) -> None:
        if ev.button != Qt.LeftButton:
            return
        xy = self.view.snap(ev.scene_pos)
        if self._coords and self._coords[-1] == xy:
            return
        self._coords.append(xy)
        self._redraw()

    def move(self, ev) -> None:
        self._cursor = ev.scene_pos
        if self._coords:
            self._redraw()

    def _redraw(self) -> None:
        if self._path is None:
            self._path = self._preview_item(QGraphicsPathItem())
            self._path.setPen(theme.cosmetic_pen(theme.PREVIEW, 1.5, Qt.DashLine))
        pts = [to_scene(x, y) for x, y in self._coords] + ([self._cursor] if self._cursor is not None else [])
        path = QPainterPath()
        path.addPolygon(QPolygonF(pts))
        self._path.setPath(path)

    def double_click(self, ev) -> None:
        self.finish()

    def finish(self) -> None:
        need = 3 if self.closed() else 2
        coords = list(self._coords)
        kind = self.defaults.feature_kind
        self.cancel()
        if len(coords) < need:
            if coords:
                self.status(f"A {kind} needs at least {need} corners.")
            return
        rig, fid = add_feature(self.document.rig, kind, coords, self.closed())
        self.document.apply(rig, f"Draw {kind} {fid}")

    def deactivate(self) -> None:
        self.finish()

    def cancel(self) -> bool:
        busy = bool(self._coords)
        self._coords = []
        self._cursor = None
        self._remove(self._path)
        self._path = None
        return busy


class MeasureTool(Tool):
    """Drag to measure a straight distance; shown on the canvas and in the status bar in display units."""

    name = "measure"
    label = "Measure"
    hint = "Drag between two places to measure the distance."

    def __init__(self, view) -> None:
        super().__init__(view)
        self._origin: tuple[float, float] | None = None
        self._line: QGraphicsLineItem | None = None
        self._text: QGraphicsSimpleTextItem | None = None
        self.last_m: float | None = None
        self._dragging = False

    def press(self, ev) -> None:
        if ev.button != Qt.LeftButton:
            return
        self.cancel()
        self._origin = self.view.snap(ev.scene_pos)
        self._line = self._preview_item(QGraphicsLineItem())
        self._line.setPen(theme.cosmetic_pen(theme.MEASURE, 1.5, Qt.DashDotLine))
        self._text = self._preview_item(QGraphicsSimpleTextItem())
        self._text.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self._text.setFont(theme.font(theme.LABEL_POINT_SIZE, bold=True))
        self._text.setBrush(theme.MEASURE)
        self._dragging = True
        self._update(ev)

    def _update(self, ev) -> None:
        x0, y0 = self._origin
        x1, y1 = self.view.snap(ev.scene_pos)
        self.last_m = math.hypot(x1 - x0, y1 - y0)
        a, b = to_scene(x0, y0), to_scene(x1, y1)
        self._line.setLine(QLineF(a, b))
        text = fmt_length(self.last_m, self.view.length_unit)
        self._text.setText(text)
        self._text.setPos((a + b) * 0.5)
        self.status(f"Distance: {text}")

    def move(self, ev) -> None:
        if self._dragging:
            self._update(ev)

    def release(self, ev) -> None:
        if self._dragging:
            self._update(ev)
            self._dragging = False  # the measurement stays shown until the next press or Esc

    def cancel(self) -> bool:
        busy = self._line is not None
        self._origin = None
        self._dragging = False
        self._remove(self._line)
        self._remove(self._text)
        self._line, self._text = None, None
        return busy


def make_tools(view) -> dict[str, Tool]:
    """Every tool, by name, for one view."""
    tools: list[Tool] = [SelectTool(view)]
    tools += [PlacePointTool(view, k) for k in ("anchor", "load", "haul", "point", "person")]
    tools += [RopeTool(view), ForceTool(view), FeatureTool(view), MeasureTool(view)]
    return {t.name: t for t in tools}
