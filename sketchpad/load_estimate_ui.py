"""Tools ▸ Estimate load from the current: the drag equation, live, and the haulers it takes.

The planner types the current speed (m/s, mph or km/h; 1 mph = 0.44704 m/s
exactly, NIST SP 811), the area facing the flow (m² or ft²; 1 ft = 0.3048 m) and
picks a drag shape (or types C_d).  The force F = ½ ρ C_d A v² from
:func:`solver.loads.drag_force` is shown as they type, with its assumptions in
words.  "Apply to load" sets the load's ``required_N`` through
:func:`solver.loads.apply_load_estimate` as one undoable edit.  Beside the force,
the pull and haulers that force needs, solved on the current rig
(:func:`solver.pull_needed.need_for_load`).  The dialog computes nothing itself.
"""

from __future__ import annotations

import logging
import math
from typing import Callable

from PySide6.QtCore import Qt
from PySide6.QtGui import QAction
from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QVBoxLayout,
    QWidget,
)

from sketchpad import theme
from sketchpad.fields import ERROR_STYLE, QuantityField, decimal_mark
from sketchpad.plain_text import plain_label
from solver import limits, units
from solver.errors import RopewrightError, UnitError
from solver.hauling import DEFAULT_PER_PERSON_N
from solver.loads import DRAG_SHAPES, EXTRA_KEY, LoadEstimate, apply_load_estimate
from solver.model import Rig
from solver.result import Result

log = logging.getLogger(__name__)

SPEED_UNITS, SPEED_ALIASES = units.SPEED_FACTORS, units.SPEED_ALIASES
AREA_UNITS, AREA_ALIASES = units.AREA_FACTORS, units.AREA_ALIASES
#: Sanity bound, m/s (no source): faster than any river current; it catches km/h typed as m/s.
MAX_SPEED_M_S = 15.0
#: Sanity bound on a typed drag coefficient (no source): tabulated bluff-body values stay below about 2.5.
MAX_CD = 5.0
TYPED_CD = "__typed__"



class UnitNumberField(QuantityField):
    """A number typed in one of a few units (speed or area); ``value()`` is SI, shown in the chosen unit."""

    def __init__(self, what: str, table: dict[str, float], aliases: dict[str, str], unit: Callable[[], str],
                 **kw) -> None:
        super().__init__(what, "number", unit=unit, **kw)
        self.table = table
        self.aliases = aliases

    def format(self, value) -> str:
        if value is None:
            return ""
        v = float(value) / self.table[self.unit()]
        return f"{v:.4g}".replace(".", decimal_mark()) + f" {self.unit()}"

    def parse(self, text: str):
        value = units.parse_in_table(text, self.unit(), self.table, self.aliases, self.what, decimal_mark())
        self._check_bounds(value, text.strip())
        return value

    def _fmt_bound(self, v: float) -> str:
        return f"{v / self.table[self.unit()]:.3g} {self.unit()}"

    def live_value(self):
        """The SI value of what is typed now, or None if it cannot be read (no message shown)."""
        return _live(self)


def _unit_combo(table: dict[str, float], name: str) -> QComboBox:
    box = QComboBox()
    box.addItems(list(table))
    box.setObjectName(name)
    box.setMinimumContentsLength(5)
    box.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
    return box


class LoadEstimateDialog(QDialog):
    """Current speed, area and shape in; drag force, its assumptions and the haulers needed out."""

    def __init__(self, document, parent: QWidget | None = None,
                 result_source: Callable[[], tuple[Rig | None, Result | None]] | None = None,
                 load_id: str | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Estimate load from the current")
        self.setObjectName("load_estimate_dialog")
        self.document = document
        self.result_source = result_source
        self.speed_unit = _unit_combo(SPEED_UNITS, "speed_unit")
        self.area_unit = _unit_combo(AREA_UNITS, "area_unit")
        if document.rig.display.length == "ft":
            self.speed_unit.setCurrentText("mph")
            self.area_unit.setCurrentText("ft²")
        self.load_box = QComboBox()
        self.load_box.setObjectName("load_box")
        self.speed = UnitNumberField("current speed", SPEED_UNITS, SPEED_ALIASES, self.speed_unit.currentText,
                                     minimum=0.0, strict=True, maximum=MAX_SPEED_M_S)
        self.area = UnitNumberField("area facing the flow", AREA_UNITS, AREA_ALIASES, self.area_unit.currentText,
                                    minimum=0.0, strict=True)
        self.shape = QComboBox()
        self.shape.setObjectName("shape")
        for s in DRAG_SHAPES.values():
            self.shape.addItem(f"{s.label}  (Cd {s.cd:g})", s.key)
        self.shape.addItem("Type the drag coefficient…", TYPED_CD)
        self._last_shape = self.shape.itemData(0)
        self.cd = QuantityField("drag coefficient", "number", minimum=0.0, strict=True, maximum=MAX_CD)
        self.factor = QuantityField("extra factor", "number", minimum=0.0, strict=True)
        self.factor.set_value(1.0)
        self.per_person = QuantityField("force per hauler", "force", unit=lambda: self.document.rig.display.force,
                                        minimum=0.0, strict=True, limit=("point", "force_per_person_N"))
        self.per_person.set_value(self._default_per_person())
        self.force_label = plain_label("—")
        self.force_label.setObjectName("force_label")
        self.force_label.setFont(theme.font(theme.LABEL_POINT_SIZE + 5, bold=True))
        self.assumptions = plain_label()
        self.assumptions.setObjectName("assumptions")
        self.assumptions.setWordWrap(True)
        self.haulers = plain_label()
        self.haulers.setObjectName("haulers_label")
        self.haulers.setWordWrap(True)
        self.error = plain_label()
        self.error.setObjectName("estimate_error")
        self.error.setStyleSheet(ERROR_STYLE)
        self.error.setWordWrap(True)

        def with_unit(field: QWidget, box: QComboBox) -> QWidget:
            row = QWidget()
            h = QHBoxLayout(row)
            h.setContentsMargins(0, 0, 0, 0)
            h.addWidget(field, 1)
            h.addWidget(box, 0, Qt.AlignTop)
            return row

        form = QFormLayout()
        form.addRow("Load", self.load_box)
        form.addRow("Current speed", with_unit(self.speed, self.speed_unit))
        form.addRow("Area facing the flow", with_unit(self.area, self.area_unit))
        form.addRow("Shape", self.shape)
        self.cd_label = QLabel("Drag coefficient Cd")
        form.addRow(self.cd_label, self.cd)
        form.addRow("Extra factor", self.factor)
        result = QGroupBox("Force on the load (drag equation)")
        right = QVBoxLayout(result)
        right.addWidget(self.force_label)
        right.addWidget(self.assumptions)
        per = QFormLayout()
        per.addRow("Force per hauler", self.per_person)
        right.addLayout(per)
        right.addWidget(self.haulers)
        right.addStretch(1)
        top = QVBoxLayout()
        top.addLayout(form)
        top.addWidget(result, 1)
        self.buttons = QDialogButtonBox(QDialogButtonBox.Close)
        self.apply_button = self.buttons.addButton("Apply to load", QDialogButtonBox.ApplyRole)
        self.apply_button.setObjectName("apply_to_load")
        self.buttons.rejected.connect(self.reject)
        self.apply_button.clicked.connect(self.apply_to_load)
        lay = QVBoxLayout(self)
        lay.addLayout(top)
        lay.addWidget(self.error)
        lay.addWidget(self.buttons)
        self.setMinimumWidth(640)
        self.resize(700, 500)

        for f in (self.speed, self.area, self.cd, self.factor, self.per_person):
            f.edit.textEdited.connect(lambda _t: self.update_estimate())
            f.committed.connect(lambda v, f=f: (f.set_value(v), self.update_estimate()))
        self.speed_unit.currentTextChanged.connect(lambda _u: self._unit_changed(self.speed))
        self.area_unit.currentTextChanged.connect(lambda _u: self._unit_changed(self.area))
        self.shape.currentIndexChanged.connect(lambda _i: self._shape_changed())
        self.load_box.currentIndexChanged.connect(lambda _i: self._load_changed())
        document.changed.connect(self._rig_changed)
        self._fill_loads(load_id)
        self._shape_changed()

    # --- model -> widgets -------------------------------------------------------------------
    def _default_per_person(self) -> float:
        rig = self.document.rig
        return next((float(p.force_per_person_N) for p in rig.points
                     if p.kind == "haul" and p.force_per_person_N), DEFAULT_PER_PERSON_N)

    def _fill_loads(self, load_id: str | None) -> None:
        rig = self.document.rig
        current = load_id or self.load_box.currentData()
        self.load_box.blockSignals(True)
        self.load_box.clear()
        for p in rig.points_of_kind("load"):
            self.load_box.addItem(f"{p.name} ({p.id})" if p.label else p.id, p.id)
        i = self.load_box.findData(current)
        self.load_box.setCurrentIndex(max(i, 0))
        self.load_box.blockSignals(False)
        self._load_changed()

    def _load_changed(self) -> None:
        """Show the inputs of the estimate the load already carries, if it has one."""
        pid = self.load_box.currentData()
        rig = self.document.rig
        if pid is None or not rig.has_point(pid):
            self.update_estimate()
            return
        old = rig.point(pid).extra.get(EXTRA_KEY)
        if isinstance(old, dict) and old.get("method") == "drag-equation":
            try:
                self.speed.set_value(float(old["speed_m_s"]))
                self.area.set_value(float(old["area_m2"]))
                self.factor.set_value(float(old.get("factor", 1.0)))
                shape = old.get("shape")
                if shape in DRAG_SHAPES and math.isclose(float(old["cd"]), DRAG_SHAPES[shape].cd):
                    self.shape.setCurrentIndex(self.shape.findData(shape))
                else:
                    self.shape.setCurrentIndex(self.shape.findData(TYPED_CD))
                    self.cd.set_value(float(old["cd"]))
            except (KeyError, TypeError, ValueError):
                log.info("load %s: earlier estimate unreadable, starting afresh", pid)
        self.update_estimate()

    def _rig_changed(self, _rig) -> None:
        if self.load_box.count() != sum(1 for _ in self.document.rig.points_of_kind("load")):
            self._fill_loads(None)
        self.update_estimate()

    def _unit_changed(self, field: UnitNumberField) -> None:
        value = field.live_value() if field.edit.text().strip() else None
        if value is not None:
            field.set_value(value)  # the same speed, shown in the new unit
        self.update_estimate()

    def _shape_changed(self) -> None:
        typed = self.shape.currentData() == TYPED_CD
        if not typed:
            self._last_shape = self.shape.currentData()  # a typed Cd is described against the last shape chosen
        self.cd.setVisible(typed)
        self.cd_label.setVisible(typed)
        if not typed:
            self.cd.clear_error()
        self.update_estimate()

    # --- the estimate ---------------------------------------------------------------------------
    def estimate(self) -> LoadEstimate | None:
        """The estimate for what is typed now, or None if a field cannot be read."""
        speed, area = self.speed.live_value(), self.area.live_value()
        factor = _live(self.factor)
        typed = self.shape.currentData() == TYPED_CD
        cd = _live(self.cd) if typed else None
        if speed is None or area is None or factor is None or (typed and cd is None):
            return None
        shape = self._last_shape if typed else self.shape.currentData()
        return LoadEstimate(speed_m_s=speed, area_m2=area, shape=shape, cd=cd, factor=factor)

    @property
    def force_unit(self) -> str:
        return self.document.rig.display.force

    def update_estimate(self) -> None:
        est = self.estimate()
        if est is None:
            self.force_label.setText("—")
            self.assumptions.setText("Type the current speed and the area facing the flow.")
            self.haulers.setText("")
            self.apply_button.setEnabled(False)
            return
        try:
            force = est.force_N
        except RopewrightError as exc:
            self.force_label.setText("—")
            self.assumptions.setText(exc.message)
            self.apply_button.setEnabled(False)
            return
        unit = self.force_unit
        other = "lbf" if unit != "lbf" else "kN"
        self.force_label.setText(f"{units.format_force(force, unit)}   ({units.format_force(force, other)})")
        self.assumptions.setText(est.assumptions)
        self.apply_button.setEnabled(self.load_box.currentData() is not None)
        self.haulers.setText(self._haulers_text(force))

    def _haulers_text(self, force: float) -> str:
        per = _live(self.per_person)
        if per is None:
            return "Haulers: type the force one hauler gives."
        rig, result = self.result_source() if self.result_source is not None else (None, None)
        if result is None or rig is None:
            return "Haulers: the rig has not been solved yet."
        if rig != self.document.rig:
            return "Haulers: solving the changed rig…"
        lid = self.load_box.currentData()
        if not result.ok or not result.ma_actual or lid not in result.loads:
            return "Haulers: the rig does not solve to a mechanical advantage yet (draw a haul system to the load)."
        from dataclasses import replace

        from solver.pull_needed import need_for_load, need_sentence

        shown = replace(rig, display=replace(rig.display, force=self.force_unit))
        need = need_for_load(shown, result, lid, required_N=force, per_person_N=per)
        if need is None:
            return "Haulers: nothing to work out for no force."
        return (f"Haulers for {units.format_force(force, self.force_unit)} at the load (actual MA now "
                f"{result.ma_actual:.2f}:1): " + need_sentence(shown, need) + " The per-hauler force is a "
                "sustained long-haul figure: if the load does not move, stop and re-assess rather than pull harder.")

    def refresh_result(self, *_args) -> None:
        """A new solve arrived: the haulers line uses its actual MA."""
        self.update_estimate()

    # --- widgets -> model ---------------------------------------------------------------------
    def apply_to_load(self) -> bool:
        """Set the load's required force to the estimate as one undoable edit; False with messages if a field is bad."""
        bad = False
        fields = [self.speed, self.area, self.factor] + ([self.cd] if self.shape.currentData() == TYPED_CD else [])
        for f in fields:
            try:
                f.parse(f.edit.text())
            except UnitError as exc:
                f.show_error(exc.message)
                bad = True
        pid = self.load_box.currentData()
        if pid is None:
            self.error.setText("There is no load in the sketch: place one (L) first.")
            return False
        est = self.estimate()
        if bad or est is None:
            self.error.setText("Fix the field marked in red first; nothing was changed.")
            return False
        problem = limits.number_range("point", "required_N").problem(est.force_N)
        if problem:  # the rig file could not hold it: say so instead of making the rig unsaveable
            self.error.setText(f"The estimated force {units.format_force(est.force_N, self.force_unit)} {problem} "
                               "newtons a rig file holds; check the speed and the area. Nothing was changed.")
            return False
        try:
            new = apply_load_estimate(self.document.rig, pid, est)
        except RopewrightError as exc:
            self.error.setText(exc.message)
            return False
        self.error.setText("")
        name = self.document.rig.point(pid).name
        self.document.apply(new, f"Estimate {name} from the current ({units.format_force(est.force_N, self.force_unit)})")
        return True

    def done(self, r: int) -> None:  # noqa: D401 - Qt's name
        try:
            self.document.changed.disconnect(self._rig_changed)
        except (RuntimeError, TypeError):
            pass
        super().done(r)


def _live(field: QuantityField):
    """The SI value in ``field`` now: the exact value it shows (not its rounded text), else what is being typed."""
    if field.is_untouched() and not field.has_error:
        return field.value()
    try:
        return field.parse(field.edit.text())
    except UnitError:
        return None


class LoadEstimateController:
    """Tools ▸ Estimate load from the current… for a MainWindow."""

    def __init__(self, window) -> None:
        self.window = window
        self.action = QAction("Estimate load from the &current…", window)
        self.action.setStatusTip("Drag equation: the force a current puts on a pinned boat, and the haulers it takes")
        self.action.triggered.connect(self.open_dialog)
        window.menu_tools.addSeparator()
        window.menu_tools.addAction(self.action)

    def _result(self) -> tuple[Rig | None, Result | None]:
        live = getattr(self.window, "live", None)
        if live is None:
            return None, None
        return live.scheduler.rig, live.scheduler.result

    def make_dialog(self) -> LoadEstimateDialog:
        selected = [k[1] for k in self.window.canvas.selected_keys() if k[0] == "point"]
        rig = self.window.document.rig
        load = next((pid for pid in selected if rig.has_point(pid) and rig.point(pid).kind == "load"), None)
        dialog = LoadEstimateDialog(self.window.document, self.window, self._result, load)
        live = getattr(self.window, "live", None)
        if live is not None:
            live.scheduler.result_ready.connect(dialog.refresh_result)
            dialog.finished.connect(lambda _r: _disconnect(live.scheduler.result_ready, dialog.refresh_result))
        return dialog

    def open_dialog(self) -> None:
        dialog = self.make_dialog()
        dialog.setAttribute(Qt.WA_DeleteOnClose)
        dialog.open()


def _disconnect(signal, slot) -> None:
    try:
        signal.disconnect(slot)
    except (RuntimeError, TypeError):
        pass


def install_load_estimate(window) -> LoadEstimateController:
    """Add Tools ▸ Estimate load from the current… to ``window`` (a MainWindow)."""
    return LoadEstimateController(window)
