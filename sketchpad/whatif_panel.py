"""The "What if" dock: a row per component that can let go, and that failure's state as a ghost over the rig.

The scan (:func:`solver.failures.scan`) runs once the rig is still: after a settled result
(the live solve's full analysis once a drag pauses), through a short single-shot timer,
never during a drag.  Its computed areas replace the fixed bight shapes on the plan
(:func:`solver.failure_warnings.plan_zones`) and the Forces dock's person warnings name the failure
that puts each person in a zone (:func:`solver.scan_warnings.scanned_result`); the rows are the legend of those shapes:
selecting one outlines its area, draws the rig as it would hang after that failure
(dashed), where points move, and what runs free.  People in a failure's path are listed
with the failure that puts them there.  The panel shows numbers only; the solver computes them.
"""

from __future__ import annotations

import logging
import math
import time

from PySide6.QtCore import QObject, QPointF, QRectF, Qt, QTimer, Signal
from PySide6.QtGui import QPainterPath
from PySide6.QtWidgets import (
    QAbstractItemView,
    QGraphicsItem,
    QHeaderView,
    QListWidget,
    QListWidgetItem,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from sketchpad import theme
from sketchpad.drag_layer import Versioned
from sketchpad.geometry import to_scene
from sketchpad.plain_text import plain_label, tip
from solver.failures import Failure, Scan, components
from solver.model import Rig
from solver.result import Result
from solver.units import format_force, format_length

log = logging.getLogger(__name__)

#: Wait this long (ms) after a settled result before scanning, so a quick run of edits scans once.
SCAN_DELAY_MS = 150
#: A long scan runs in slices of about this long (ms), the window's events handled in between.
SLICE_MS = 40.0
HEADERS = ["component", "then", "worst new load", "shock (estimate)"]


def row_texts(f: Failure, force_unit: str) -> list[str]:
    """The four cells of a failure's row, in the user's force unit."""
    worst = f.worst()
    worst_text = "—" if worst is None else f"{format_force(worst[0], force_unit)} at {worst[1]}" + (
        f" ({100 * worst[2]:.0f} %)" if worst[2] is not None else "")
    shock = "—" if f.peak is None else f"{format_force(f.peak.force_N, force_unit)} at {f.peak.at} ({f.peak.how})"
    return [f"{f.component.id} · {f.component.kind}", f.status, worst_text, shock]


class FailureGhost(Versioned, QGraphicsItem):
    """One failure's outcome drawn over the rig: its area outlined, the remaining rig dashed, moves and runaways.

    ``Versioned`` tells the drag layer of every change, so a drag frame need not read the item to know it is still.
    """

    def __init__(self) -> None:
        super().__init__()
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.setZValue(theme.Z_FEATURE + 50.0)
        self.zone = QPainterPath()
        self.pieces: list[tuple[QPointF, QPointF]] = []
        self.moves: list[tuple[QPointF, QPointF]] = []
        self.arrows: list[tuple[QPointF, QPointF]] = []
        self.marks: list[QPointF] = []
        self.label: tuple[QPointF, str] | None = None  # the area's name, at a point inside it
        self._font = theme.font(theme.OVERLAY_POINT_SIZE, bold=True)
        self._rect = QRectF()

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._rect

    def shape(self) -> QPainterPath:
        return QPainterPath()  # clicks go to the sketch underneath

    def show_failure(self, rig: Rig | None, intact: Result | None, f: Failure | None) -> None:
        """Draw ``f`` (None: nothing)."""
        if f is None and self._rect.isEmpty():
            return  # nothing shown, nothing to clear: a drag step's result leaves the scene untouched
        from sketchpad.overlay import geometry_path

        self.prepareGeometryChange()
        self.zone, self.pieces, self.moves, self.arrows, self.marks = QPainterPath(), [], [], [], []
        self.label = None
        if f is not None and rig is not None and intact is not None:
            self.zone = geometry_path(f.zone)
            if not f.zone.is_empty:
                inside = f.zone.representative_point()
                self.label = (to_scene(inside.x, inside.y), f"if {f.component.id} lets go")
            pts = f.after.points
            self.pieces = [(to_scene(*pts[s.from_point]), to_scene(*pts[s.to_point])) for s in f.after.segments
                           if s.from_point in pts and s.to_point in pts]
            self.moves = [(to_scene(*m.before), to_scene(*m.after)) for m in f.moved]
            size = max(2.0, 0.15 * math.sqrt(max(f.zone.area, 1.0)))
            for u in f.unheld:
                if u.point in intact.points and u.direction_deg is not None:
                    x, y = intact.points[u.point]
                    th = math.radians(u.direction_deg)
                    self.arrows.append((to_scene(x, y), to_scene(x + size * math.cos(th), y + size * math.sin(th))))
            where = f.component.id.split("@")[-1].split("#")[0]
            if where in intact.points:
                self.marks.append(to_scene(*intact.points[where]))
        rect = self.zone.boundingRect()
        for a, b in self.pieces + self.moves + self.arrows:
            rect = rect.united(QRectF(a, b).normalized())
        for m in self.marks:
            rect = rect.united(QRectF(m.x() - 1, m.y() - 1, 2, 2))
        self._rect = rect.adjusted(-2, -2, 2, 2) if not rect.isEmpty() else QRectF()
        self.update()

    def paint(self, painter, option, widget=None) -> None:
        if not (self.pieces or self.moves or self.arrows or not self.zone.isEmpty()):
            return
        painter.setRenderHint(painter.RenderHint.Antialiasing, True)
        painter.setPen(theme.cosmetic_pen(theme.GHOST_ZONE_EDGE, theme.GHOST_ZONE_PX))
        painter.setBrush(theme.GHOST_ZONE_FILL)
        painter.drawPath(self.zone)
        painter.setBrush(Qt.NoBrush)
        painter.setPen(theme.cosmetic_pen(theme.GHOST_ROPE, theme.GHOST_ROPE_PX, Qt.DashLine))
        for a, b in self.pieces:
            painter.drawLine(a, b)
        painter.setPen(theme.cosmetic_pen(theme.GHOST_MOVE, theme.GHOST_ROPE_PX, Qt.DotLine))
        for a, b in self.moves + self.arrows:
            painter.drawLine(a, b)
        painter.setPen(theme.cosmetic_pen(theme.GHOST_MOVE, theme.GHOST_ROPE_PX))
        scale = painter.worldTransform().m11() or 1.0
        r = theme.GHOST_MARK_PX / scale
        for _a, b in self.moves:
            painter.drawEllipse(b, r, r)
        for a, b in self.arrows:
            self._head(painter, a, b, r)
        painter.setPen(theme.cosmetic_pen(theme.GHOST_ZONE_EDGE, theme.GHOST_ROPE_PX * 1.5))
        for m in self.marks:  # the component that let go: a cross
            painter.drawLine(QPointF(m.x() - r, m.y() - r), QPointF(m.x() + r, m.y() + r))
            painter.drawLine(QPointF(m.x() - r, m.y() + r), QPointF(m.x() + r, m.y() - r))
        if self.label is not None:  # the legend of this shape, on it (in pixels, whatever the zoom)
            at = painter.worldTransform().map(self.label[0])
            painter.save()
            painter.resetTransform()
            painter.setFont(self._font)
            painter.setPen(theme.GHOST_ZONE_EDGE)
            painter.drawText(at, self.label[1])
            painter.restore()

    @staticmethod
    def _head(painter, a: QPointF, b: QPointF, r: float) -> None:
        d = b - a
        n = math.hypot(d.x(), d.y())
        if n == 0:
            return
        ux, uy = d.x() / n, d.y() / n
        for s in (1, -1):
            painter.drawLine(b, QPointF(b.x() - 2 * r * ux + s * r * uy, b.y() - 2 * r * uy - s * r * ux))


class WhatIfPanel(QWidget):
    """The dock's widget: the rows, the people in a failure's path, and the cautions of the estimates."""

    failure_selected = Signal(object)  # Failure or None

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        from solver.failure_shock import SHOCK_CAUTION

        self.status = plain_label("Scans once the rig is still.")
        self.status.setWordWrap(True)
        self.table = QTableWidget(0, len(HEADERS))
        self.table.setHorizontalHeaderLabels(HEADERS)
        self.table.setSelectionBehavior(QAbstractItemView.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.NoEditTriggers)
        self.table.verticalHeader().setVisible(False)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeToContents)
        self.table.horizontalHeader().setStretchLastSection(True)
        self.table.itemSelectionChanged.connect(self._selected)
        self.people = QListWidget()
        self.people.setWordWrap(True)
        self.note = plain_label(SHOCK_CAUTION)
        self.note.setWordWrap(True)
        self.note.setStyleSheet(f"color: {theme.MUTED_TEXT.name()};")
        split = QSplitter(Qt.Vertical)
        split.addWidget(self.table)
        split.addWidget(self.people)
        split.setStretchFactor(0, 3)
        split.setSizes([360, 110])
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        lay.addWidget(self.status)
        lay.addWidget(split, 1)
        lay.addWidget(self.note)
        self.scan: Scan | None = None

    def show_waiting(self, text: str) -> None:
        """No current scan: say why, keep the rows greyed until the next one."""
        self.status.setText(text)
        self.table.setEnabled(False)

    def show_scan(self, s: Scan) -> None:
        """Fill the rows and the people list from a scan of the current rig."""
        from solver.cli_failures import zone_assumption
        from solver.failure_warnings import people_at_risk

        self.scan = s
        unit, length = s.rig.display.force, s.rig.display.length
        self.table.setEnabled(True)
        self.table.blockSignals(True)
        self.table.clearContents()
        self.table.setRowCount(len(s.failures))
        for r, f in enumerate(s.failures):
            for c, text in enumerate(row_texts(f, unit)):
                item = QTableWidgetItem(text)
                item.setToolTip(tip(f.message))
                if c == 1 and not f.holds:
                    item.setForeground(theme.DANGER_TEXT)
                self.table.setItem(r, c, item)
        self.table.blockSignals(False)
        if not s.ok:
            self.status.setText(f"No scan: {s.reason}")
        else:
            free = sum(1 for f in s.failures if not f.holds)
            far = max((m.distance_m for f in s.failures for m in f.moved), default=0.0)
            self.status.setText(f"{len(s.failures)} components let go one at a time: {free} leave something "
                                f"running free; the farthest move is {format_length(far, length)}. "
                                f"Select a row to see it over the rig.")
        self.people.clear()
        for w in people_at_risk(s) if s.ok else []:
            item = QListWidgetItem(f"DANGER: {w.message}")
            item.setForeground(theme.DANGER_TEXT)
            self.people.addItem(item)
        if s.ok and not self.people.count():
            self.people.addItem("Nobody drawn stands in a failure's path.")
        self.people.addItem(zone_assumption(length))
        self.failure_selected.emit(None)

    def _selected(self) -> None:
        rows = {i.row() for i in self.table.selectedItems()}
        f = self.scan.failures[min(rows)] if self.scan is not None and rows else None
        self.failure_selected.emit(f)


class WhatIf(QObject):
    """Wires the panel to a main window: scans after settled results, feeds the plan's zones, draws the ghost."""

    def __init__(self, window, live) -> None:
        super().__init__(window)
        self.window, self.live = window, live
        self.panel = WhatIfPanel()
        self.dock = window.add_panel(self.panel, "What if", "dock_what_if")
        window.tabifyDockWidget(live.dock, self.dock)  # beside the Forces tables: the same room
        live.dock.raise_()
        self.ghost = FailureGhost()
        window.canvas.addItem(self.ghost)
        self.timer = QTimer(self)
        self.timer.setSingleShot(True)
        self.timer.setInterval(SCAN_DELAY_MS)
        self.timer.timeout.connect(lambda: self.run_scan(SLICE_MS))
        self.ticks = QTimer(self)  # the next slice of a long scan, after the window's pending events
        self.ticks.setSingleShot(True)
        self.ticks.setInterval(0)
        self.ticks.timeout.connect(lambda: self._continue(SLICE_MS))
        self._steps = None
        self.scan: Scan | None = None
        self.scans = 0
        self.awaited: Result | None = None  # the settled result an export scans on the solve worker (adopted after)
        self.panel.failure_selected.connect(self._ghost)
        live.scheduler.result_ready.connect(self._on_result)

    def _on_result(self, result: Result) -> None:
        sched = self.live.scheduler
        self.ghost.show_failure(None, None, None)
        self._legend(theme.DRAWN_ZONE_NAMES)  # the overlay drew this result's fixed shapes
        self._steps = None  # a new result: any scan under way was for an older rig
        self.awaited = None
        self.ticks.stop()
        if not sched.settled:
            self.timer.stop()  # a drag: never scan now
            self.panel.show_waiting("Dragging: the scan runs when the rig is still.")
            return
        if not result.ok:
            self.timer.stop()
            self.panel.show_waiting(f"No scan: the rig does not hold as drawn ({result.message}).")
            return
        self.timer.start()

    def run_scan(self, budget_ms: float | None = None) -> Scan | None:
        """Scan the scheduler's settled result if it is still the document's current one.

        With ``budget_ms`` the scan goes in slices of about that long between the window's events (a large
        rig takes a while; any change cancels it); without, it runs to the end at once. Returns the scan
        once finished, else None.
        """
        sched = self.live.scheduler
        result, rig = sched.result, sched.rig
        if result is None or rig is None or not sched.settled or result.revision != self.window.document.revision:
            return None
        if sched.pending:  # a newer solve is on its way: scan that one
            return None
        if self.scan is not None and self.scan.intact is result:
            return self._show(self.scan, again=True)  # a repeat delivery of the same answer: no new scan
        if self.awaited is result:
            return None  # an export is scanning this very result on the worker: its scan is adopted when back
        from solver.failures import scan_steps

        self._steps = (rig, result, scan_steps(rig, result), [], len(components(rig)))
        return self._continue(budget_ms)

    def adopt(self, s: Scan) -> bool:
        """Show a scan made elsewhere (an export's, on the solve worker) when it is of the scheduler's current
        settled result and this dock has none of that yet; a scan of it under way here stops (no second scan)."""
        sched = self.live.scheduler
        if s.intact is not sched.result or not sched.settled or s.rig is not self.window.document.rig:
            return False
        if self.scan is not None and self.scan.intact is s.intact:
            return False
        self.timer.stop()
        self.ticks.stop()
        self._steps = None
        self.awaited = None
        self._show(s)
        return True

    def await_export(self, intact: Result) -> None:
        """An export is about to scan ``intact`` (the scheduler's settled result) on the solve worker: a scan of it
        here (part-way, or about to start) stops, so the same rig is never scanned twice at once; the export's scan
        is adopted when it is back (:meth:`adopt`), or this dock scans again if it fails (:meth:`export_gone`)."""
        sched = self.live.scheduler
        if intact is not sched.result or (self.scan is not None and self.scan.intact is intact):
            return
        self.timer.stop()
        self.ticks.stop()
        self._steps = None
        self.awaited = intact
        self.panel.show_waiting("The export is letting each component go; its scan shows here when it is done …")

    def export_gone(self) -> None:
        """The awaited export's scan did not come back: scan here again (if the rig is still the same)."""
        if self.awaited is not None:
            self.awaited = None
            self.timer.start()

    def _continue(self, budget_ms: float | None = None) -> Scan | None:
        """Scan on for about ``budget_ms`` (None: to the end); finish, or come back on the next tick."""
        if self._steps is None:
            return None
        rig, result, steps, done, total = self._steps
        if result.revision != self.window.document.revision or not self.live.scheduler.settled:
            self._steps = None  # the rig changed under the scan: the next settled result starts again
            return None
        t0 = time.perf_counter()
        try:
            for f in steps:
                done.append(f)
                if budget_ms is not None and (time.perf_counter() - t0) * 1e3 > budget_ms:
                    self.panel.show_waiting(f"Letting each component go: {len(done)} of {total} …")
                    self.ticks.start()
                    return None
        except Exception:  # noqa: BLE001 - a scan bug must not take the drawing down
            log.exception("failure scan failed")
            self._steps = None
            self.panel.show_waiting("The failure scan could not run: treat every failure as unchecked.")
            return None
        self._steps = None
        return self._show(Scan(rig, result, tuple(done)))

    def _show(self, s: Scan, again: bool = False) -> Scan:
        from solver.failure_warnings import plan_zones

        self.scan = s
        if not again:
            self.scans += 1
            self.panel.show_scan(s)
        overlay = self.live.overlay
        if s.ok and overlay.layers.get("zones", True):
            overlay.zones = plan_zones(s)
            overlay.zones_item.set_zones(overlay.zones)
            self._legend(theme.COMPUTED_ZONE_NAMES)
        self._dock_warnings(s)
        return s

    def _dock_warnings(self, s: Scan) -> None:
        """The Forces dock's warnings with the fixed-bight person warnings swapped for the scan's failure-named ones."""
        from solver.scan_warnings import scanned_result

        sched = self.live.scheduler
        if s.ok and sched.result is s.intact:
            self.live.panel.show_warnings(scanned_result(s.intact, s))

    def _legend(self, names) -> None:
        legend = self.live.overlay.legend
        if legend.zone_names != names:
            legend.zone_names = names
            legend.parentWidget().update(legend.geometry())

    def _ghost(self, f: Failure | None) -> None:
        s = self.scan
        self.ghost.show_failure(s.rig if s else None, s.intact if s else None, f)


def install_what_if(window) -> WhatIf:
    """Add the What-if dock and its ghost to ``window`` (a MainWindow with live forces installed)."""
    return WhatIf(window, window.live)
