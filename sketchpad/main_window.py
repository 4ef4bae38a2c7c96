"""The main window: canvas in the middle, tool bars, menus, a right dock area for panels, status bar.

A thin shell over the model: ``self.document`` holds the Rig and its undo stack,
``self.canvas`` (a :class:`~sketchpad.canvas.SketchScene`) mirrors it item by item,
``self.view`` shows it and routes input to the active tool.  Other modules extend
the window through ``menu_file``, ``menu_edit``, ``menu_view``, ``menu_insert``,
``menu_tools``, ``menu_help`` (each a QMenu attribute), :meth:`add_panel` for
docks on the right, and ``document.changed`` / ``canvas.synced`` for updates.
"""

from __future__ import annotations

import logging
import pathlib

from PySide6.QtCore import QSignalBlocker, Qt
from PySide6.QtGui import QAction, QActionGroup, QKeySequence
from PySide6.QtWidgets import (
    QComboBox,
    QDockWidget,
    QLabel,
    QMainWindow,
    QToolBar,
    QUndoView,
    QWidget,
)

from sketchpad import theme
from sketchpad.canvas import SketchScene, SketchView
from sketchpad.document import Document
from sketchpad.items import fmt_length
from sketchpad.plain_text import inform, plain_label, warn
from sketchpad.tools import delete_keys, make_tools, set_display
from solver import limits
from solver.errors import RigFileError, RopewrightError
from solver.model import FEATURE_KINDS, MIDDLE_HOWS, Rig

log = logging.getLogger(__name__)

APP_NAME = "Ropewright"
DEFAULT_SIZE = (1400, 900)
STATUS_MESSAGE_MS = 6000
RIGHT_COLUMN_PX = 440  # the docks' width at start: the Forces tables show every column

#: material and hardware ids offered before solver.materials is importable (rig-format library ids)
FALLBACK_MATERIALS = ("kern-11", "kern-12.5", "throwline-pp-8", "dynamic-10.5", "cord-8", "webbing-25", "sling-hmpe")
FALLBACK_PULLEYS = ("pulley-large", "pulley-small", "pulley-bushing", "carabiner", "ring")
FALLBACK_EDGES = ("edge-rock", "edge-concrete", "edge-timber", "edge-steel")

#: tool name -> (menu, shortcut)
TOOL_KEYS: dict[str, tuple[str, str]] = {
    "select": ("tools", "V"),
    "place-anchor": ("insert", "A"),
    "place-load": ("insert", "L"),
    "place-haul": ("insert", "H"),
    "place-point": ("insert", "J"),
    "place-person": ("insert", "P"),
    "rope": ("tools", "R"),
    "force": ("tools", "F"),
    "feature": ("tools", "G"),
    "measure": ("tools", "M"),
}
UNIT_SYSTEMS = {"metric": ("m", "kN"), "imperial": ("ft", "lbf")}
#: what the "Passes points as" drop-down shows for each middle-pass kind
HOW_NAMES = {"pulley": "pulley", "tied": "tied (knot, rope grab)", "sliding": "sliding (ring, hand)", "edge": "edge"}


def _library_ids() -> tuple[tuple[tuple[str, str], ...], tuple[tuple[str, str], ...], tuple[tuple[str, str], ...]]:
    """(id, name) of the materials, pulley-like and edge hardware in the library (or the documented fallback ids)."""
    try:
        from solver.materials import LIBRARY_HARDWARE, LIBRARY_MATERIALS
    except ImportError:
        return tuple((i, i) for i in FALLBACK_MATERIALS), tuple((i, i) for i in FALLBACK_PULLEYS), \
            tuple((i, i) for i in FALLBACK_EDGES)
    pulleys = tuple((k, h.name) for k, h in LIBRARY_HARDWARE.items() if h.kind != "edge")
    edges = tuple((k, h.name) for k, h in LIBRARY_HARDWARE.items() if h.kind == "edge")
    materials = tuple((k, m.name) for k, m in LIBRARY_MATERIALS.items())
    return (materials or tuple((i, i) for i in FALLBACK_MATERIALS), pulleys or tuple((i, i) for i in FALLBACK_PULLEYS),
            edges or tuple((i, i) for i in FALLBACK_EDGES))


def history_start(rig: Rig, path: pathlib.Path | None) -> str:
    """The History panel's first row: where this history starts (a new sketch, a file, a copy of a sample)."""
    if path is not None:
        return f"Opened {path.name}"
    if rig.points or rig.ropes or rig.site.features:
        return f"Opened a copy of {rig.title.strip()}" if (rig.title or "").strip() else "Opened a copy"
    return "New sketch"


def redo_keys() -> list[QKeySequence]:
    """The platform's redo key first, then the other usual one (Ctrl+Y / Ctrl+Shift+Z), each exactly once.

    Binding a key twice makes Qt call the shortcut ambiguous and do nothing.
    """
    keys: list[QKeySequence] = []
    for key in (QKeySequence(QKeySequence.Redo), QKeySequence("Ctrl+Shift+Z"), QKeySequence("Ctrl+Y")):
        if not key.isEmpty() and key not in keys:
            keys.append(key)
    return keys


class MainWindow(QMainWindow):
    """Ropewright's main window around one Document."""

    def __init__(self, document: Document | None = None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document if document is not None else Document(parent=self)
        self.canvas = SketchScene(self)
        self.view = SketchView(self.canvas, self.document, self)
        self.setCentralWidget(self.view)
        self.setDockOptions(QMainWindow.AnimatedDocks | QMainWindow.AllowTabbedDocks)
        self.tools = make_tools(self.view)
        self.tool_actions: dict[str, QAction] = {}
        self._build_actions()
        self._build_menus()
        self._build_toolbars()
        self._build_docks()
        self._build_status()
        self.document.changed.connect(self._on_rig_changed)
        from sketchpad.frame_gc import FramePacedCollector

        self.frame_gc = FramePacedCollector(self.document, self)  # no garbage collection inside drag frames
        self.document.path_changed.connect(lambda _p: self._update_title())
        self.document.undo_stack.cleanChanged.connect(lambda _c: self._update_title())
        self.view.escape_pressed.connect(lambda: self.set_tool("select"))
        self.view.message.connect(lambda t: self.statusBar().showMessage(t, STATUS_MESSAGE_MS))
        self.view.cursor_moved.connect(self._show_cursor)
        self.set_tool("select")
        self._build_files_and_panels()
        from sketchpad.live_solve import install_live_forces

        self.live = install_live_forces(self)  # live solve, force overlay, Forces dock (issue 5)
        from sketchpad.export_actions import install_export_actions

        self.exports = install_export_actions(self)  # File > Export drawing / report (issue 7)
        from sketchpad.templates_ui import install_rigging_kit

        self.kit = install_rigging_kit(self)  # Insert ▸ System, load estimate, spec library (issue 6)
        from sketchpad.haul_plan_panel import install_haul_plan

        self.haul_plan = install_haul_plan(self)  # Haul plan dock: strokes, resets, scrubber (issue 22)
        from sketchpad.whatif_panel import install_what_if

        self.what_if = install_what_if(self)  # What if: the failure scan dock and its ghost (issue 19)
        from sketchpad.pages.app_ui import install_pages

        self.pages = install_pages(self)  # print frame, schematic, rope lengths, roles, briefing, manual (issue 21)
        from sketchpad.hint_bar import install_hints

        self.hints = install_hints(self)  # what the sketch still needs and the tool's hint, over the canvas
        self.tabifyDockWidget(self.live.dock, self.history_dock)  # History a tab beside Forces: the tables get the room
        self.live.dock.raise_()
        self._on_rig_changed(self.document.rig)
        self.resize(*DEFAULT_SIZE)
        self.resizeDocks([self.properties_dock], [RIGHT_COLUMN_PX], Qt.Horizontal)

    def closeEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().closeEvent(event)
        if event.isAccepted():
            self.frame_gc.resume()  # a window closed mid-drag leaves garbage collection on

    # --- actions ---------------------------------------------------------------------------
    def _action(self, text: str, slot=None, shortcut=None, checkable: bool = False, tip: str = "") -> QAction:
        act = QAction(text, self)
        if shortcut is not None:
            act.setShortcuts(shortcut if isinstance(shortcut, list) else [QKeySequence(shortcut)])
        act.setCheckable(checkable)
        if tip:
            act.setStatusTip(tip)
            act.setToolTip(tip)
        if slot is not None:
            act.triggered.connect(slot)
        return act

    def _build_actions(self) -> None:
        stack = self.document.undo_stack
        self.action_undo = self._action("&Undo", self.undo, [QKeySequence(QKeySequence.Undo)])
        self.action_redo = self._action("&Redo", self.redo, redo_keys())
        stack.canUndoChanged.connect(self.action_undo.setEnabled)
        stack.canRedoChanged.connect(self.action_redo.setEnabled)
        stack.undoTextChanged.connect(lambda t: self.action_undo.setText(f"&Undo {t}".strip()))
        stack.redoTextChanged.connect(lambda t: self.action_redo.setText(f"&Redo {t}".strip()))
        stack.indexChanged.connect(self._drop_stale_move_message)  # History clicks too
        self.action_undo.setEnabled(False)
        self.action_redo.setEnabled(False)
        self.action_delete = self._action("&Delete", self.delete_selection,
                                          [QKeySequence(QKeySequence.Delete), QKeySequence(Qt.Key_Backspace)],
                                          tip="Delete the selection and every pass and force that depends on it")
        self.action_select_all = self._action("Select &all", self.select_all, [QKeySequence(QKeySequence.SelectAll)])
        self.action_quit = self._action("&Quit", self.close, [QKeySequence(QKeySequence.Quit)])
        self.action_zoom_fit = self._action("Zoom to &fit", self.view.zoom_to_fit, "Ctrl+0")
        self.action_zoom_in = self._action("Zoom &in", lambda: self.view.zoom_at(1.25, self.view.viewport().rect().center()),
                                           [QKeySequence(QKeySequence.ZoomIn)])
        self.action_zoom_out = self._action("Zoom &out", lambda: self.view.zoom_at(0.8, self.view.viewport().rect().center()),
                                            [QKeySequence(QKeySequence.ZoomOut)])
        self.action_grid = self._action("Show &grid", self._toggle_grid, "Ctrl+'", checkable=True)
        self.action_grid.setChecked(self.view.grid_visible)
        self.action_snap_grid = self._action("Snap to g&rid", self._toggle_snap, checkable=True)
        self.action_snap_grid.setChecked(self.view.snap_to_grid)
        self.action_snap_points = self._action("Snap to &points", self._toggle_snap, checkable=True)
        self.action_snap_points.setChecked(self.view.snap_to_points)
        self.unit_group = QActionGroup(self)
        self.unit_actions: dict[str, QAction] = {}
        for system, (length, force) in UNIT_SYSTEMS.items():
            act = self._action(f"{system.capitalize()} units ({length}, {force})", checkable=True)
            act.triggered.connect(lambda _c=False, s=system: self.set_units(s))
            self.unit_group.addAction(act)
            self.unit_actions[system] = act
        self.tool_group = QActionGroup(self)
        self.tool_group.setExclusive(True)
        for name, tool in self.tools.items():
            act = self._action(tool.label, checkable=True, tip=tool.hint)
            act.setShortcut(QKeySequence(TOOL_KEYS.get(name, ("tools", ""))[1]))
            act.setData(name)
            act.triggered.connect(lambda _c=False, n=name: self.set_tool(n))
            self.tool_group.addAction(act)
            self.tool_actions[name] = act

    def _build_menus(self) -> None:
        bar = self.menuBar()
        self.menu_file = bar.addMenu("&File")
        self.menu_file.addAction(self.action_quit)
        self.menu_edit = bar.addMenu("&Edit")
        for a in (self.action_undo, self.action_redo):
            self.menu_edit.addAction(a)
        self.menu_edit.addSeparator()
        self.menu_edit.addAction(self.action_delete)
        self.menu_edit.addAction(self.action_select_all)
        self.menu_view = bar.addMenu("&View")
        for a in (self.action_zoom_fit, self.action_zoom_in, self.action_zoom_out):
            self.menu_view.addAction(a)
        self.menu_view.addSeparator()
        for a in (self.action_grid, self.action_snap_grid, self.action_snap_points):
            self.menu_view.addAction(a)
        self.menu_view.addSeparator()
        for a in self.unit_actions.values():
            self.menu_view.addAction(a)
        self.menu_view.addSeparator()
        self.menu_panels = self.menu_view.addMenu("&Panels")
        self.menu_insert = bar.addMenu("&Insert")
        self.menu_tools = bar.addMenu("&Tools")
        for name, act in self.tool_actions.items():
            (self.menu_insert if TOOL_KEYS.get(name, ("tools",))[0] == "insert" else self.menu_tools).addAction(act)
        self.menu_help = bar.addMenu("&Help")
        self.action_drawing_help = self._action("Drawing &keys", self.show_drawing_help, [QKeySequence(QKeySequence.HelpContents)])
        self.menu_help.addAction(self.action_drawing_help)

    def _build_toolbars(self) -> None:
        self.toolbar_tools = QToolBar("Tools", self)
        self.toolbar_tools.setObjectName("toolbar_tools")
        for act in self.tool_actions.values():
            self.toolbar_tools.addAction(act)
        self.addToolBar(Qt.TopToolBarArea, self.toolbar_tools)
        self.addToolBarBreak(Qt.TopToolBarArea)
        self.toolbar_options = QToolBar("Drawing options", self)
        self.toolbar_options.setObjectName("toolbar_options")
        materials, pulleys, edges = _library_ids()
        d = self.view.defaults
        self.combo_how = self._combo([(h, HOW_NAMES.get(h, h)) for h in MIDDLE_HOWS], d.how, "how",
                                     "Pulleys: how a drawn rope passes each point you click between its ends "
                                     "(Shift+click pulley, Ctrl tied, Alt sliding, Ctrl+Shift edge override it)")
        self.combo_material = self._combo(materials, d.material, "material", "Material of new ropes")
        self.combo_pulley = self._combo(pulleys, d.pulley_hardware, "pulley_hardware", "Hardware at new pulley passes")
        self.combo_edge = self._combo(edges, d.edge_hardware, "edge_hardware", "Edge at new edge passes")
        self.combo_feature = self._combo([(k, k) for k in FEATURE_KINDS], d.feature_kind, "feature_kind",
                                         "Kind of new site features")
        for label, combo in (("Passes points as", self.combo_how), ("Rope", self.combo_material),
                             ("Pulley", self.combo_pulley), ("Edge", self.combo_edge), ("Feature", self.combo_feature)):
            self.toolbar_options.addWidget(QLabel(f" {label} "))
            self.toolbar_options.addWidget(combo)
        self.addToolBar(Qt.TopToolBarArea, self.toolbar_options)

    def _combo(self, items, current: str, field: str, tip: str) -> QComboBox:
        """A drop-down showing names, keeping the id (``itemData``) it sets on ``view.defaults.<field>``."""
        combo = QComboBox(self)
        for key, name in items:
            combo.addItem(name, key)
        if combo.findData(current) < 0:
            combo.addItem(current, current)
        combo.setCurrentIndex(combo.findData(current))
        combo.setToolTip(tip)
        combo.setFocusPolicy(Qt.ClickFocus)
        combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
        combo.setMinimumContentsLength(min(22, max(len(n) for _k, n in items) if items else 8))
        combo.view().setMinimumWidth(combo.view().sizeHintForColumn(0) + 24)  # the list shows whole names
        combo.currentIndexChanged.connect(lambda _i: setattr(self.view.defaults, field, combo.currentData()))
        return combo

    def _build_docks(self) -> None:
        self.history_view = QUndoView(self.document.undo_stack)
        self.history_view.setEmptyLabel(history_start(self.document.rig, self.document.path))
        self.document.started.connect(lambda rig: self.history_view.setEmptyLabel(history_start(rig, self.document.path)))
        self.history_dock = self.add_panel(self.history_view, "History", "dock_history")

    def add_panel(self, widget: QWidget, title: str, object_name: str | None = None,
                  area: Qt.DockWidgetArea = Qt.RightDockWidgetArea) -> QDockWidget:
        """Dock ``widget`` (right side by default) and list it under View > Panels."""
        dock = QDockWidget(title, self)
        dock.setObjectName(object_name or f"dock_{title.lower().replace(' ', '_')}")
        dock.setWidget(widget)
        self.addDockWidget(area, dock)
        self.menu_panels.addAction(dock.toggleViewAction())
        return dock

    def _build_status(self) -> None:
        self.cursor_label = plain_label("")
        # as wide as a far-off cursor's coordinates, so it does not jitter, and no wider: the tool's hint needs the room
        self.cursor_label.setMinimumWidth(self.cursor_label.fontMetrics().horizontalAdvance("x −999.99 ft   y −999.99 ft") + 8)
        self.statusBar().addPermanentWidget(self.cursor_label)

    def _build_files_and_panels(self) -> None:
        """File menu with autosave/recovery, Properties dock, background picture, safety caution."""
        from sketchpad.about import install_caution
        from sketchpad.background import BackgroundController
        from sketchpad.files import FileController
        from sketchpad.properties import PropertiesDock

        def say(text: str) -> None:
            self.statusBar().showMessage(text, STATUS_MESSAGE_MS)

        self.files = FileController(self, self.document, on_loaded=lambda _rig: self.view.zoom_to_fit())
        self.files.install_menu(self.menu_file, before=self.action_quit)
        self.protection_label = plain_label("")
        self.protection_label.setObjectName("crash_protection_stopped")
        self.protection_label.setWordWrap(True)
        self.protection_label.setStyleSheet(f"QLabel {{ background: {theme.BANNER_BACK.name()}; "
                                            f"color: {theme.BANNER_TEXT.name()}; padding: 3px 8px; }}")
        self.protection_label.hide()
        self.statusBar().insertWidget(0, self.protection_label, 1)
        self.files.protection.connect(self._show_protection)
        self.background = BackgroundController(self.document, self.view, self, say)
        self.background.install_menus(self.menu_insert, self.menu_tools)
        self.properties_dock = PropertiesDock(self.document, self)
        self.addDockWidget(Qt.RightDockWidgetArea, self.properties_dock)
        self.splitDockWidget(self.properties_dock, self.history_dock, Qt.Vertical)
        self.menu_panels.addAction(self.properties_dock.toggleViewAction())
        self.properties_dock.follow_scene(self.canvas)
        self.properties_dock.panel.rig_page.add_section("Background picture", self.background.make_panel())
        self.caution_label = install_caution(self, self.menu_help)

    def _show_protection(self, problem: str) -> None:
        """Crash protection stopped (``problem`` says why) or works again (""): shown at once, in red."""
        self.protection_label.setText(problem)
        self.protection_label.setVisible(bool(problem))

    # --- behaviour --------------------------------------------------------------------------
    def set_tool(self, name: str) -> None:
        """Make ``name`` the active tool (finishing or dropping what the last one was doing)."""
        tool = self.tools[name]
        if self.view.tool is not tool:
            self.view.set_tool(tool)
        act = self.tool_actions[name]
        if not act.isChecked():
            act.setChecked(True)

    @property
    def tool(self):
        return self.view.tool

    def _cancel_tool(self) -> None:
        if self.view.tool is not None:
            self.view.tool.cancel()

    def undo(self) -> None:
        self._cancel_tool()
        stack = self.document.undo_stack
        text = stack.undoText()
        stack.undo()
        if text:  # replaces a tool's message about the edit just undone ("Moving H1 ...")
            self.statusBar().showMessage(f"Undid: {text}", STATUS_MESSAGE_MS)

    def _drop_stale_move_message(self, _index: int = 0) -> None:
        """An undo or redo (menu, keys or a History click) makes a tool's message about a move stale."""
        if self.statusBar().currentMessage().startswith(("Moving ", "Moved ")):
            self.statusBar().clearMessage()

    def redo(self) -> None:
        self._cancel_tool()
        stack = self.document.undo_stack
        text = stack.redoText()
        stack.redo()
        if text:
            self.statusBar().showMessage(f"Redid: {text}", STATUS_MESSAGE_MS)

    def delete_selection(self) -> None:
        """Delete what is selected and everything depending on it, as one undoable step."""
        keys = self.canvas.selected_keys()
        if not keys:
            return
        self._cancel_tool()
        new = delete_keys(self.document.rig, keys)
        n = len(keys)
        what = keys[0][1] if n == 1 else f"{n} items"
        self.document.apply(new, f"Delete {what}")

    def select_all(self) -> None:
        self.canvas.select_keys(list(self.canvas.items_by_key))

    def set_units(self, system: str) -> None:
        """Show lengths and forces in ``system`` ("metric" or "imperial"); stored in the rig, undoable."""
        length, force = UNIT_SYSTEMS[system]
        rig = self.document.rig
        self.document.apply(set_display(rig, length, force), f"Show {system} units")

    def _toggle_grid(self, on: bool) -> None:
        self.view.grid_visible = bool(on)
        self.view.viewport().update()

    def _toggle_snap(self, _on: bool = False) -> None:
        self.view.snap_to_grid = self.action_snap_grid.isChecked()
        self.view.snap_to_points = self.action_snap_points.isChecked()

    def _on_rig_changed(self, rig: Rig) -> None:
        self.canvas.sync(rig)
        system = "imperial" if rig.display.length == "ft" else "metric"
        with QSignalBlocker(self.unit_group):
            self.unit_actions[system].setChecked(True)
        if getattr(self, "files", None) is None:  # else the file controller, told of every change, sets it
            self._update_title()
        self.view.viewport().update()

    def _update_title(self) -> None:
        if getattr(self, "files", None) is not None:  # the file controller owns the title
            self.files.update_title()
            return
        path = self.document.path
        name = path.name if path is not None else (self.document.rig.title or "untitled sketch")
        self.setWindowTitle(f"{name}[*] — {APP_NAME}")
        self.setWindowModified(self.document.is_modified)

    def _show_cursor(self, x: float, y: float) -> None:
        unit = self.view.length_unit
        self.cursor_label.setText(f"x {fmt_length(x, unit)}   y {fmt_length(y, unit)}")

    def open_path(self, path, show_errors: bool = True) -> bool:
        """Load a rig file into the document (clearing history) and fit it in view; False on a bad file."""
        try:
            from solver.rigfile import load_rig

            rig = load_rig(pathlib.Path(path))
            problem = limits.drawing_problem(len(rig.points), len(rig.ropes))
            if problem:
                raise RigFileError(problem, where=str(path))
        except (RopewrightError, OSError) as exc:
            log.warning("could not open %s: %s", path, exc)
            if show_errors:
                warn(self, APP_NAME, f"Could not open {path}:\n{exc}")
            return False
        self.document.replace_all(rig, pathlib.Path(path))
        self.view.zoom_to_fit()
        return True

    def showEvent(self, event) -> None:  # noqa: N802
        super().showEvent(event)
        if not getattr(self, "_fitted_once", False):
            self._fitted_once = True
            self.view.zoom_to_fit()

    def show_drawing_help(self) -> None:
        inform(
            self,
            f"{APP_NAME}: drawing keys",
            "Tools: V select, A anchor, L load, H haul team, J free point, P person, R rope, F force, "
            "G site feature, M measure. Esc returns to select.\n\n"
            "Rope: click the points in order from the load end; empty space makes a free point. "
            "A plain click on a point opens a small menu: 1-4 or T P S E for tied, pulley, sliding, edge, F ends "
            "there, Enter the 'Passes' choice, Esc drops the click. Shift+click pulley, Ctrl+click tied, Alt+click "
            "sliding, Ctrl+Shift+click edge skip the menu. Enter or double-click ends; a haul team ends the rope "
            "hauled; right-click or Backspace takes back the last pass.\n\n"
            "View: wheel zooms at the cursor; middle button or Space+drag pans; Ctrl+0 fits the sketch.",
        )
