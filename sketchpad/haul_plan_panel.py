"""The Haul plan dock: travel, throw and spacing; the stroke table, the totals, the plot and a scrubber.

The numbers come from :func:`solver.haul_plan.plan_haul` and are written by
:mod:`solver.haul_table`, so they read the same as ``ropewright haul`` and the report.  The
travel, throw and spacing are part of the rig (its ``haul_plan`` entry): changing one is an
undoable edit.  Dragging the scrubber shows the rig at that step of the haul over the canvas
(:class:`sketchpad.haul_ghost.HaulGhost`), a preview that changes nothing.
"""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtCore import QEventLoop, QRectF, Qt
from PySide6.QtGui import QAction, QPainter
from PySide6.QtWidgets import (
    QAbstractItemView,
    QApplication,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QProgressBar,
    QPushButton,
    QSizePolicy,
    QSlider,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from sketchpad import theme
from sketchpad.fields import QuantityField
from sketchpad.haul_ghost import HaulGhost
from sketchpad.haul_plot import paint_haul_plot, plot_key
from sketchpad.plain_text import plain_label
from solver import units
from solver.cautions import caution_lines
from solver.haul_plan import plan_haul
from solver.haul_result import HaulPlan
from solver.haul_settings import haul_settings, with_haul_settings
from solver.haul_table import HEADER, stroke_rows, summary_lines
from solver.model import Rig

PHASE_WORDS = {"start": "as drawn", "stroke": "hauling", "reset": "reset: capture holds, grab slid back"}


class HaulPlotWidget(QWidget):
    """Load travel against rope paid in, with the scrubbed step marked."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.plan: HaulPlan | None = None
        self.unit = "m"
        self.cursor: int | None = None
        self.setMinimumHeight(190)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        self.setToolTip(plot_key())

    def paintEvent(self, _event) -> None:  # noqa: N802 - Qt's name
        if self.plan is None:
            return
        p = QPainter(self)
        paint_haul_plot(p, QRectF(self.rect()), self.plan, self.unit, self.cursor)
        p.end()


class HaulPlanPanel(QWidget):
    """The dock's contents for one Document shown in one scene."""

    def __init__(self, document, scene, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self.ghost = HaulGhost(scene)
        self.plan: HaulPlan | None = None
        self.planned_rig: Rig | None = None
        unit = lambda: self.document.rig.display.length  # noqa: E731
        self.travel = QuantityField("travel", "length", unit=unit, minimum=0.0, strict=True, limit=("point", "x"))
        self.throw = QuantityField("throw", "length", unit=unit, minimum=0.0, strict=True, limit=("point", "x"))
        self.spacing = QuantityField("spacing", "length", unit=unit, minimum=0.0, strict=True, limit=("point", "x"))
        self.travel.setToolTip("How far the load must come")
        self.throw.setToolTip("Rope the team takes in per stroke before they must reset")
        self.spacing.setToolTip("Closest a travelling pulley may come to the next before the team resets")
        form = QFormLayout()
        form.addRow("Load travel", self.travel)
        form.addRow("Throw per stroke", self.throw)
        form.addRow("Reset at spacing", self.spacing)
        for name, field in (("travel_m", self.travel), ("throw_m", self.throw), ("spacing_m", self.spacing)):
            field.committed.connect(lambda v, n=name: self._set(n, v))
        self.plan_button = QPushButton("Plan the haul")
        self.plan_button.clicked.connect(self.replan)
        self.progress = QProgressBar()
        self.progress.setRange(0, 100)
        self.progress.setFormat("planning the haul … %p %")
        self.progress.setVisible(False)
        self.status = plain_label("")
        self.status.setWordWrap(True)
        self.summary = plain_label("")
        self.summary.setWordWrap(True)
        self.summary.setTextInteractionFlags(Qt.TextSelectableByMouse)
        self.summary.setMinimumWidth(260)
        self.slider = QSlider(Qt.Horizontal)
        self.slider.setEnabled(False)
        self.slider.setToolTip("Drag through the haul: the rig is shown at that step over the drawing")
        self.slider.valueChanged.connect(self.show_frame)
        self.step_label = plain_label("")
        self.table = QTableWidget(0, len(HEADER))
        self.table.setHorizontalHeaderLabels([h.replace(" ", "\n", 1) for h in HEADER])  # two lines: narrower
        self.table.verticalHeader().setVisible(False)
        self.table.setEditTriggers(QAbstractItemView.NoEditTriggers)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeToContents)
        self.table.setMinimumHeight(110)
        self.table.setMinimumWidth(320)
        self.plot = HaulPlotWidget()
        caution = plain_label(" ".join(caution_lines()))
        caution.setWordWrap(True)
        caution.setStyleSheet(theme.HAUL_CAUTION_STYLE)
        left = QVBoxLayout()
        left.addLayout(form)
        left.addWidget(self.plan_button)
        left.addWidget(self.progress)
        left.addWidget(self.status)
        left.addWidget(self.summary)
        left.addStretch(1)
        left.addWidget(caution)
        middle = QVBoxLayout()
        middle.addWidget(self.plot, 1)
        middle.addWidget(self.slider)
        middle.addWidget(self.step_label)
        lay = QHBoxLayout(self)
        lay.addLayout(left, 2)
        lay.addLayout(middle, 3)
        lay.addWidget(self.table, 4)
        document.changed.connect(self._rig_changed)
        self._rig_changed(document.rig)

    # --- settings (undoable, in the rig) ------------------------------------------------------
    def _set(self, name: str, value) -> None:
        rig = self.document.rig
        s = replace(haul_settings(rig), **{name: float(value)})
        self.document.apply(with_haul_settings(rig, s), f"haul plan: {name.split('_')[0]}")

    def _rig_changed(self, rig: Rig) -> None:
        if self.document.previewing:
            return
        s = haul_settings(rig)
        self.travel.set_value(s.travel_m)
        self.throw.set_value(s.throw_m)
        self.spacing.set_value(s.spacing_m)
        if self.plan is not None and rig is not self.planned_rig:
            # the preview showed another drawing: take it away until the haul is planned again
            self.status.setText("The drawing changed since this plan: plan the haul again.")
            self.ghost.hide()
            self.slider.setEnabled(False)

    # --- planning -----------------------------------------------------------------------------
    def replan(self) -> HaulPlan:
        """Plan the haul of the document's rig now and show it."""
        rig = self.document.rig
        s = haul_settings(rig)
        self.plan_button.setEnabled(False)
        self.progress.setValue(0)
        self.progress.setVisible(True)
        try:
            plan = plan_haul(rig, s.travel_m, s.throw_m, spacing_m=s.spacing_m, progress=self._progressed)
        finally:
            self.progress.setVisible(False)
            self.plan_button.setEnabled(True)
        self.show_plan(rig, plan)
        return plan

    def _progressed(self, fraction: float) -> None:
        """Show how far the plan has come and keep the window painting (no user input meanwhile)."""
        value = int(100 * fraction)
        if value != self.progress.value():
            self.progress.setValue(value)
            QApplication.processEvents(QEventLoop.ExcludeUserInputEvents)

    def show_plan(self, rig: Rig, plan: HaulPlan) -> None:
        self.plan, self.planned_rig = plan, rig
        lu, fu = rig.display.length, rig.display.force
        if plan.ok:
            self.status.setText(f"<b>{plan.message}.</b>")
        else:
            self.status.setText(f"<b style='color:{theme.HAUL_STOP.name()}'>Haul stops short: {plan.message}</b>")
        notes = summary_lines(rig, plan, lu, fu) + [f"Note: {w}" for w in plan.warnings]
        self.summary.setText("<br>".join(notes))
        rows = stroke_rows(plan, lu, fu)
        self.table.setRowCount(len(rows))
        for r, row in enumerate(rows):
            for c, text in enumerate(row):
                item = QTableWidgetItem(text)
                if 0 < c < len(row) - 1:
                    item.setTextAlignment(Qt.AlignRight | Qt.AlignVCenter)
                self.table.setItem(r, c, item)
        self.plot.plan, self.plot.unit = plan, lu
        self.slider.blockSignals(True)
        self.slider.setRange(0, max(len(plan.frames) - 1, 0))
        self.slider.setValue(0)
        self.slider.blockSignals(False)
        self.slider.setEnabled(len(plan.frames) > 1)
        self.show_frame(0)

    def show_frame(self, index: int) -> None:
        """Show frame ``index`` of the plan over the canvas (index 0, the rig as drawn, hides the preview)."""
        plan = self.plan
        if plan is None or not plan.frames:
            self.ghost.hide()
            return
        f = plan.frames[max(0, min(index, len(plan.frames) - 1))]
        lu, fu = self.planned_rig.display.length, self.planned_rig.display.force
        words = (f"stroke {f.stroke} ({PHASE_WORDS.get(f.phase, f.phase)}): "
                 f"{units.format_length(f.paid_in_m, lu)} paid in, load "
                 f"{units.format_length(f.load_travel_m, lu)}")
        if f.phase == "stroke":
            words += f", team pulls {units.format_force(f.haul_force_N, fu)}"
        self.step_label.setText(words)
        self.plot.cursor = index
        self.plot.update()
        if index == 0:
            self.ghost.hide()
        else:
            self.ghost.show(self.planned_rig, f, plan.load, f"stroke {f.stroke}: {units.format_length(f.load_travel_m, lu)}")


def install_haul_plan(window) -> HaulPlanPanel:
    """Add the Haul plan dock along the bottom of ``window`` (a MainWindow; wide enough for plot and table),
    closed until asked for (View > Panels, or Tools > Plan the haul, which also plans it); closing it
    takes the preview off the canvas."""
    panel = HaulPlanPanel(window.document, window.canvas, window)
    dock = window.add_panel(panel, "Haul plan", "dock_haul_plan", Qt.BottomDockWidgetArea)
    dock.hide()
    dock.visibilityChanged.connect(lambda shown: None if shown else panel.ghost.hide())
    window.haul_dock = dock
    act = QAction("Plan the haul stroke by stroke", window)
    act.setStatusTip("Rope paid in, stretch, resets: how far each stroke brings the load")
    act.triggered.connect(lambda: (dock.show(), dock.raise_(), panel.replan()))
    window.menu_tools.addAction(act)
    window.action_plan_haul = act
    return panel
