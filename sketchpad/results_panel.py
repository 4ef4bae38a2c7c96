"""The Forces dock: the solver's numbers in sortable tables, a summary line, and the warnings to act on.

Tabs list rope pieces (rope, piece, tension, stretch, utilization), anchors (force,
direction as a bearing from north in plan or words in elevation, capacity with its kind,
use with the margin it was taken against; in ``hold`` the range static friction allows) and hardware
(load on each pulley, carabiner or edge against its MBS, from
:func:`solver.checks.pass_loads`).  The summary gives the mechanical advantage nominal /
ideal / actual, haul force, the pull needed (solved) and the force delivered to each load against the
force it needs.  Clicking a warning emits ``subject_activated(subject)``; the window
selects and centres that item on the canvas.  The panel only shows numbers: it
never computes forces itself beyond unit conversion and ratios of Result values.
"""

from __future__ import annotations

import logging
import math

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QColor, QStandardItem, QStandardItemModel
from PySide6.QtWidgets import (
    QAbstractItemView,
    QHeaderView,
    QListWidget,
    QListWidgetItem,
    QSplitter,
    QTableView,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from sketchpad import theme
from sketchpad.messages import failure_text
from sketchpad.plain_text import plain_label, tip
from solver.directions import bearing_deg, direction_heading, direction_text
from solver.model import Rig
from solver.readouts import capacity_text, ma_short, use_text
from solver.result import Result
from solver.units import force_to, format_force

log = logging.getLogger(__name__)

SORT_ROLE = Qt.UserRole + 1
SUBJECT_ROLE = Qt.UserRole + 2
SEVERITY_ORDER = {"danger": 0, "warning": 1, "info": 2}
SEVERITY_MARK = {"danger": "DANGER:", "warning": "Warning:", "info": "Note:"}  # words: DejaVu has no sign glyphs
def _cell(text: str, sort_value=None, colour: QColor | None = None) -> QStandardItem:
    item = QStandardItem(text)
    item.setEditable(False)
    item.setToolTip(text)
    item.setData(sort_value if sort_value is not None else text, SORT_ROLE)
    if isinstance(sort_value, (int, float)):
        item.setTextAlignment(Qt.AlignRight | Qt.AlignVCenter)
    if colour is not None:
        item.setData(colour, Qt.DecorationRole)
    return item


def _pct(u: float | None) -> str:
    return "—" if u is None or not math.isfinite(u) else f"{u * 100:.0f} %"


class _Table(QTableView):
    """A read-only table sorted by numeric values (not text) through a proxy model."""

    def __init__(self, headers: list[str], parent=None) -> None:
        super().__init__(parent)
        from sketchpad.table_fit import WrappedHeadings

        self.source = QStandardItemModel(0, len(headers), self)
        self.source.setHorizontalHeaderLabels(headers)
        self.proxy = WrappedHeadings(self)
        self.proxy.setSourceModel(self.source)
        self.proxy.setSortRole(SORT_ROLE)
        self.setModel(self.proxy)
        self.setSortingEnabled(True)
        self.setSelectionBehavior(QAbstractItemView.SelectRows)
        self.setEditTriggers(QAbstractItemView.NoEditTriggers)
        self.setAlternatingRowColors(True)
        self.verticalHeader().setVisible(False)
        # every column in view in a narrow dock: long texts wrap at spaces (sketchpad.table_fit)
        self.horizontalHeader().setSectionResizeMode(QHeaderView.Interactive)
        self.setWordWrap(True)

    def resizeEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().resizeEvent(event)
        self.fit()

    def fit(self) -> None:
        from sketchpad.table_fit import fit_columns

        fit_columns(self)

    def set_rows(self, rows: list[list[QStandardItem]]) -> None:
        header = self.horizontalHeader()
        col, order = header.sortIndicatorSection(), header.sortIndicatorOrder()
        self.setSortingEnabled(False)
        self.source.setRowCount(0)
        for row in rows:
            self.source.appendRow(row)
        self.setSortingEnabled(True)
        if col >= 0:
            self.sortByColumn(col, order)
        self.fit()

    def cell_text(self, row: int, col: int) -> str:
        return self.proxy.index(row, col).data()

    def column(self, name: str) -> int:
        for c in range(self.source.columnCount()):
            if self.source.headerData(c, Qt.Horizontal) == name:
                return c
        raise KeyError(name)


class ResultsPanel(QWidget):
    """Summary, sortable tables of pieces, anchors and hardware, and the warnings list."""

    subject_activated = Signal(str)  # a warning's subject (point, rope, "rope@point", "a,b,c")

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self.summary = plain_label("No result yet.")
        self.summary.setWordWrap(True)
        self.summary.setTextInteractionFlags(Qt.TextSelectableByMouse)
        self.status = plain_label("")
        self.status.setWordWrap(True)
        self.segments = _Table(["rope", "piece", "tension", "stretch", "use"])
        self.anchors = _Table(["anchor", "force", direction_heading("plan"), "capacity", "use", "hold range"])
        self.hardware = _Table(["hardware", "rope", "at", "load", "MBS", "use"])
        self.tabs = QTabWidget()
        self.tabs.addTab(self.segments, "Rope pieces")
        self.tabs.addTab(self.anchors, "Anchors")
        self.tabs.addTab(self.hardware, "Hardware")
        self.warnings = QListWidget()
        self.warnings.setWordWrap(True)
        self.warnings.setToolTip("Click a warning to select what it is about on the plan")
        self.warnings.itemClicked.connect(self._warning_clicked)
        self.warnings.itemActivated.connect(self._warning_clicked)
        split = QSplitter(Qt.Vertical)
        split.addWidget(self.tabs)
        split.addWidget(self.warnings)
        split.setSizes([300, 200])
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        lay.addWidget(self.status)
        lay.addWidget(self.summary)
        lay.addWidget(split, 1)
        self.rig: Rig | None = None
        self.result: Result | None = None

    # --- filling ------------------------------------------------------------------------------------
    def show_result(self, rig: Rig, result: Result, good_rig: Rig | None = None, good: Result | None = None,
                    gap=None) -> None:
        """Show ``result``; on a failure show why, and keep the tables of the last good result (marked old).

        ``gap`` (a :class:`solver.completeness.SketchGap`): the rig is still being drawn, so a failure is
        shown as that calm note, not as an alarm.
        """
        if result.ok:
            self.status.setText("")
            self.status.hide()
            shown_rig, shown = rig, result
        elif gap is not None:
            self.status.setText(gap.message)
            self.status.setStyleSheet(f"color: {theme.HINT_STATE_TEXT.name()}; font-weight: bold;")
            self.status.show()
            shown_rig, shown = (good_rig, good) if good is not None and good.ok else (rig, None)
        else:
            self.status.setText(failure_text(result, rig)
                                + ("\nThe tables show the last good result." if good is not None else ""))
            self.status.setStyleSheet(f"color: {theme.BANNER_BACK.name()}; font-weight: bold;")
            self.status.show()
            shown_rig, shown = (good_rig, good) if good is not None and good.ok else (rig, None)
        self.rig, self.result = shown_rig, shown
        if shown is None:
            self.summary.setText("No forces yet: the sketch is not finished." if gap is not None
                                 else "No forces: the rig has not solved yet.")
            for t in (self.segments, self.anchors, self.hardware):
                t.set_rows([])
        else:
            self.summary.setText(summary_text(shown_rig, shown))
            self._fill_segments(shown_rig, shown)
            self._fill_anchors(shown_rig, shown)
            self._fill_hardware(shown_rig, shown)
        self._fill_warnings(result if result.ok or shown is None else shown,
                            failed=None if result.ok or gap is not None else result)

    def show_warnings(self, result: Result) -> None:
        """Refill only the warnings list from a solved ``result`` (the failure scan renames the person warnings)."""
        self._fill_warnings(result, failed=None)

    def _fill_segments(self, rig: Rig, result: Result) -> None:
        unit = rig.display.force
        rows = []
        names = {p.id: p.name for p in rig.points}
        ropes = {r.id: r.name for r in rig.ropes}
        for s in result.segments:
            rope = ropes.get(s.rope, s.rope)
            piece = f"{s.index + 1}: {names.get(s.from_point, s.from_point)} → {names.get(s.to_point, s.to_point)}"
            rows.append([
                _cell(rope), _cell(piece, s.index),
                _cell(format_force(s.tension_N, unit), force_to(s.tension_N, unit)),
                _cell(f"{s.strain * 100:.2f} %", s.strain),
                _cell(_pct(s.utilization), s.utilization, theme.utilization_colour(s.utilization)),
            ])
        self.segments.set_rows(rows)

    def _fill_anchors(self, rig: Rig, result: Result) -> None:
        unit = rig.display.force
        sf = float(rig.settings.min_safety_factor)
        self.anchors.source.setHeaderData(2, Qt.Horizontal, direction_heading(rig.view))
        rows = []
        for aid, a in result.anchors.items():
            name = rig.point(aid).name if rig.has_point(aid) else aid
            hold = result.hold_anchor_range.get(aid)
            hold_text = f"{format_force(hold.low, unit)} – {format_force(hold.high, unit)}" if hold else "—"
            rows.append([
                _cell(name),
                _cell(format_force(a.force_N, unit), force_to(a.force_N, unit)),
                _cell(direction_text(a.direction_deg, rig.view, a.force_N),
                      bearing_deg(a.direction_deg) if rig.view == "plan" else a.direction_deg),
                _cell("not known" if a.capacity_N is None else capacity_text(a, unit),
                      -1.0 if a.capacity_N is None else force_to(a.capacity_N, unit)),
                _cell(use_text(a, sf), -1.0 if a.utilization is None else a.utilization,
                      theme.utilization_colour(a.utilization)),
                _cell(hold_text, hold.high if hold else -1.0),
            ])
        self.anchors.set_rows(rows)

    def _fill_hardware(self, rig: Rig, result: Result) -> None:
        from solver.checks import pass_loads
        from solver.errors import RopewrightError
        from solver.materials import hardware_for

        unit = rig.display.force
        sf = float(rig.settings.min_safety_factor)
        rows = []
        try:
            loads = pass_loads(rig, result)
        except Exception:  # noqa: BLE001 - the table is optional; the checks report the same thing
            log.exception("hardware loads failed")
            loads = []
        for rope_id, k, at, force in loads:
            rope = rig.rope(rope_id)
            hw_id = rope.path[k].hardware or ""
            try:
                hw = hardware_for(rig, hw_id)
                hw_name, mbs = hw.name, hw.mbs_N
            except (RopewrightError, KeyError):
                hw_name, mbs = f"{hw_id} (unknown)", None
            use = None if not mbs else force * sf / mbs
            where = rig.point(at).name if rig.has_point(at) else at
            rows.append([
                _cell(hw_name), _cell(rope.name), _cell(where),
                _cell(format_force(force, unit), force_to(force, unit)),
                _cell("not known" if mbs is None else format_force(mbs, unit), -1.0 if mbs is None else force_to(mbs, unit)),
                _cell(_pct(use), -1.0 if use is None else use, theme.utilization_colour(use)),
            ])
        self.hardware.set_rows(rows)

    def _fill_warnings(self, result: Result | None, failed: Result | None) -> None:
        self.warnings.clear()
        items = []
        if failed is not None:
            items.append(("danger", failed.subject, f"Solve failed: {failed.message or failed.status}"))
        if result is not None:
            for w in sorted(result.warnings, key=lambda w: SEVERITY_ORDER.get(w.severity, 3)):
                items.append((w.severity, w.subject, w.message))
        if not items:
            item = QListWidgetItem("No warnings.")
            item.setFlags(Qt.NoItemFlags)
            self.warnings.addItem(item)
            return
        for severity, subject, message in items:
            item = QListWidgetItem(f"{SEVERITY_MARK.get(severity, '•')} {message}")
            item.setData(SUBJECT_ROLE, subject)
            item.setToolTip(tip(f"{severity}: about {subject or 'the whole rig'}"))
            if severity == "danger":
                item.setForeground(theme.BANNER_BACK)
            self.warnings.addItem(item)

    def _warning_clicked(self, item: QListWidgetItem) -> None:
        subject = item.data(SUBJECT_ROLE)
        if subject:
            self.subject_activated.emit(str(subject))


def summary_text(rig: Rig, result: Result) -> str:
    """MA nominal/ideal/actual, then the summary sentences (load reached against needed, haulers, safety factor)."""
    from sketchpad.summary_words import sentences

    parts = []
    if result.ma_actual is not None:
        parts.append(ma_short(result, pending="—") + ".")
    return " ".join(parts + sentences(rig, result))
