"""Insert ▸ System: place a ready-made rig (3:1, compound, vector pull, anchor systems) by clicking the site.

Choosing a system starts :class:`SystemPickTool`, a small state machine: click the
load, the anchor (and any further anchors), then where the haul team stands; the
status bar says what to click next and Esc drops the picks without touching the
rig.  The system is built by :func:`solver.templates.place_template` and pushed as
one undoable ``Document.apply`` edit, after which it is an ordinary drawing.
:class:`SystemDialog` does the same from the keyboard: a list of systems with
their nominal mechanical advantage (strand count) and description, and combos for the points.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass, field

from PySide6.QtCore import QLineF, Qt
from PySide6.QtGui import QAction, QPainterPath
from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QGraphicsLineItem,
    QGraphicsPathItem,
    QHBoxLayout,
    QLabel,
    QHeaderView,
    QTreeWidget,
    QTreeWidgetItem,
    QMenu,
    QToolBar,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from sketchpad import theme
from sketchpad.fields import ERROR_STYLE
from sketchpad.geometry import to_scene
from sketchpad.plain_text import bold, escaped, plain_label, rich_label
from sketchpad.tools import Tool
from solver.errors import RopewrightError
from solver.model import Point, Rig
from solver.templates import TEMPLATES, Template, new_ids, place_template

log = logging.getLogger(__name__)

TOOL_NAME = "place-system"
PICK_MARK_PX = 13.0  # ring drawn round each picked point, pixels


def ma_text(tpl: Template) -> str:
    """The nominal mechanical advantage (the strand count, solver.nominal_ma) as a planner writes it ("3:1"),
    or words when it depends on the geometry."""
    if tpl.ma_ideal is None:
        return "depends on angle" if tpl.name.startswith("vector") else "—"
    return f"{tpl.ma_ideal:g}:1"


def menu_text(tpl: Template) -> str:
    """A system's menu entry: its title, with its MA when the title does not already say it ("Redirect (1:1)")."""
    ma = ma_text(tpl)
    if tpl.ma_ideal is None:
        return f"{tpl.title}, MA {ma}" if tpl.name.startswith("vector") else tpl.title
    return tpl.title if tpl.title.startswith(ma) else f"{tpl.title} ({ma})"


def needs_load(tpl: Template) -> bool:
    return "load" in tpl.needs


def may_load(tpl: Template) -> bool:
    return "load?" in tpl.needs


def may_haul(tpl: Template) -> bool:
    return "haul?" in tpl.needs


def can_anchor(p: Point) -> bool:
    """A point that can hold a system: fixed, and not the load or a haul team."""
    return p.is_fixed and p.kind not in ("load", "haul", "person")


@dataclass
class Picks:
    """What has been clicked so far for one system (point ids, a haul place in site metres)."""

    load: str | None = None
    anchor: str | None = None
    extras: list[str] = field(default_factory=list)
    haul_at: tuple[float, float] | None = None
    haul_id: str | None = None
    master_at: tuple[float, float] | None = None  # anchor systems: where the master point goes

    def ids(self) -> list[str]:
        return [i for i in (self.load, self.anchor, *self.extras, self.haul_id) if i]


def next_prompt(tpl: Template, picks: Picks, rig: Rig) -> str:
    """What the planner should click next, in words (shown in the status bar)."""
    lo, hi = tpl.extra_anchors
    title = tpl.title
    if needs_load(tpl) and picks.load is None:
        return f"{title}: click the load."
    if picks.anchor is None:
        which = " (the main one)" if hi and needs_load(tpl) else " 1" if hi else ""
        return f"{title}: click anchor{which}." if which == " 1" else f"{title}: click the anchor{which}."
    if len(picks.extras) < lo:
        n = len(picks.extras) + 2
        return f"{title}: click anchor {n}."
    options = []
    if len(picks.extras) < hi:
        options.append("another anchor" + (" for the second stage" if needs_load(tpl) else ""))
    if may_load(tpl) and picks.load is None:
        options += ["the load", "where the master point goes"]
    if may_haul(tpl):
        options.append("where the puller stands" if tpl.name.startswith("vector") else "where the haul team stands")
    choice = options[0] if len(options) == 1 else ", ".join(options[:-1]) + " or " + options[-1]
    return f"{title}: click {choice}. Enter: defaults. Esc: cancel."


def complete(tpl: Template, picks: Picks) -> bool:
    """True when nothing more can be picked: the system is placed at once."""
    lo, hi = tpl.extra_anchors
    if (needs_load(tpl) and picks.load is None) or picks.anchor is None or len(picks.extras) < lo:
        return False
    if may_haul(tpl) and (picks.haul_at is not None or picks.haul_id is not None):
        return True
    if may_load(tpl) and (picks.load is not None or picks.master_at is not None):
        return True
    return not may_haul(tpl) and not may_load(tpl) and len(picks.extras) >= hi


def ready(tpl: Template, picks: Picks) -> bool:
    """True when every required point is picked (Enter may place with defaults for the rest)."""
    lo, _hi = tpl.extra_anchors
    return not ((needs_load(tpl) and picks.load is None) or picks.anchor is None or len(picks.extras) < lo)


def build(rig: Rig, name: str, picks: Picks, material: str, hardware: str) -> Rig:
    """The rig with system ``name`` placed at ``picks``; RigModelError in words if it cannot be."""
    options = {"master_at": picks.master_at} if picks.master_at is not None else {}
    return place_template(rig, name, load_id=picks.load, anchor_id=picks.anchor or "",
                          haul_at=picks.haul_at, haul_id=picks.haul_id,
                          extra_anchor_ids=tuple(picks.extras), material=material, hardware=hardware, **options)


class SystemPickTool(Tool):
    """Click the load, the anchor(s) and the haul place; the system is placed as one undoable edit."""

    name = TOOL_NAME
    label = "Place system"
    hint = "Choose a system from Insert ▸ System first."

    def __init__(self, view) -> None:
        super().__init__(view)
        self.template = "3:1"
        self.picks = Picks()
        self._marks: QGraphicsPathItem | None = None
        self._rubber: QGraphicsLineItem | None = None
        self.last_error = ""

    @property
    def tpl(self) -> Template:
        return TEMPLATES[self.template]

    def start(self, name: str) -> None:
        self.cancel()
        self.template = name

    def activate(self) -> None:
        self.picks = Picks()
        self.status(next_prompt(self.tpl, self.picks, self.document.rig))

    # --- events ------------------------------------------------------------------------
    def press(self, ev) -> None:
        if ev.button != Qt.LeftButton:
            return
        rig = self.document.rig
        tpl, picks = self.tpl, self.picks
        pid = self.view.pick_point(ev.view_pos)
        p = rig.point(pid) if pid is not None else None
        lo, hi = tpl.extra_anchors
        problem = ""
        if needs_load(tpl) and picks.load is None:
            if p is None or p.kind != "load":
                problem = "That is not a load: click the orange load marker (place one with L first)."
            else:
                picks.load = pid
        elif picks.anchor is None:
            if p is None or not can_anchor(p):
                problem = "That is not an anchor: click a fixed anchor (place one with A first)."
            else:
                picks.anchor = pid
        elif len(picks.extras) < lo:
            problem = self._take_extra(p)
        elif p is not None and can_anchor(p) and len(picks.extras) < hi and pid not in picks.ids():
            problem = self._take_extra(p)
        elif may_load(tpl) and picks.load is None and p is not None and p.kind == "load":
            picks.load = pid
        elif may_haul(tpl) and p is not None and p.kind == "haul" and tpl.name not in ("vector-pull", "vector-pull-capture"):
            picks.haul_id = pid
        elif may_haul(tpl) and p is None:
            picks.haul_at = self.view.snap(ev.scene_pos)
        elif may_load(tpl) and picks.load is None and p is None:
            picks.master_at = self.view.snap(ev.scene_pos)
        elif p is not None:
            problem = f"'{p.name}' is already in this system or cannot be used here. " + next_prompt(tpl, picks, rig)
        else:
            problem = next_prompt(tpl, picks, rig)
        if problem:
            self.status(problem)
            return
        self._show_marks()
        if complete(tpl, picks):
            self.place()
        else:
            self.status(next_prompt(tpl, picks, rig))

    def _take_extra(self, p: Point | None) -> str:
        if p is None or not can_anchor(p):
            return "That is not an anchor: click another fixed anchor."
        if p.id in self.picks.ids():
            return f"'{p.name}' is already picked: click a different anchor."
        self.picks.extras.append(p.id)
        return ""

    def move(self, ev) -> None:
        last = self._last_xy()
        if last is None:
            return
        if self._rubber is None:
            self._rubber = self._preview_item(QGraphicsLineItem())
            self._rubber.setPen(theme.cosmetic_pen(theme.PREVIEW, 1.5, Qt.DashLine))
        self._rubber.setLine(QLineF(to_scene(*last), ev.scene_pos))

    def _last_xy(self) -> tuple[float, float] | None:
        ids = self.picks.ids()
        if not ids:
            return None
        return self.document.rig.point(ids[-1]).xy

    def _show_marks(self) -> None:
        """Rings round every picked point, drawn in pixels so they read at any zoom."""
        if self._marks is None:
            self._marks = self._preview_item(QGraphicsPathItem())
            self._marks.setPen(theme.cosmetic_pen(theme.PREVIEW, 2.0))
        r = PICK_MARK_PX / max(self.view.px_per_m, 1e-9)
        path = QPainterPath()
        rig = self.document.rig
        for pid in self.picks.ids():
            q = to_scene(*rig.point(pid).xy)
            path.addEllipse(q, r, r)
        self._marks.setPath(path)

    def finish(self) -> None:
        """Enter: place with defaults for what was not picked, if everything required is there."""
        if not ready(self.tpl, self.picks):
            self.status("Not yet: " + next_prompt(self.tpl, self.picks, self.document.rig))
            return
        self.place()

    def place(self) -> bool:
        """Build the system from the picks and push it as one edit; False (rig untouched) with a message if it fails."""
        rig = self.document.rig
        picks, name = self.picks, self.template
        self._clear_preview()
        self.picks = Picks()
        defaults = self.defaults
        try:
            new = build(rig, name, picks, defaults.material, defaults.pulley_hardware)
        except RopewrightError as exc:
            self.last_error = exc.message if hasattr(exc, "message") else str(exc)
            self.status(f"Could not place {TEMPLATES[name].title}: {self.last_error}")
            return False
        self.last_error = ""
        self.document.apply(new, f"Place {TEMPLATES[name].title}")
        points, ropes = new_ids(rig, new)
        self.scene.select_keys([("point", i) for i in sorted(points)] + [("rope", i) for i in sorted(ropes)])
        note = ("Nothing pulls on the master point yet: draw a rope from the load to it. "
                if may_load(TEMPLATES[name]) and picks.load is None else "")
        self.status(f"Placed {TEMPLATES[name].title}: {len(points)} new points, {len(ropes)} ropes. {note}"
                    "Edit it like any drawing; Ctrl+Z removes it.")
        return True

    def _clear_preview(self) -> None:
        self._remove(self._marks)
        self._remove(self._rubber)
        self._marks, self._rubber = None, None

    def cancel(self) -> bool:
        busy = bool(self.picks.ids()) or self.picks.haul_at is not None
        self.picks = Picks()
        self._clear_preview()
        if busy:
            self.status(f"{self.tpl.title}: cancelled, nothing placed.")
        return busy


# --- keyboard alternative ---------------------------------------------------------------------
NO_CHOICE = "—"
DEFAULT_HAUL = "a few metres beyond the anchor (default)"


class SystemDialog(QDialog):
    """Choose a system from a list (nominal MA and description) and its points from combos; Place makes one edit."""

    def __init__(self, document, defaults, parent: QWidget | None = None, select=None, start_pick=None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Insert system")
        self.setObjectName("system_dialog")
        self.document = document
        self.defaults = defaults
        self._select = select
        self._start_pick = start_pick
        self.list = QTreeWidget()
        self.list.setObjectName("system_list")
        self.list.setHeaderLabels(["System", "Nominal MA"])
        self.list.setRootIsDecorated(False)
        for tpl in TEMPLATES.values():
            item = QTreeWidgetItem([tpl.title, ma_text(tpl)])
            item.setData(0, Qt.UserRole, tpl.name)
            item.setToolTip(0, tpl.description)
            self.list.addTopLevelItem(item)
        self.list.header().setSectionResizeMode(0, QHeaderView.ResizeToContents)
        self.list.setMinimumWidth(380)
        self.description = rich_label()
        self.description.setWordWrap(True)
        self.description.setObjectName("system_description")
        self.description.setMinimumWidth(340)
        self.ma_label = plain_label()
        self.ma_label.setObjectName("system_ma")
        self.load_box = QComboBox()
        self.anchor_box = QComboBox()
        self.extra_boxes = [QComboBox(), QComboBox()]
        self.haul_box = QComboBox()
        form = QFormLayout()
        form.addRow("Nominal MA (strand count)", self.ma_label)
        form.addRow("Load", self.load_box)
        form.addRow("Anchor", self.anchor_box)
        self.extra_labels = [QLabel("Anchor 2"), QLabel("Anchor 3")]
        for lab, box in zip(self.extra_labels, self.extra_boxes):
            form.addRow(lab, box)
        form.addRow("Haul team", self.haul_box)
        self.error = plain_label()
        self.error.setStyleSheet(ERROR_STYLE)
        self.error.setWordWrap(True)
        self.error.setObjectName("system_error")
        right = QVBoxLayout()
        right.addWidget(self.description)
        right.addLayout(form)
        right.addWidget(self.error)
        right.addStretch(1)
        top = QHBoxLayout()
        top.addWidget(self.list)
        top.addLayout(right, 1)
        self.buttons = QDialogButtonBox(QDialogButtonBox.Cancel)
        self.place_button = self.buttons.addButton("Place", QDialogButtonBox.AcceptRole)
        self.pick_button = self.buttons.addButton("Pick on the sketch…", QDialogButtonBox.ActionRole)
        self.buttons.accepted.connect(self.place)
        self.buttons.rejected.connect(self.reject)
        self.pick_button.clicked.connect(self._pick)
        lay = QVBoxLayout(self)
        lay.addLayout(top)
        lay.addWidget(self.buttons)
        self.list.currentItemChanged.connect(lambda _c, _p: self._show_template())
        self.select_template("3:1")
        self.list.setFocus()
        self.resize(900, 420)

    @property
    def template(self) -> str:
        item = self.list.currentItem()
        return item.data(0, Qt.UserRole) if item is not None else "3:1"

    def select_template(self, name: str) -> None:
        self.list.setCurrentItem(self.list.topLevelItem(list(TEMPLATES).index(name)))

    def _fill(self, box: QComboBox, points, optional: bool, first: str = NO_CHOICE) -> None:
        box.clear()
        if optional:
            box.addItem(first, None)
        for p in points:
            box.addItem(f"{p.name} ({p.id})" if p.label else p.id, p.id)

    def _show_template(self) -> None:
        tpl = TEMPLATES[self.template]
        rig = self.document.rig
        self.description.setText(f"{bold(tpl.title)}<br>{escaped(tpl.description)}")
        self.ma_label.setText(ma_text(tpl))
        loads = [p for p in rig.points if p.kind == "load"]
        anchors = [p for p in rig.points if can_anchor(p)]
        self._fill(self.load_box, loads, optional=not needs_load(tpl), first="(none: no main line)")
        self.load_box.setEnabled(needs_load(tpl) or may_load(tpl))
        self._fill(self.anchor_box, anchors, optional=False)
        lo, hi = tpl.extra_anchors
        for i, (lab, box) in enumerate(zip(self.extra_labels, self.extra_boxes)):
            self._fill(box, anchors, optional=i >= lo,
                       first="(none: the main anchor holds it)" if needs_load(tpl) else NO_CHOICE)
            if i < len(anchors) - 1 and i < lo:
                box.setCurrentIndex(i + 1)
            lab.setVisible(i < hi)
            box.setVisible(i < hi)
        self.haul_box.clear()
        self.haul_box.addItem(DEFAULT_HAUL, None)
        for p in rig.points:
            if p.kind == "haul":
                self.haul_box.addItem(p.name, p.id)
        self.haul_box.setEnabled(may_haul(tpl) and not tpl.name.startswith("vector"))
        self.error.setText("")

    def picks(self) -> Picks:
        tpl = TEMPLATES[self.template]
        _lo, hi = tpl.extra_anchors
        extras = [b.currentData() for b in self.extra_boxes[:hi] if b.currentData()]
        return Picks(load=self.load_box.currentData() if self.load_box.isEnabled() else None,
                     anchor=self.anchor_box.currentData(), extras=extras,
                     haul_id=self.haul_box.currentData() if self.haul_box.isEnabled() else None)

    def place(self) -> bool:
        """Place the chosen system as one undoable edit; the reason in red (dialog stays open) if it cannot be."""
        rig = self.document.rig
        tpl = TEMPLATES[self.template]
        picks = self.picks()
        if picks.anchor is None:
            self.error.setText("There is no anchor in the sketch yet: place one (A) first.")
            return False
        if needs_load(tpl) and picks.load is None:
            self.error.setText("There is no load in the sketch yet: place one (L) first.")
            return False
        try:
            new = build(rig, tpl.name, picks, self.defaults.material, self.defaults.pulley_hardware)
        except RopewrightError as exc:
            self.error.setText(getattr(exc, "message", str(exc)))
            return False
        self.document.apply(new, f"Place {tpl.title}")
        if self._select is not None:
            points, ropes = new_ids(rig, new)
            self._select([("point", i) for i in sorted(points)] + [("rope", i) for i in sorted(ropes)])
        self.accept()
        return True

    def _pick(self) -> None:
        if self._start_pick is not None:
            name = self.template
            self.reject()
            self._start_pick(name)


class TemplatesController:
    """Adds Insert ▸ System (menu and a toolbar drop-down) and the picking tool to a MainWindow."""

    def __init__(self, window) -> None:
        self.window = window
        self.tool = SystemPickTool(window.view)
        window.tools[TOOL_NAME] = self.tool
        act = QAction(self.tool.label, window)
        act.setCheckable(True)
        act.setData(TOOL_NAME)
        act.triggered.connect(lambda _c=False: window.set_tool(TOOL_NAME))
        window.tool_group.addAction(act)
        window.tool_actions[TOOL_NAME] = act
        self.menu = QMenu("S&ystem", window)
        self.menu.setObjectName("menu_system")
        self.actions: dict[str, QAction] = {}
        for tpl in TEMPLATES.values():
            a = QAction(menu_text(tpl), window)
            a.setStatusTip(tpl.description)
            a.setToolTip(tpl.description)
            a.triggered.connect(lambda _c=False, n=tpl.name: self.start(n))
            self.menu.addAction(a)
            self.actions[tpl.name] = a
        self.menu.addSeparator()
        self.action_dialog = QAction("Choose system from a &list…", window)
        self.action_dialog.setShortcut("Ctrl+Shift+Y")
        self.action_dialog.triggered.connect(self.open_dialog)
        self.menu.addAction(self.action_dialog)
        window.menu_insert.addSeparator()
        window.menu_insert.addMenu(self.menu)
        self.toolbar = QToolBar("Systems", window)
        self.toolbar.setObjectName("toolbar_systems")
        button = QToolButton(self.toolbar)
        button.setText("System ▾")
        button.setToolTip("Place a ready-made system: 3:1, compounds, vector pull, anchors")
        button.setPopupMode(QToolButton.InstantPopup)
        button.setMenu(self.menu)
        self.toolbar.addWidget(button)
        window.addToolBar(Qt.TopToolBarArea, self.toolbar)

    def start(self, name: str) -> None:
        """Begin picking points for system ``name`` on the canvas."""
        self.window.set_tool("select")
        self.tool.start(name)
        self.window.set_tool(TOOL_NAME)
        self.window.view.setFocus()

    def make_dialog(self) -> SystemDialog:
        return SystemDialog(self.window.document, self.window.view.defaults, self.window,
                            select=self.window.canvas.select_keys, start_pick=self.start)

    def open_dialog(self) -> None:
        dialog = self.make_dialog()
        dialog.setAttribute(Qt.WA_DeleteOnClose)
        dialog.open()


def install_templates(window) -> TemplatesController:
    """Add Insert ▸ System and its picking tool to ``window`` (a MainWindow)."""
    return TemplatesController(window)


class RiggingKit:
    """Issue 6 in one window: systems (``templates``), the current-load estimate and the spec library editor."""

    def __init__(self, window) -> None:
        from sketchpad.library_editor import install_library_editor
        from sketchpad.load_estimate_ui import install_load_estimate

        self.templates = install_templates(window)
        self.load_estimate = install_load_estimate(window)
        self.library = install_library_editor(window)


def install_rigging_kit(window) -> RiggingKit:
    """Add every rigging-kit menu, tool and dialog to ``window`` (one call from MainWindow)."""
    return RiggingKit(window)
