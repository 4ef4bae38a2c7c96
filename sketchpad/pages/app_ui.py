"""The app's side of the printed pages: fields for roles, carried rope length and tails; the print frame;
the schematic panel; the Forces dock's rope-length and gear tabs; File ▸ Export briefing and Export manual.

Every edit is one undoable ``Document.apply``.  The print frame is set to what the view shows
(View ▸ Print frame ▸ Set to this view) and drawn on the canvas as a dashed rectangle; clearing it
prints the rig's own frame again.  The schematic panel paints :func:`sketchpad.pages.schematic.paint_schematic`
from the live result.  The manual export asks for rig files (the open rig first) and shows a progress dialog.
"""

from __future__ import annotations

import pathlib
from dataclasses import replace

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QAction, QPainter, QStandardItem, QStandardItemModel
from PySide6.QtWidgets import QComboBox, QGraphicsItem, QTableView, QWidget

from sketchpad import theme
from sketchpad.drag_layer import Versioned
from solver.model import PERSON_ROLES, Rig
from solver.result import Result


# --- property panel fields ----------------------------------------------------------------------
class PageFields:
    """Adds the role (people), the carried length (ropes) and the tail length (rig settings) to the panel."""

    def __init__(self, panel) -> None:
        self.panel = panel
        pp, rp, gp = panel.point_page, panel.rope_page, panel.rig_page
        self.role = QComboBox()
        self.role.addItem("(no role set)", None)
        for r in PERSON_ROLES:
            self.role.addItem(r, r)
        self.role.setToolTip("What this person is there to do: the report and the briefing sheet list it")
        pp.form.addRow("Role", self.role)
        self.carried = rp.length_field("rope carried", minimum=0, strict=True, optional=True)
        self.carried.setToolTip("The length of this rope you actually carry: the Forces dock and report warn when "
                                "the rope as drawn (stretched, plus tails) will not reach")
        rp.form.addRow("Carried length", self.carried)
        self.tail = gp.length_field("rope tail", minimum=0)
        self.tail.setToolTip("Rope left beyond each end of every rope (knot tails, the haul team's grip)")
        gp.form.addRow("Tail at each end", self.tail)
        self.role.currentIndexChanged.connect(self._role_changed)
        self.carried.committed.connect(self._carried_changed)
        self.tail.committed.connect(self._tail_changed)
        for page, extra in ((pp, self._refresh_point), (rp, self._refresh_rope), (gp, self._refresh_rig)):
            page.refresh = _chained(page.refresh, extra)

    def _role_changed(self, _i: int) -> None:
        page = self.panel.point_page
        if page.point_id is None or not page.rig.has_point(page.point_id):
            return
        p = page.rig.point(page.point_id)
        role = self.role.currentData()
        if p.kind == "person" and role != p.role:
            page.apply(page.rig.with_point(replace(p, role=role)), f"Set role of {p.name}")

    def _carried_changed(self, value) -> None:
        page = self.panel.rope_page
        r = page.rig.rope(page.rope_id)
        if value != r.length_m:
            page.apply(page.rig.with_rope(replace(r, length_m=None if value is None else float(value))),
                       f"Set carried length of {r.name}")

    def _tail_changed(self, value) -> None:
        page = self.panel.rig_page
        rig = page.rig
        if value is not None and float(value) != rig.settings.tail_m:
            page.apply(replace(rig, settings=replace(rig.settings, tail_m=float(value))), "Change rope tails")

    def _refresh_point(self, rig: Rig) -> None:
        from PySide6.QtCore import QSignalBlocker

        page = self.panel.point_page
        if page.point_id is None or not rig.has_point(page.point_id):
            return
        p = rig.point(page.point_id)
        page.form.setRowVisible(self.role, p.kind == "person")
        with QSignalBlocker(self.role):
            self.role.setCurrentIndex(max(0, self.role.findData(p.role)))

    def _refresh_rope(self, rig: Rig) -> None:
        page = self.panel.rope_page
        if page.rope_id is None or not any(r.id == page.rope_id for r in rig.ropes):
            return
        self.carried.set_value(rig.rope(page.rope_id).length_m)

    def _refresh_rig(self, rig: Rig) -> None:
        self.tail.set_value(rig.settings.tail_m)


def _chained(first, then):
    def refresh(rig: Rig) -> None:
        first(rig)
        then(rig)

    return refresh


# --- the print frame ------------------------------------------------------------------------------
class PrintFrameItem(Versioned, QGraphicsItem):
    """The print frame on the canvas: a dashed rectangle (scene metres), hidden when the rig has none.

    Versioned (sketchpad.drag_layer): every change is counted, so drag frames keep their still layer."""

    def __init__(self) -> None:
        super().__init__()
        self._rect = QRectF()
        self._pen = theme.cosmetic_pen(theme.PRINT_FRAME_EDGE, 1.6, Qt.DashLine)
        self.setZValue(theme.Z_OVERLAY - 0.5)
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.setVisible(False)

    def rect(self) -> QRectF:
        return QRectF(self._rect)

    def boundingRect(self) -> QRectF:  # noqa: N802 - Qt name
        return self._rect.adjusted(-0.05, -0.05, 0.05, 0.05) if not self._rect.isNull() else QRectF()

    def paint(self, painter, option, widget=None) -> None:
        painter.setPen(self._pen)
        painter.setBrush(Qt.NoBrush)
        painter.drawRect(self._rect)

    def show_rig(self, rig: Rig) -> None:
        if rig.print_frame is None:  # (no import statement before this: one costs Qt's import hook every drag step)
            if self.isVisible():
                self.setVisible(False)
            return
        from sketchpad.pages.framing import site_rect_of_frame

        r = site_rect_of_frame(rig.print_frame)
        if r != self._rect:
            self.prepareGeometryChange()
            self._rect = r
            self.update()
        if not self.isVisible():
            self.setVisible(True)


def menu_action(window, text: str, tip: str, slot) -> QAction:
    """A QAction of ``window`` with a status tip, calling ``slot()`` when triggered."""
    action = QAction(text, window)
    action.setStatusTip(tip)
    action.triggered.connect(lambda _c=False: slot())
    return action


class PrintFrameActions:
    """View ▸ Print frame: set it to what the view shows, or clear it (both undoable)."""

    def __init__(self, window) -> None:
        self.window = window
        self.item = PrintFrameItem()
        window.canvas.addItem(self.item)
        menu = window.menu_view.addMenu("&Print frame")
        self.action_set = menu_action(window, "&Set to this view", "Print and export exactly what the view shows now",
                                      self.set_to_view)
        self.action_clear = menu_action(window, "&Clear (frame the rig)",
                                        "Print and export the rig with a margin, as when no frame is set", self.clear)
        menu.addAction(self.action_set)
        menu.addAction(self.action_clear)
        window.document.changed.connect(self._changed)
        self._changed(window.document.rig)

    def _changed(self, rig=None) -> None:
        rig = rig if isinstance(rig, Rig) else self.window.document.rig
        self.item.show_rig(rig)
        self.action_clear.setEnabled(rig.print_frame is not None)

    def set_to_view(self, rect: QRectF | None = None) -> None:
        """Set the frame to ``rect`` (scene metres) or to what the view shows."""
        from sketchpad.pages.framing import frame_of_scene_rect

        view = self.window.view
        if rect is None:
            rect = view.mapToScene(view.viewport().rect()).boundingRect()
        doc = self.window.document
        frame = tuple(round(v, 3) for v in frame_of_scene_rect(rect))
        if frame[2] - frame[0] <= 0 or frame[3] - frame[1] <= 0:
            return
        doc.apply(replace(doc.rig, print_frame=frame), "Set print frame")

    def clear(self) -> None:
        doc = self.window.document
        if doc.rig.print_frame is not None:
            doc.apply(replace(doc.rig, print_frame=None), "Clear print frame")


# --- the schematic panel ----------------------------------------------------------------------------
class SchematicView(QWidget):
    """The schematic of the open rig, redrawn when a solve is delivered (and on resize)."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.setMinimumSize(260, 220)
        self.rig: Rig | None = None
        self.result: Result | None = None
        self.layout_drawn = None

    def show_result(self, rig: Rig, result: Result | None) -> None:
        self.rig, self.result = rig, result
        self.update()

    def paintEvent(self, _event) -> None:  # noqa: N802 - Qt override
        from sketchpad.pages.schematic import paint_schematic

        p = QPainter(self)
        try:
            p.fillRect(self.rect(), theme.PAPER)
            if self.rig is not None and self.rig.points:
                self.layout_drawn = paint_schematic(p, QRectF(self.rect()), self.rig, self.result)
        finally:
            p.end()


# --- Forces dock tabs ---------------------------------------------------------------------------------
def _table(headers: list[str]) -> tuple[QTableView, QStandardItemModel]:
    model = QStandardItemModel(0, len(headers))
    model.setHorizontalHeaderLabels(headers)
    view = QTableView()
    view.setModel(model)
    view.verticalHeader().hide()
    view.horizontalHeader().setStretchLastSection(True)
    view.setEditTriggers(QTableView.NoEditTriggers)
    return view, model


def fill(model: QStandardItemModel, rows: list[tuple[str, ...]], flagged: set[int]) -> None:
    model.setRowCount(0)
    for n, row in enumerate(rows):
        items = [QStandardItem(c) for c in row]
        if n in flagged:
            for it in items:
                it.setForeground(theme.BANNER_BACK)
                f = it.font()
                f.setBold(True)
                it.setFont(f)
        model.appendRow(items)


class DockTabs:
    """"Rope lengths" and "Gear" tabs in the Forces dock, filled from each settled result."""

    def __init__(self, window) -> None:
        self.window = window
        live = window.live
        self.lengths, self.lengths_model = _table(["rope", "stretched", "tails", "needed", "carried", "spare"])
        self.gear, self.gear_model = _table(["item", "count", "what"])
        live.panel.tabs.addTab(self.lengths, "Rope lengths")
        live.panel.tabs.addTab(self.gear, "Gear")
        live.scheduler.result_ready.connect(self._result)
        self._shown: tuple | None = None
        window.document.changed.connect(self._edited)  # a carried length or tail needs no new solve

    def _edited(self, *_args) -> None:
        doc = self.window.document
        if doc.previewing:
            return  # a drag frame: the settled result fills the tabs
        rig = doc.rig
        if self._shown is not None and self._shown[0] is rig.ropes and self._shown[1] is rig.settings:
            return  # neither the ropes nor the tails changed
        self._shown = (rig.ropes, rig.settings)
        s = self.window.live.scheduler
        result = s.result if s.result is not None and s.result.ok else None
        self.show(self.window.document.rig, result)

    def _result(self, result: Result) -> None:
        s = self.window.live.scheduler
        if s.settled or not result.ok:
            self.show(s.rig, result)

    def show(self, rig: Rig, result: Result | None) -> None:
        from sketchpad.pages.sections import gear_table, rope_budget_table

        t = rope_budget_table(rig, result)
        fill(self.lengths_model, t.rows, t.flagged)
        g = gear_table(rig, result)
        fill(self.gear_model, g.rows, g.flagged)


# --- File menu: briefing and manual --------------------------------------------------------------------
MANUAL_FILTER = "PDF manual (*.pdf)"
RIG_FILTER = "Rig files (*.rig.json);;All files (*)"


def _ask_open_paths(parent, title: str, start: str) -> list[pathlib.Path]:
    from PySide6.QtGui import QGuiApplication
    from PySide6.QtWidgets import QFileDialog

    if QGuiApplication.platformName() in ("offscreen", "minimal"):
        return []
    paths, _ = QFileDialog.getOpenFileNames(parent, title, start, RIG_FILTER)
    return [pathlib.Path(p) for p in paths]


class BookActions:
    """File ▸ "Export briefing…" and "Export manual…" (rig files chosen; the open rig comes first)."""

    def __init__(self, window, ask_rigs=None) -> None:
        exports = window.exports
        self.window, self.exports = window, exports
        self.ask_rigs = ask_rigs or _ask_open_paths
        self.last_manual = None
        self.dialog = None  # the manual's progress dialog, while one is made
        self.progress_seen: list[tuple[int, int]] = []
        self.action_brief = menu_action(window, "Export &briefing sheet…",
                                        "Save the one-page briefing: rig, commands, roles, worst loads, sign-off",
                                        self.export_brief)
        self.action_manual = menu_action(window, "Export &manual…",
                                         "Save many rigs in one PDF with a title page, contents and page numbers",
                                         self.export_manual)
        menu, before = window.menu_file, getattr(window, "action_quit", None)
        menu.insertAction(before, self.action_brief)
        menu.insertAction(before, self.action_manual)
        menu.insertSeparator(before)

    def export_brief(self, path=None):
        """Ask where (unless given) and write the briefing sheet; its failure scan runs on the solve worker (the
        What-if dock's finished scan reused) and the sheet is written when it is back (sketchpad.export_scan)."""
        from sketchpad.export_scan import ready_or_job
        from sketchpad.pages.brief import write_brief

        ex = self.exports
        path = ex.pdf_path(path, "Export briefing sheet", "-brief.pdf")
        if path is None or ex.refuse_target(path, "briefing sheet"):
            return None
        rig, rig_dir, source = self.window.document.rig, ex._rig_dir(), ex._source()

        def write(outcome) -> str:
            write_brief(rig, path, outcome.result, rig_dir=rig_dir, source=source, scan=outcome.scan)
            return f"Briefing sheet saved to {path}"

        ready, job = ready_or_job(self.window, rig)
        ex.compute_then_write("briefing sheet", path, job, write, ready, rig)
        return path

    def export_manual(self, path=None, rig_paths=None):
        """Ask for rig files and where to save, then make the manual with a progress dialog: every rig read,
        analysed, scanned and swept on the solve worker (the open rig's dock scan reused), the pages written on
        the GUI thread when they are back (sketchpad.export_scan)."""
        from sketchpad.pages.manual_jobs import manual_chapters
        from sketchpad.pages.manual import write_manual

        ex = self.exports
        doc = self.window.document
        start = str(doc.path.parent) if getattr(doc, "path", None) else str(pathlib.Path.home())
        others = rig_paths if rig_paths is not None else self.ask_rigs(self.window, "Rigs for the manual", start)
        if doc.path is not None:
            others = [p for p in others if pathlib.Path(p).resolve() != pathlib.Path(doc.path).resolve()]
        path = ex.pdf_path(path, "Export manual", "-manual.pdf", MANUAL_FILTER)
        if path is None or ex.refuse_target(path, "manual"):
            return None
        steps = 2 * (1 + len(others))
        dialog, progress, cancelled = self._progress_dialog(steps)
        compute = manual_chapters(self.window, doc.rig, ex._source(), ex._rig_dir(), others, cancelled)

        def write(chapters) -> str:
            try:
                manual = write_manual(chapters, path, "Rigging manual",
                                      progress=lambda d, t, w: progress(min(steps, d), steps, w))
            except Exception:
                if cancelled and path.exists():
                    path.unlink()
                raise
            dialog.setValue(steps)
            self.last_manual = manual
            return f"Manual saved to {path}, {manual.pages} pages, {len(manual.contents)} rigs"

        def computed(d: int, t: int, what: str) -> None:  # the worker's steps: one per rig
            from sketchpad.export_scan import Cancelled

            try:
                progress(d, steps, what)
            except Cancelled:
                pass  # the worker sees ``cancelled`` before its next rig

        ex.compute_then_write("manual", path, compute, write, scans_rig=doc.rig, progress=computed,
                              waiting=f"{1 + len(others)} rig{'s' if others else ''} scanned first", ended=dialog.reset)
        return path

    def _progress_dialog(self, steps: int):
        """(the manual's progress dialog, ``progress(done, total, what)`` for it, the list that gets an entry once
        the user cancels: the worker and the writer stop at their next step)."""
        from PySide6.QtWidgets import QApplication, QProgressDialog

        from sketchpad.export_scan import Cancelled

        dialog = QProgressDialog("Making the manual…", "Cancel", 0, steps, self.window)
        dialog.setWindowTitle("Export manual")
        dialog.setWindowModality(Qt.WindowModal)
        dialog.setMinimumDuration(300)
        self.progress_seen = []
        cancelled: list[bool] = []
        dialog.canceled.connect(lambda: cancelled.append(True))
        self.dialog = dialog

        def progress(done: int, total: int, what: str) -> None:
            self.progress_seen.append((done, total))
            dialog.setLabelText(f"{what} ({done} of {total})")
            dialog.setValue(min(done, steps))
            QApplication.processEvents()
            if cancelled or dialog.wasCanceled():
                cancelled.append(True)
                raise Cancelled("cancelled: no manual was written")

        return dialog, progress, cancelled


class Pages:
    """Everything this module adds to a main window."""

    def __init__(self, window) -> None:
        self.fields = PageFields(window.properties_dock.panel)
        self.frame = PrintFrameActions(window)
        self.schematic = SchematicView()
        self.schematic_dock = window.add_panel(self.schematic, "Schematic", "dock_schematic")
        self.schematic_dock.hide()
        self.action_schematic = self.schematic_dock.toggleViewAction()
        self.action_schematic.setText("&Schematic")
        window.menu_view.addAction(self.action_schematic)
        self.tabs = DockTabs(window)
        self.books = BookActions(window)
        window.live.scheduler.result_ready.connect(
            lambda r: self.schematic.show_result(window.live.scheduler.rig, r) if self.schematic_dock.isVisible() else None)
        self.schematic_dock.visibilityChanged.connect(lambda on: self._schematic_now() if on else None)

    def _schematic_now(self) -> None:
        s = self.frame.window.live.scheduler
        rig = self.frame.window.document.rig
        result = s.result if s.result is not None and s.rig is rig else None
        self.schematic.show_result(rig, result)


def install_pages(window) -> Pages:
    """Add the print frame, the schematic panel, dock tabs, fields and File ▸ Export briefing/manual to ``window``."""
    return Pages(window)


__all__ = ["install_pages", "Pages", "PageFields", "PrintFrameActions", "SchematicView", "DockTabs", "BookActions"]
