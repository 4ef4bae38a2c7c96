"""Tools ▸ Rope and hardware specs: see, edit and embed material and hardware specs; share a team library.

The list shows the specs embedded in this rig, a team library imported from a
file, and the built-in library (:mod:`solver.materials`).  Selecting one shows its
fields; a material's stretch table is a two-column table (tension in the rig's
force unit, strain in %) checked as it is typed: every point must rise in both
tension and strain (:func:`solver.materials.material_problem`), and the row at
fault is named and marked.  "Embed in rig" puts an edited copy into the rig (an
embedded spec wins over the library, so the file solves the same anywhere);
"Save to rig" changes an embedded one; both are one undoable edit.  Import and
export read and write a team's library file through
:func:`solver.materials.library_from_json` / :func:`library_as_json`.
"""

from __future__ import annotations

import logging
import math
import pathlib
from dataclasses import replace
from decimal import Decimal, InvalidOperation

from PySide6.QtCore import Qt
from PySide6.QtGui import QAction, QBrush, QColor
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDialog,
    QFileDialog,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QStackedWidget,
    QTableWidget,
    QTableWidgetItem,
    QTreeWidget,
    QTreeWidgetItem,
    QVBoxLayout,
    QWidget,
)

from sketchpad.fields import ERROR_STYLE, QuantityField, decimal_mark
from sketchpad.plain_text import plain_label, tip
from solver import units
from solver.errors import RigFileError, RopewrightError, UnitError
from solver.materials import (
    LIBRARY_HARDWARE,
    LIBRARY_MATERIALS,
    hardware_problem,
    library_as_json,
    library_from_json,
    material_problem,
)
from solver.model import HARDWARE_KINDS, MATERIAL_KINDS, Hardware, Material, Rig

log = logging.getLogger(__name__)

BAD_ROW = QColor(198, 40, 40, 60)  # translucent red behind a stretch-table row at fault
GROUPS = (("rig", "In this rig (embedded)"), ("team", "Team library (imported)"), ("builtin", "Built-in library"))


# --- pure edits: Rig in, Rig out ---------------------------------------------------------------
def embed_material(rig: Rig, spec: Material, old_id: str | None = None) -> Rig:
    """``rig`` with ``spec`` embedded (replacing the embedded spec ``old_id`` or one with the same id).

    Renaming an embedded spec (``old_id`` != ``spec.id``) renames it in every rope that used it.
    """
    key = old_id or spec.id
    mats = [m for m in rig.materials if m.id not in (key, spec.id)]
    index = next((i for i, m in enumerate(rig.materials) if m.id == key), len(mats))
    mats.insert(min(index, len(mats)), spec)
    ropes = rig.ropes
    if old_id and old_id != spec.id:
        ropes = tuple(replace(r, material=spec.id) if r.material == old_id else r for r in ropes)
    return replace(rig, materials=tuple(mats), ropes=ropes)


def embed_hardware(rig: Rig, spec: Hardware, old_id: str | None = None) -> Rig:
    """``rig`` with ``spec`` embedded; renaming an embedded spec renames it at every pass that used it."""
    key = old_id or spec.id
    hws = [h for h in rig.hardware if h.id not in (key, spec.id)]
    index = next((i for i, h in enumerate(rig.hardware) if h.id == key), len(hws))
    hws.insert(min(index, len(hws)), spec)
    ropes = rig.ropes
    if old_id and old_id != spec.id:
        ropes = tuple(replace(r, path=tuple(replace(p, hardware=spec.id) if p.hardware == old_id else p
                                            for p in r.path)) for r in ropes)
    return replace(rig, hardware=tuple(hws), ropes=ropes)


def users_of(rig: Rig, kind: str, spec_id: str) -> list[str]:
    """Names of the ropes that use material (or hardware) ``spec_id``."""
    if kind == "material":
        return [r.name for r in rig.ropes if r.material == spec_id]
    return [r.name for r in rig.ropes if any(p.hardware == spec_id for p in r.path)]


def _library(kind: str) -> dict:
    return LIBRARY_MATERIALS if kind == "material" else LIBRARY_HARDWARE


def remove_spec(rig: Rig, kind: str, spec_id: str) -> Rig:
    """``rig`` without the embedded spec; RigModelError-like RopewrightError if a rope would lose its spec."""
    users = users_of(rig, kind, spec_id)
    if users and spec_id not in _library(kind):
        raise RopewrightError(f'{", ".join(users)} use{"s" if len(users) == 1 else ""} "{spec_id}", which is not in '
                              "the built-in library: give them another spec first")
    if kind == "material":
        return replace(rig, materials=tuple(m for m in rig.materials if m.id != spec_id))
    return replace(rig, hardware=tuple(h for h in rig.hardware if h.id != spec_id))


# --- the forms --------------------------------------------------------------------------------
class _SpecForm(QWidget):
    """Common fields of a spec form: id, kind, label, source."""

    kinds: tuple[str, ...] = ()

    def __init__(self, force_unit, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.force_unit = force_unit
        self.form = QFormLayout(self)
        self.id_field = QuantityField("id", "text", limit=("material", "id"))
        self.kind = QComboBox()
        self.kind.addItems(list(self.kinds))
        self.label = QuantityField("label", "text", optional=True, limit=("material", "label"))
        self.source = QuantityField("source", "text", optional=True, limit=("material", "source"))
        self.form.addRow("Id", self.id_field)
        self.form.addRow("Kind", self.kind)
        self.form.addRow("Label", self.label)

    def fields(self) -> list[QuantityField]:
        return [self.id_field, self.label, self.source]

    def _show_common(self, spec: Material | Hardware) -> None:
        """Every field's error cleared, and the id, kind, label and source of ``spec`` shown."""
        for f in self.fields():
            f.clear_error()
        self.id_field.set_value(spec.id)
        self.kind.setCurrentText(spec.kind)
        self.label.set_value(spec.label)
        self.source.set_value(spec.source)

    def read(self, field: QuantityField):
        """The value typed in ``field``; UnitError (also shown under the field) if it cannot be read."""
        try:
            value = field.parse(field.edit.text())
        except UnitError as exc:
            field.show_error(exc.message)
            raise
        field.clear_error()
        if value is not None and field.is_untouched():
            return field.value()  # untouched: the exact stored value, not its rounded display
        return value

    def show_problem(self, field: str, message: str) -> None:  # pragma: no cover - overridden
        raise NotImplementedError


class MaterialForm(_SpecForm):
    """Fields of a rope, sling or cord: strength, diameter and the stretch table."""

    kinds = MATERIAL_KINDS

    def __init__(self, force_unit, parent: QWidget | None = None) -> None:
        super().__init__(force_unit, parent)
        self.diameter = QuantityField("diameter", "number", optional=True, minimum=0.0, strict=True, suffixes=("mm",),
                                      limit=("material", "diameter_mm"))
        self.mbs = QuantityField("MBS", "force", unit=force_unit, minimum=0.0, strict=True, limit=("material", "mbs_N"))
        self.table = QTableWidget(0, 2)
        self.table.setObjectName("stretch_table")
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.Stretch)
        self.table.setSelectionBehavior(QAbstractItemView.SelectRows)
        self.table.setMinimumHeight(220)
        self.table_error = plain_label()
        self.table_error.setObjectName("stretch_error")
        self.table_error.setStyleSheet(ERROR_STYLE)
        self.table_error.setWordWrap(True)
        self.add_row = QPushButton("Add point")
        self.del_row = QPushButton("Remove point")
        self.add_row.clicked.connect(self._add_row)
        self.del_row.clicked.connect(self._del_row)
        buttons = QHBoxLayout()
        buttons.addWidget(self.add_row)
        buttons.addWidget(self.del_row)
        buttons.addStretch(1)
        box = QVBoxLayout()
        box.addWidget(self.table)
        box.addWidget(self.table_error)
        box.addLayout(buttons)
        self.form.addRow("Diameter (mm)", self.diameter)
        self.form.addRow("MBS", self.mbs)
        self.form.addRow("Stretch table", box)
        self.form.addRow("Source", self.source)
        self.table.cellChanged.connect(lambda _r, _c: self.check_table())
        self._extra: dict = {}
        self._shown: dict[tuple[int, str], float] = {}

    def fields(self) -> list[QuantityField]:
        return super().fields() + [self.diameter, self.mbs]

    def _headers(self) -> None:
        self.table.setHorizontalHeaderLabels([f"Tension ({self.force_unit()})", "Strain (%)"])

    def show_spec(self, m: Material) -> None:
        self._show_common(m)
        self.diameter.set_value(m.diameter_mm)
        self.mbs.set_value(m.mbs_N)
        self._extra = dict(m.extra)
        self._headers()
        self.table.blockSignals(True)
        self.table.setRowCount(len(m.stretch))
        unit = self.force_unit()
        self._shown = {}
        mark = decimal_mark()
        for i, (t, e) in enumerate(m.stretch):
            texts = (f"{units.force_to(t, unit):.6g}".replace(".", mark), f"{100.0 * e:.6g}".replace(".", mark))
            for c, (text, value) in enumerate(zip(texts, (t, e))):
                self.table.setItem(i, c, QTableWidgetItem(text))
                self._shown[(c, text)] = value  # an untouched cell gives back the exact stored value
        self.table.blockSignals(False)
        self.check_table()

    def _add_row(self) -> None:
        self.table.insertRow(self.table.rowCount())
        self.check_table()

    def _del_row(self) -> None:
        rows = sorted({i.row() for i in self.table.selectedIndexes()}, reverse=True) or [self.table.rowCount() - 1]
        for r in rows:
            if r >= 0:
                self.table.removeRow(r)
        self.check_table()

    def set_cell(self, row: int, column: int, text: str) -> None:
        """Put ``text`` in a stretch-table cell (as typing into it does)."""
        item = self.table.item(row, column)
        if item is None:
            self.table.setItem(row, column, QTableWidgetItem(text))
        else:
            item.setText(text)

    def stretch(self) -> tuple[tuple[float, float], ...]:
        """The table as (tension N, strain fraction) points; UnitError naming the row if a cell cannot be read."""
        unit = self.force_unit()
        mark = decimal_mark()
        points = []
        for r in range(self.table.rowCount()):
            cells = [self.table.item(r, c) for c in (0, 1)]
            texts = [c.text().strip() if c is not None else "" for c in cells]
            if not any(texts):
                continue  # an empty row (just added) is ignored
            if not all(texts):
                raise UnitError(f"Stretch table row {r + 1}: type both the tension and the strain", str(r))
            try:
                t = self._shown.get((0, texts[0])) or units.parse_force(texts[0], unit, decimal=mark)
            except UnitError as exc:
                raise UnitError(f"Stretch table row {r + 1}: {exc.message}", str(r)) from None
            try:
                # Decimal: "0.65" % is exactly the float nearest 0.0065, not 0.65 / 100
                e = self._shown.get((1, texts[1])) or float(
                    Decimal(units.plain_number(texts[1].rstrip("%").strip(), texts[1], mark)) / 100)
            except UnitError as exc:
                raise UnitError(f"Stretch table row {r + 1}: strain {exc.message}", str(r)) from None
            except (InvalidOperation, ValueError):
                raise UnitError(f"Stretch table row {r + 1}: strain {texts[1]!r} is not a number of %", str(r)) from None
            if not math.isfinite(e):
                raise UnitError(f"Stretch table row {r + 1}: strain must be a finite number", str(r))
            points.append((t, e))
        return tuple(points)

    def _mark_row(self, bad: int | None) -> None:
        self.table.blockSignals(True)
        for r in range(self.table.rowCount()):
            for c in (0, 1):
                item = self.table.item(r, c)
                if item is None:
                    item = QTableWidgetItem("")
                    self.table.setItem(r, c, item)
                item.setBackground(QBrush(BAD_ROW) if r == bad else QBrush())
        self.table.blockSignals(False)

    def check_table(self) -> bool:
        """Check the stretch table as typed; the first row at fault is named below the table and marked red."""
        try:
            stretch = self.stretch()
        except UnitError as exc:
            self.table_error.setText(exc.message)
            self._mark_row(int(exc.where) if exc.where.isdigit() else None)
            return False
        probe = Material("check", "rope", 1.0, stretch)
        problem = material_problem(probe)
        if problem is not None and problem[0].startswith("stretch"):
            self._table_problem(problem[0], problem[1])
            return False
        self.table_error.setText("")
        self._mark_row(None)
        return True

    def _table_problem(self, field: str, message: str) -> None:
        row = _row_of(field, self.table)
        if row is None and "[" not in field:
            self.table_error.setText("Stretch table: add at least one point (tension and strain).")
            self._mark_row(None)
            return
        text = message.split(": ", 1)[-1] if message.startswith('material "') else message
        self.table_error.setText(f"Stretch table row {row + 1}: {text}" if row is not None else f"Stretch table: {text}")
        self._mark_row(row)

    def spec(self) -> Material:
        """The material as typed; UnitError/RopewrightError with the message shown beside the field at fault."""
        sid = self.read(self.id_field)
        label = self.read(self.label) or ""
        source = self.read(self.source) or ""
        diameter = self.read(self.diameter)
        mbs = self.read(self.mbs)
        if not self.check_table():
            raise UnitError(self.table_error.text())
        m = Material(id=sid, kind=self.kind.currentText(), mbs_N=float(mbs), stretch=self.stretch(),
                     diameter_mm=None if diameter is None else float(diameter), label=label, source=source,
                     extra=self._extra)
        problem = material_problem(m)
        if problem is not None:
            self.show_problem(*problem)
            raise RopewrightError(problem[1], problem[0])
        return m

    def show_problem(self, field: str, message: str) -> None:
        if field.startswith("stretch"):
            self._table_problem(field, message)
            return
        target = {"mbs_N": self.mbs, "diameter_mm": self.diameter}.get(field, self.id_field)
        target.show_error(message)


def _row_of(field: str, table: QTableWidget) -> int | None:
    """Table row of ``stretch[i]`` (the i-th non-empty row)."""
    if "[" not in field:
        return None
    i = int(field.split("[", 1)[1].rstrip("]"))
    seen = -1
    for r in range(table.rowCount()):
        if any((table.item(r, c) is not None and table.item(r, c).text().strip()) for c in (0, 1)):
            seen += 1
            if seen == i:
                return r
    return None


class HardwareForm(_SpecForm):
    """Fields of a pulley, carabiner, ring, edge or rope grab."""

    kinds = HARDWARE_KINDS

    def __init__(self, force_unit, parent: QWidget | None = None) -> None:
        super().__init__(force_unit, parent)
        self.efficiency = QuantityField("efficiency", "number", optional=True, minimum=0.0, strict=True, maximum=1.0,
                                        placeholder="pulley, carabiner, ring: e.g. 0.9", limit=("hardware", "efficiency"))
        self.friction = QuantityField("friction coefficient", "number", optional=True, minimum=0.0,
                                      placeholder="edge: e.g. 0.44 for concrete",
                                      limit=("hardware", "friction_coefficient"))
        self.mbs = QuantityField("MBS", "force", unit=force_unit, optional=True, minimum=0.0, strict=True,
                                 limit=("hardware", "mbs_N"))
        self.size = QuantityField("size", "length", unit=lambda: "m", optional=True, minimum=0.0,
                                  limit=("hardware", "size_m"))
        self.slip = QuantityField("slip force", "force", unit=force_unit, optional=True, minimum=0.0, strict=True,
                                  placeholder="rope grab: where it starts to slide, e.g. 7 kN", limit=("hardware", "slip_N"))
        self.form.addRow("Efficiency (0–1)", self.efficiency)
        self.form.addRow("Friction coefficient", self.friction)
        self.form.addRow("MBS", self.mbs)
        self.form.addRow("Size (m)", self.size)
        self.form.addRow("Slip force (grab)", self.slip)
        self.form.addRow("Source", self.source)
        self._extra: dict = {}

    def fields(self) -> list[QuantityField]:
        return super().fields() + [self.efficiency, self.friction, self.mbs, self.size, self.slip]

    def show_spec(self, h: Hardware) -> None:
        self._show_common(h)
        self.efficiency.set_value(h.efficiency)
        self.friction.set_value(h.friction_coefficient)
        self.mbs.set_value(h.mbs_N)
        self.size.set_value(h.size_m)
        self.slip.set_value(h.slip_N)
        self._extra = dict(h.extra)

    def spec(self) -> Hardware:
        values = {f: self.read(f) for f in self.fields()}

        def num(f):
            return None if values[f] is None else float(values[f])

        h = Hardware(id=values[self.id_field], kind=self.kind.currentText(), efficiency=num(self.efficiency),
                     mbs_N=num(self.mbs), friction_coefficient=num(self.friction), label=values[self.label] or "",
                     source=values[self.source] or "", size_m=num(self.size), slip_N=num(self.slip),
                     extra=self._extra)
        problem = hardware_problem(h)
        if problem is not None:
            self.show_problem(*problem)
            raise RopewrightError(problem[1], problem[0])
        return h

    def show_problem(self, field: str, message: str) -> None:
        target = {"efficiency": self.efficiency, "friction_coefficient": self.friction, "mbs_N": self.mbs,
                  "size_m": self.size, "slip_N": self.slip}.get(field, self.id_field)
        target.show_error(message)


# --- the editor ---------------------------------------------------------------------------------
class TeamLibrary:
    """Specs imported from a team's library file, kept for the session (embed them to keep them in a rig)."""

    def __init__(self) -> None:
        self.materials: dict[str, Material] = {}
        self.hardware: dict[str, Hardware] = {}
        self.path: pathlib.Path | None = None


class LibraryEditor(QDialog):
    """The spec list (rig, team, built-in) beside a form for the selected spec, with embed/import/export."""

    def __init__(self, document, team: TeamLibrary | None = None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Rope and hardware specs")
        self.setObjectName("library_editor")
        self.document = document
        self.team = team if team is not None else TeamLibrary()
        self.tree = QTreeWidget()
        self.tree.setObjectName("spec_tree")
        self.tree.setHeaderLabels(["Spec", "What"])
        self.tree.setMinimumWidth(330)
        self.tree.header().setSectionResizeMode(0, QHeaderView.ResizeToContents)
        unit = lambda: self.document.rig.display.force  # noqa: E731
        self.material_form = MaterialForm(unit)
        self.hardware_form = HardwareForm(unit)
        self.empty = QLabel("Select a spec on the left to see and edit it.")
        self.empty.setAlignment(Qt.AlignCenter)
        self.stack = QStackedWidget()
        for w in (self.empty, self.material_form, self.hardware_form):
            self.stack.addWidget(w)
        self.where = plain_label()
        self.where.setObjectName("spec_where")
        self.where.setWordWrap(True)
        self.message = plain_label()
        self.message.setObjectName("library_message")
        self.message.setWordWrap(True)
        self.embed_button = QPushButton("Embed in rig")
        self.embed_button.setObjectName("embed")
        self.remove_button = QPushButton("Remove from rig")
        self.import_button = QPushButton("Import team library…")
        self.export_button = QPushButton("Export library…")
        self.close_button = QPushButton("Close")
        self.embed_button.clicked.connect(self.embed)
        self.remove_button.clicked.connect(self.remove)
        self.import_button.clicked.connect(self._ask_import)
        self.export_button.clicked.connect(self._ask_export)
        self.close_button.clicked.connect(self.reject)
        right = QVBoxLayout()
        right.addWidget(self.where)
        right.addWidget(self.stack, 1)
        edit_row = QHBoxLayout()
        edit_row.addWidget(self.embed_button)
        edit_row.addWidget(self.remove_button)
        edit_row.addStretch(1)
        right.addLayout(edit_row)
        top = QHBoxLayout()
        top.addWidget(self.tree)
        top.addLayout(right, 1)
        bottom = QHBoxLayout()
        bottom.addWidget(self.import_button)
        bottom.addWidget(self.export_button)
        bottom.addStretch(1)
        bottom.addWidget(self.close_button)
        lay = QVBoxLayout(self)
        lay.addLayout(top, 1)
        lay.addWidget(self.message)
        lay.addLayout(bottom)
        self.resize(980, 640)
        self.current: tuple[str, str, str] | None = None  # (group, kind, id)
        self.tree.currentItemChanged.connect(lambda cur, _prev: self._select_item(cur))
        document.changed.connect(self._rig_changed)
        self.fill()

    # --- list ------------------------------------------------------------------------------------
    def _groups(self) -> dict[str, tuple[dict, dict]]:
        rig = self.document.rig
        return {
            "rig": ({m.id: m for m in rig.materials}, {h.id: h for h in rig.hardware}),
            "team": (self.team.materials, self.team.hardware),
            "builtin": (LIBRARY_MATERIALS, LIBRARY_HARDWARE),
        }

    def fill(self) -> None:
        """Rebuild the list from the rig, the team library and the built-ins, keeping the selection."""
        keep = self.current
        self.tree.blockSignals(True)
        self.tree.clear()
        rig = self.document.rig
        for group, title in GROUPS:
            mats, hws = self._groups()[group]
            top = QTreeWidgetItem([title, f"{len(mats) + len(hws)}"])
            top.setFlags(Qt.ItemIsEnabled)
            self.tree.addTopLevelItem(top)
            for kind, specs in (("material", mats), ("hardware", hws)):
                for spec in specs.values():
                    used = users_of(rig, kind, spec.id)
                    what = spec.kind + (f", used by {len(used)}" if used else "")
                    item = QTreeWidgetItem([spec.id, what])
                    item.setToolTip(0, tip(spec.label))
                    item.setData(0, Qt.UserRole, (group, kind, spec.id))
                    top.addChild(item)
            top.setExpanded(True)
        self.tree.blockSignals(False)
        if keep is not None and not self.select(*keep):
            self.current = None
            self.stack.setCurrentWidget(self.empty)
            self._buttons()

    def find_item(self, group: str, kind: str, spec_id: str) -> QTreeWidgetItem | None:
        for i in range(self.tree.topLevelItemCount()):
            top = self.tree.topLevelItem(i)
            for j in range(top.childCount()):
                if top.child(j).data(0, Qt.UserRole) == (group, kind, spec_id):
                    return top.child(j)
        return None

    def select(self, group: str, kind: str, spec_id: str) -> bool:
        """Show spec ``spec_id`` of ``group`` ("rig", "team", "builtin") in the form; False if not listed."""
        item = self.find_item(group, kind, spec_id)
        if item is None:
            return False
        self.tree.setCurrentItem(item)
        self._select_item(item)
        return True

    def _select_item(self, item: QTreeWidgetItem | None) -> None:
        key = item.data(0, Qt.UserRole) if item is not None else None
        if not key:
            return
        group, kind, sid = key
        mats, hws = self._groups()[group]
        spec = (mats if kind == "material" else hws).get(sid)
        if spec is None:
            return
        self.current = (group, kind, sid)
        form = self.form
        form.show_spec(spec)
        self.stack.setCurrentWidget(form)
        where = {"rig": "Embedded in this rig: changes apply to this rig only.",
                 "team": "From the imported team library: embed it to use it in this rig.",
                 "builtin": "Built-in: edit fields, then embed an edited copy in this rig "
                            "(same id: the rig's copy wins)."}[group]
        self.where.setText(where)
        self.message.setText("")
        self._buttons()

    def _buttons(self) -> None:
        group = self.current[0] if self.current else None
        self.embed_button.setEnabled(group is not None)
        self.embed_button.setText("Save to rig" if group == "rig" else "Embed in rig")
        self.remove_button.setEnabled(group == "rig")

    @property
    def form(self):
        return self.material_form if self.current and self.current[1] == "material" else self.hardware_form

    def _rig_changed(self, _rig: Rig) -> None:
        self.fill()

    def _say(self, text: str, error: bool = False) -> None:
        self.message.setStyleSheet(ERROR_STYLE if error else "")
        self.message.setText(text)

    # --- edits --------------------------------------------------------------------------------------
    def embed(self) -> bool:
        """Embed the spec as typed (or save the embedded one) as one undoable edit; False with messages if bad."""
        if self.current is None:
            return False
        group, kind, old_id = self.current
        try:
            spec = self.form.spec()
        except RopewrightError:
            self._say("Fix what is marked in red first; nothing was changed.", error=True)
            return False
        rig = self.document.rig
        taken = {m.id for m in rig.materials} if kind == "material" else {h.id for h in rig.hardware}
        renaming = group == "rig" and spec.id != old_id
        if renaming and spec.id in taken:
            self.form.id_field.show_error(f'id: the rig already has a {kind} called "{spec.id}"')
            self._say("Fix what is marked in red first; nothing was changed.", error=True)
            return False
        old = old_id if group == "rig" else None
        new = embed_material(rig, spec, old) if kind == "material" else embed_hardware(rig, spec, old)
        verb = "Change" if group == "rig" else "Embed"
        if not self.document.apply(new, f"{verb} {kind} {spec.id}"):
            self._say("Nothing changed.")
            return True
        self.current = ("rig", kind, spec.id)
        self.fill()
        self._say(f'"{spec.id}" is embedded in this rig' + (" and overrides the built-in spec of that id."
                                                           if spec.id in _library(kind) else "."))
        return True

    def remove(self) -> bool:
        if self.current is None or self.current[0] != "rig":
            return False
        _g, kind, sid = self.current
        try:
            new = remove_spec(self.document.rig, kind, sid)
        except RopewrightError as exc:
            self._say(exc.message, error=True)
            return False
        self.current = None
        self.document.apply(new, f"Remove embedded {kind} {sid}")
        falls_back = sid in _library(kind) and users_of(new, kind, sid)
        self._say(f'Removed "{sid}" from the rig' + (": its ropes now use the built-in spec." if falls_back else "."))
        return True

    # --- files ------------------------------------------------------------------------------------
    def import_library(self, path) -> bool:
        """Read a team library file into the list; the reason in words (red) if the file is not usable."""
        path = pathlib.Path(path)
        try:
            text = path.read_text(encoding="utf-8")
            materials, hardware = library_from_json(text)
        except RigFileError as exc:
            where = f" (at {exc.where})" if exc.where else ""
            self._say(f"Could not import {path.name}: {exc.message}{where}. Nothing was imported.", error=True)
            return False
        except (OSError, UnicodeDecodeError) as exc:
            self._say(f"Could not read {path.name}: {getattr(exc, 'strerror', None) or exc}. Nothing was imported.",
                      error=True)
            return False
        self.team.materials.update(materials)
        self.team.hardware.update(hardware)
        self.team.path = path
        self.fill()
        self._say(f"Imported {len(materials)} materials and {len(hardware)} hardware specs from {path.name}.")
        return True

    def export_specs(self) -> tuple[dict[str, Material], dict[str, Hardware]]:
        """What an export holds: the team library, overridden by the specs embedded in this rig."""
        rig = self.document.rig
        mats = dict(self.team.materials)
        mats.update({m.id: m for m in rig.materials})
        hws = dict(self.team.hardware)
        hws.update({h.id: h for h in rig.hardware})
        return mats, hws

    def export_library(self, path) -> bool:
        """Write the team library plus this rig's embedded specs to ``path``; the reason in red if it cannot."""
        path = pathlib.Path(path)
        mats, hws = self.export_specs()
        if not mats and not hws:
            self._say("Nothing to export: embed a spec in the rig or import a team library first.", error=True)
            return False
        try:
            text = library_as_json(mats, hws, notes=f"Exported from {self.document.rig.title or 'a Ropewright sketch'}")
            tmp = path.with_name(path.name + ".tmp")
            tmp.write_text(text, encoding="utf-8")
            tmp.replace(path)
        except RopewrightError as exc:
            self._say(f"Could not export: {exc.message}", error=True)
            return False
        except OSError as exc:
            self._say(f"Could not write {path.name}: {exc.strerror or exc}", error=True)
            return False
        self._say(f"Exported {len(mats)} materials and {len(hws)} hardware specs to {path.name}.")
        return True

    def _ask_import(self) -> None:
        name, _ = QFileDialog.getOpenFileName(self, "Import team library", "", "Library (*.json);;All files (*)")
        if name:
            self.import_library(name)

    def _ask_export(self) -> None:
        name, _ = QFileDialog.getSaveFileName(self, "Export library", "team-library.json", "Library (*.json)")
        if name:
            self.export_library(name)

    def done(self, r: int) -> None:
        try:
            self.document.changed.disconnect(self._rig_changed)
        except (RuntimeError, TypeError):
            pass
        super().done(r)


class LibraryEditorController:
    """Tools ▸ Rope and hardware specs… for a MainWindow; the imported team library lives here for the session."""

    def __init__(self, window) -> None:
        self.window = window
        self.team = TeamLibrary()
        self.action = QAction("Rope and hardware &specs…", window)
        self.action.setStatusTip("See and edit rope and hardware specs, embed them in the rig, share a team library")
        self.action.triggered.connect(self.open_dialog)
        window.menu_tools.addAction(self.action)

    def make_dialog(self) -> LibraryEditor:
        return LibraryEditor(self.window.document, self.team, self.window)

    def open_dialog(self) -> None:
        dialog = self.make_dialog()
        dialog.setAttribute(Qt.WA_DeleteOnClose)
        dialog.open()


def install_library_editor(window) -> LibraryEditorController:
    """Add Tools ▸ Rope and hardware specs… to ``window`` (a MainWindow)."""
    return LibraryEditorController(window)
