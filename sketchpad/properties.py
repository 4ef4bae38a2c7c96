"""The property panel: edit what is selected (point, rope, force, feature) or, with nothing selected, the rig.

A thin view over the model: every change builds a new Rig and goes through
:meth:`Document.apply` as one undoable edit; the widgets refresh from the model
on ``Document.changed`` inside ``QSignalBlocker``.  Numbers are typed and shown
in the rig's display units (m/ft, N/kN/lbf) through :mod:`solver.units`; bad
input shows a red message under the field and changes nothing.
"""

from __future__ import annotations

import logging
from dataclasses import replace
from typing import Callable

import shiboken6
from PySide6.QtCore import QSignalBlocker, Qt, Signal
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDockWidget,
    QFormLayout,
    QFrame,
    QGridLayout,
    QGroupBox,
    QLabel,
    QScrollArea,
    QSizePolicy,
    QStackedWidget,
    QVBoxLayout,
    QWidget,
)

from sketchpad.fields import ERROR_STYLE, CommitTextEdit, QuantityField
from sketchpad.plain_text import bold, escaped, plain_label, rich_label
from solver import limits, units
from solver.capacity import CAPACITY_KINDS, KIND_WORDS
from solver.directions import bearing_deg, direction_from_bearing, direction_text
from solver.weak_links import TERMINATIONS
from solver.templates import capture_grab_for
from solver.model import (
    ANCHOR_TYPES,
    FEATURE_KINDS,
    FORCE_UNITS,
    LENGTH_UNITS,
    MIDDLE_HOWS,
    MOTIONS,
    POINT_KINDS,
    Display,
    Hardware,
    Material,
    Rig,
    Rigging,
    Settings,
)

log = logging.getLogger(__name__)

POINT_KIND_NAMES = {
    "anchor": "Anchor",
    "load": "Load",
    "haul": "Haul team",
    "point": "Free point (junction, pulley, grab)",
    "person": "Person (rescuer position)",
}
ANCHOR_TYPE_NAMES = {t: t.capitalize() for t in ANCHOR_TYPES}
HOW_NAMES = {
    "tied": "Tied / rope grab",
    "pulley": "Over a pulley",
    "sliding": "Sliding (frictionless)",
    "edge": "Over an edge",
    "capture": "Progress capture (pulley + grab)",
    "hauled": "Hauled end",
}
#: hardware kinds that make sense for each way a rope passes a point
HARDWARE_FOR_HOW = {
    "tied": ("grab", "carabiner", "ring"),
    "pulley": ("pulley", "carabiner", "ring"),
    "sliding": ("ring", "carabiner"),
    "edge": ("edge",),
    "capture": ("pulley", "carabiner"),
    "hauled": (),
}
MOTION_NAMES = {"haul": "Hauling", "hold": "Holding", "lower": "Lowering"}
VIEW_NAMES = {"plan": "Plan (from above)", "elevation": "Elevation (side, with gravity)"}
FEATURE_KIND_NAMES = {k: k.capitalize() for k in FEATURE_KINDS}
NONE_TEXT = "(none)"
#: a tied pass's termination (solver.weak_links): what the property panel offers, with the share of MBS kept
TERMINATION_ITEMS = [("No knot named (full MBS)", None)] + [
    (f"{t.label.capitalize()} ({t.efficiency:.0%} of MBS)", t.id) for t in TERMINATIONS.values()]


def library_materials() -> dict[str, Material]:
    """The built-in rope library, or {} if it cannot be loaded (the panel then lists embedded specs only)."""
    try:
        from solver.materials import LIBRARY_MATERIALS
    except Exception as exc:  # noqa: BLE001 - the panel must open even without the library
        log.warning("material library unavailable: %s", exc)
        return {}
    return dict(LIBRARY_MATERIALS)


def library_hardware() -> dict[str, Hardware]:
    try:
        from solver.materials import LIBRARY_HARDWARE
    except Exception as exc:  # noqa: BLE001
        log.warning("hardware library unavailable: %s", exc)
        return {}
    return dict(LIBRARY_HARDWARE)


def materials_for(rig: Rig) -> dict[str, Material]:
    """Every material a rope may use: the library, overridden by the rig's embedded specs."""
    found = library_materials()
    for m in rig.materials:
        found[m.id] = m
    return found


def hardware_for(rig: Rig) -> dict[str, Hardware]:
    found = library_hardware()
    for h in rig.hardware:
        found[h.id] = h
    return found


def _narrow(box: QComboBox) -> QComboBox:
    """Let a combo with long entries shrink with the dock (entries show in full when opened)."""
    box.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
    box.setMinimumContentsLength(8)
    return box


def _combo(items: list[tuple[str, object]], parent: QWidget | None = None) -> QComboBox:
    box = _narrow(QComboBox(parent))
    for text, data in items:
        box.addItem(text, data)
    return box


def _set_combo(box: QComboBox, data) -> None:
    with QSignalBlocker(box):
        i = box.findData(data)
        if i < 0 and data is not None:
            box.addItem(str(data), data)
            i = box.count() - 1
        box.setCurrentIndex(max(i, 0))


def _heading(text: str) -> QLabel:
    return rich_label(bold(text))


class _Page(QWidget):
    """One page of the panel: knows its document and subject, refreshes from a Rig."""

    def __init__(self, panel: "PropertiesPanel") -> None:
        super().__init__()
        self.panel = panel
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        self.form = QFormLayout()
        outer.addLayout(self.form)
        outer.addStretch(1)
        self.form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        self.form.setRowWrapPolicy(QFormLayout.RowWrapPolicy.DontWrapRows)

    @property
    def rig(self) -> Rig:
        return self.panel.document.rig

    def length_unit(self) -> str:
        return self.rig.display.length

    def force_unit(self) -> str:
        return self.rig.display.force

    def apply(self, new_rig: Rig, text: str, merge_key: str | None = None) -> None:
        self.panel.document.apply(new_rig, text, merge_key=merge_key)

    def text_field(self, what: str, optional: bool = True, limit: tuple[str, str] | None = None) -> QuantityField:
        return QuantityField(what, "text", optional=optional, limit=limit)

    def force_field(self, what: str, **kw) -> QuantityField:
        return QuantityField(what, "force", unit=self.force_unit, **kw)

    def length_field(self, what: str, **kw) -> QuantityField:
        return QuantityField(what, "length", unit=self.length_unit, **kw)

    def refresh(self, rig: Rig) -> None:  # pragma: no cover - overridden
        raise NotImplementedError


# --- points ----------------------------------------------------------------------------
class PointPage(_Page):
    def __init__(self, panel: "PropertiesPanel") -> None:
        super().__init__(panel)
        self.point_id: str | None = None
        self.header = _heading("Point")
        self.form.addRow(self.header)
        self.label = self.text_field("label", limit=("point", "label"))
        self.kind = _combo([(POINT_KIND_NAMES[k], k) for k in POINT_KINDS])
        self.x = self.length_field("east (x)", limit=("point", "x"))
        self.y = self.length_field("north (y)", limit=("point", "y"))
        self.fixed = QCheckBox("Held still (fixed)")
        self.anchor_type = _combo([(NONE_TEXT, None)] + [(ANCHOR_TYPE_NAMES[t], t) for t in ANCHOR_TYPES])
        self.capacity = self.force_field("capacity", minimum=0, strict=True, optional=True, limit=("point", "capacity_N"))
        self.capacity_kind = _combo([(f"{KIND_WORDS[k]} ({'÷ safety factor' if k == 'strength' else 'no factor'})", k)
                                     for k in CAPACITY_KINDS])
        self.capacity_kind.setToolTip("Breaking strength: the margin divides it by the rig's safety factor. "
                                      "Rated working load: already has its factor; warned only above it.")
        self.required = self.force_field("force needed", minimum=0, strict=True, optional=True,
                                         limit=("point", "required_N"))
        self.team = QuantityField("team size", "integer", minimum=1, optional=True, limit=("point", "team"))
        self.per_person = self.force_field("pull per person", minimum=0, strict=True, optional=True,
                                           limit=("point", "force_per_person_N"))
        self.total = self.force_field("total pull", minimum=0, strict=True, optional=True, limit=("point", "force_N"))
        self.haul_hint = plain_label()
        self.haul_hint.setWordWrap(True)
        self.mass = QuantityField("mass", "number", minimum=0, strict=True, optional=True, suffixes=("kg",),
                                  limit=("point", "mass_kg"))
        self.rows: dict[str, QWidget] = {}
        for key, text, w in (
            ("label", "Label", self.label),
            ("kind", "Kind", self.kind),
            ("x", "East (x)", self.x),
            ("y", "North (y)", self.y),
            ("fixed", "", self.fixed),
            ("anchor_type", "Anchor type", self.anchor_type),
            ("capacity_kind", "Capacity is", self.capacity_kind),
            ("capacity", "Capacity", self.capacity),
            ("required", "Force to free it", self.required),
            ("team", "Team size", self.team),
            ("per_person", "Pull per person", self.per_person),
            ("total", "Total pull", self.total),
            ("haul_hint", "", self.haul_hint),
            ("mass", "Mass (kg)", self.mass),
        ):
            self.form.addRow(text, w)
            self.rows[key] = w

        self.label.committed.connect(lambda v: self._set("label", v or "", "Rename"))
        self.kind.currentIndexChanged.connect(self._kind_changed)
        self.x.committed.connect(lambda v: self._move(x=v))
        self.y.committed.connect(lambda v: self._move(y=v))
        self.fixed.toggled.connect(self._fixed_changed)
        self.anchor_type.currentIndexChanged.connect(
            lambda _i: self._set("anchor_type", self.anchor_type.currentData(), "Set anchor type")
        )
        self.capacity.committed.connect(lambda v: self._set("capacity_N", v, "Set capacity"))
        self.capacity_kind.currentIndexChanged.connect(
            lambda _i: self._set("capacity_kind", self.capacity_kind.currentData(), "Set capacity kind of")
        )
        self.required.committed.connect(lambda v: self._set("required_N", v, "Set force to free"))
        self.team.committed.connect(lambda v: self._set_haul(team=v))
        self.per_person.committed.connect(lambda v: self._set_haul(force_per_person_N=v))
        self.total.committed.connect(lambda v: self._set("force_N", v, "Set total pull"))
        self.mass.committed.connect(lambda v: self._set("mass_kg", v, "Set mass"))
        from sketchpad.water_fields import BodyFields

        self.body = BodyFields(self)  # in moving water: wetted area and shape

    def show_point(self, point_id: str) -> None:
        self.point_id = point_id
        self.refresh(self.rig)

    def _point(self):
        return self.rig.point(self.point_id)

    def _set(self, attr: str, value, verb: str) -> None:
        p = self._point()
        if getattr(p, attr) == value:
            return
        self.apply(self.rig.with_point(replace(p, **{attr: value})), f"{verb} {p.name}")

    def _move(self, x=None, y=None) -> None:
        p = self._point()
        self.apply(self.rig.moved(p.id, p.x if x is None else x, p.y if y is None else y), f"Move {p.name}")

    def _set_haul(self, **kw) -> None:
        # team / per-person take effect only without a total, so typing them clears the total
        p = self._point()
        new = replace(p, force_N=None, **kw)
        if new != p:
            self.apply(self.rig.with_point(new), f"Set haul team of {p.name}")

    def _kind_changed(self, _i: int) -> None:
        p = self._point()
        kind = self.kind.currentData()
        if kind == p.kind:
            return
        new = replace(p, kind=kind)
        if kind != "anchor":
            new = replace(new, capacity_N=None, anchor_type=None, capacity_kind="strength")
        if kind != "load":
            new = replace(new, required_N=None)
        if kind != "haul":
            new = replace(new, force_N=None, team=None, force_per_person_N=None)
        self.apply(self.rig.with_point(new), f"Make {p.name} a {POINT_KIND_NAMES[kind].split(' (')[0].lower()}")

    def _fixed_changed(self, checked: bool) -> None:
        p = self._point()
        default = replace(p, fixed=None).is_fixed
        value = None if checked == default else checked
        if value != p.fixed:
            self.apply(self.rig.with_point(replace(p, fixed=value)), f"{'Fix' if checked else 'Free'} {p.name}")

    def refresh(self, rig: Rig) -> None:
        if self.point_id is None or not rig.has_point(self.point_id):
            return
        p = rig.point(self.point_id)
        self.header.setText(f"{bold(POINT_KIND_NAMES[p.kind].split(' (')[0])} {escaped(p.id)}")
        self.label.set_value(p.label)
        _set_combo(self.kind, p.kind)
        self.x.set_value(p.x)
        self.y.set_value(p.y)
        with QSignalBlocker(self.fixed):
            self.fixed.setChecked(p.is_fixed)
        _set_combo(self.anchor_type, p.anchor_type)
        self.capacity.set_value(p.capacity_N)
        _set_combo(self.capacity_kind, p.capacity_kind)
        self.form.labelForField(self.capacity).setText(
            "Working load" if p.capacity_kind == "working" else "Breaking strength")
        self.required.set_value(p.required_N)
        self.team.set_value(p.team)
        self.per_person.set_value(p.force_per_person_N)
        self.total.set_value(p.force_N)
        pull = p.haul_force
        if p.kind == "haul":
            if pull is None:
                hint = "No pull set: give a total, or a team size and pull per person."
            elif p.force_N is not None:
                hint = f"Pull used: {units.format_force(pull, rig.display.force)} (the total)."
            else:
                hint = (
                    f"Pull used: {units.format_force(pull, rig.display.force)} "
                    f"({p.team} × {units.format_force(p.force_per_person_N, rig.display.force)})."
                )
            self.haul_hint.setText(hint)
        self.mass.set_value(p.mass_kg)
        visible = {
            "anchor_type": p.kind == "anchor",
            "capacity": p.kind == "anchor",
            "capacity_kind": p.kind == "anchor",
            "required": p.kind == "load",
            "team": p.kind == "haul",
            "per_person": p.kind == "haul",
            "total": p.kind == "haul",
            "haul_hint": p.kind == "haul",
            "mass": rig.view == "elevation" and p.kind in ("load", "point"),
            "fixed": p.kind != "person",
        }
        for key, show in visible.items():
            self.form.setRowVisible(self.rows[key], show)
        self.body.refresh(p, rig)


# --- ropes -----------------------------------------------------------------------------
class RopePage(_Page):
    def __init__(self, panel: "PropertiesPanel") -> None:
        super().__init__(panel)
        self.rope_id: str | None = None
        self.header = _heading("Rope")
        self.form.addRow(self.header)
        self.label = self.text_field("label", limit=("rope", "label"))
        self.material = _narrow(QComboBox())
        self.material_info = plain_label()
        self.material_info.setWordWrap(True)
        self.setup = _combo([("Hand-tight as drawn, plus slack", "slack"), ("Pretensioned", "pretension")])
        self.slack = self.length_field("slack", minimum=0, limit=("rigged", "slack_m"))
        self.pretension = self.force_field("pretension", minimum=0, strict=True, limit=("rigged", "pretension_N"))
        self.form.addRow("Label", self.label)
        self.form.addRow("Material", self.material)
        self.form.addRow("", self.material_info)
        self.form.addRow("Rigged", self.setup)
        self.form.addRow("Slack", self.slack)
        self.form.addRow("Pretension", self.pretension)
        self.passes_box = QGroupBox("Path (from the load end)")
        self.passes_grid = QGridLayout(self.passes_box)
        self.form.addRow(self.passes_box)
        self._pass_widgets: list[tuple[QComboBox, QComboBox]] = []
        self._term_widgets: list[QComboBox] = []
        self._grab_widgets: list[QComboBox] = []
        self._pass_signature: tuple | None = None

        self.label.committed.connect(self._set_label)
        self.material.currentIndexChanged.connect(self._material_changed)
        self.setup.currentIndexChanged.connect(self._setup_changed)
        self.slack.committed.connect(lambda v: self._set_rigging(Rigging(slack_m=v), "Set slack"))
        self.pretension.committed.connect(lambda v: self._set_rigging(Rigging(pretension_N=v), "Set pretension"))

    def show_rope(self, rope_id: str) -> None:
        self.rope_id = rope_id
        self._pass_signature = None
        self.refresh(self.rig)

    def _rope(self):
        return self.rig.rope(self.rope_id)

    def _set_label(self, v) -> None:
        r = self._rope()
        if (v or "") != r.label:
            self.apply(self.rig.with_rope(replace(r, label=v or "")), f"Rename {r.name}")

    def _material_changed(self, _i: int) -> None:
        r = self._rope()
        mid = self.material.currentData()
        if mid and mid != r.material:
            self.apply(self.rig.with_rope(replace(r, material=mid)), f"Change material of {r.name}")

    def _setup_changed(self, _i: int) -> None:
        r = self._rope()
        mode = self.setup.currentData()
        if mode == "pretension" and r.rigged.pretension_N is None:
            # a modest starting pretension a person can then type over (demo value, not a recommendation)
            self._set_rigging(Rigging(pretension_N=500.0), "Pretension")
        elif mode == "slack" and r.rigged.pretension_N is not None:
            self._set_rigging(Rigging(slack_m=0.0), "Rig hand-tight")

    def _set_rigging(self, rigging: Rigging, verb: str) -> None:
        r = self._rope()
        if rigging != r.rigged:
            self.apply(self.rig.with_rope(replace(r, rigged=rigging)), f"{verb} of {r.name}")

    def _how_options(self, index: int, n: int) -> list[str]:
        if index == 0:
            return ["tied"]
        if index == n - 1:
            return ["tied", "hauled"]
        return list(MIDDLE_HOWS)

    def _hw_options(self, rig: Rig, how: str, current: str | None) -> list[tuple[str, str | None]]:
        kinds = HARDWARE_FOR_HOW.get(how, ())
        # a pulley or edge pass must name its spec (rig-format.md), so "(none)" is not offered there
        items = [] if how in ("pulley", "edge", "capture") and current is not None else [(NONE_TEXT, None)]
        for hid, hw in hardware_for(rig).items():
            if hw.kind in kinds or hid == current:
                items.append((hw.name, hid))
        return items

    def _build_passes(self, rig: Rig) -> None:
        r = rig.rope(self.rope_id)
        while self.passes_grid.count():
            w = self.passes_grid.takeAt(0).widget()
            if w is not None:
                w.deleteLater()
        self._pass_widgets = []
        self._grab_widgets = []
        self._term_widgets = []
        n = len(r.path)
        for i, ps in enumerate(r.path):
            name = rig.point(ps.at).name if rig.has_point(ps.at) else ps.at
            where = rich_label(f"{i + 1}. {bold(name)}" + (f" ({escaped(ps.at)})" if name != ps.at else ""))
            self.passes_grid.addWidget(where, 3 * i, 0, 1, 2)
            how = _combo([(HOW_NAMES[h], h) for h in self._how_options(i, n)])
            how.setEnabled(how.count() > 1)
            how.setToolTip("How the rope goes through this point")
            hw = _narrow(QComboBox())
            hw.setToolTip("The pulley, carabiner, ring or edge it goes over")
            how.currentIndexChanged.connect(lambda _x, k=i: self._how_changed(k))
            hw.currentIndexChanged.connect(lambda _x, k=i: self._hw_changed(k))
            self.passes_grid.addWidget(how, 3 * i + 1, 0)
            self.passes_grid.addWidget(hw, 3 * i + 1, 1)
            term = _combo(TERMINATION_ITEMS)
            term.setToolTip("How the rope is tied here: a knot keeps only part of the rope's MBS, "
                            "and the pieces ending here use that in their margin")
            term.currentIndexChanged.connect(lambda _x, k=i: self._termination_changed(k))
            self.passes_grid.addWidget(term, 3 * i + 2, 0, 1, 2)
            grab = _narrow(QComboBox())  # a progress capture's rope grab: in the same row, shown on captures only
            grab.setToolTip("The rope grab that holds the rope when the team lets go (its slip force counts)")
            grab.currentIndexChanged.connect(lambda _x, k=i: self._grab_changed(k))
            self.passes_grid.addWidget(grab, 3 * i + 2, 0, 1, 2)
            self._pass_widgets.append((how, hw))
            self._term_widgets.append(term)
            self._grab_widgets.append(grab)

    def _how_changed(self, index: int) -> None:
        r = self._rope()
        how_box, _ = self._pass_widgets[index]
        how = how_box.currentData()
        ps = r.path[index]
        if how == ps.how:
            return
        hw = ps.hardware
        kinds = HARDWARE_FOR_HOW.get(how, ())
        known = hardware_for(self.rig)
        if hw is not None and (hw not in known or known[hw].kind not in kinds):
            hw = None
        if hw is None and how in ("pulley", "edge", "capture"):
            # a rope over a pulley or edge needs a spec: start with the first of that kind
            hw = next((hid for hid, h in known.items() if h.kind == kinds[0]), None)
        path = list(r.path)
        grab = (ps.grab or capture_grab_for(self.rig)) if how == "capture" else None
        path[index] = replace(ps, how=how, hardware=hw, termination=ps.termination if how == "tied" else None,
                              grab=grab)
        self.apply(self.rig.with_rope(replace(r, path=tuple(path))), f"{r.name}: {HOW_NAMES[how].lower()} at {ps.at}")

    def _grab_changed(self, index: int) -> None:
        if self._rope().path[index].how == "capture":
            self._set_pass_field(index, "grab", self._grab_widgets[index].currentData())

    def _hw_changed(self, index: int) -> None:
        self._set_pass_field(index, "hardware", self._pass_widgets[index][1].currentData())

    def _termination_changed(self, index: int) -> None:
        self._set_pass_field(index, "termination", self._term_widgets[index].currentData())

    def _set_pass_field(self, index: int, name: str, value) -> None:
        """One undoable edit setting field ``name`` of pass ``index`` (nothing when it already has ``value``)."""
        r = self._rope()
        ps = r.path[index]
        if getattr(ps, name) == value:
            return
        path = list(r.path)
        path[index] = replace(ps, **{name: value})
        self.apply(self.rig.with_rope(replace(r, path=tuple(path))), f"{r.name}: {name} at {ps.at}")

    def refresh(self, rig: Rig) -> None:
        if self.rope_id is None or not any(r.id == self.rope_id for r in rig.ropes):
            return
        r = rig.rope(self.rope_id)
        self.header.setText(f"{bold('Rope')} {escaped(r.id)}")
        self.label.set_value(r.label)
        mats = materials_for(rig)
        with QSignalBlocker(self.material):
            self.material.clear()
            for mid, m in mats.items():
                embedded = " (in this rig)" if rig.embedded_material(mid) is not None else ""
                self.material.addItem(f"{m.name}{embedded}", mid)
        _set_combo(self.material, r.material)
        m = mats.get(r.material)
        if m is not None:
            dia = f"{m.diameter_mm:g} mm " if m.diameter_mm else ""
            self.material_info.setText(f"{dia}{m.kind}, MBS {units.format_force(m.mbs_N, rig.display.force)}")
        else:
            self.material_info.setText(f"Unknown material “{r.material}”: choose one from the list.")
        mode = "pretension" if r.rigged.pretension_N is not None else "slack"
        _set_combo(self.setup, mode)
        self.slack.set_value(r.rigged.slack_m)
        self.pretension.set_value(r.rigged.pretension_N)
        self.form.setRowVisible(self.slack, mode == "slack")
        self.form.setRowVisible(self.pretension, mode == "pretension")
        signature = (r.id, tuple(ps.at for ps in r.path), tuple(p.name for p in rig.points))
        if signature != self._pass_signature:
            self._build_passes(rig)
            self._pass_signature = signature
        for (how_box, hw_box), ps in zip(self._pass_widgets, r.path):
            _set_combo(how_box, ps.how)
            with QSignalBlocker(hw_box):
                hw_box.clear()
                for text, data in self._hw_options(rig, ps.how, ps.hardware):
                    hw_box.addItem(text, data)
            _set_combo(hw_box, ps.hardware)
            hw_box.setEnabled(ps.how != "hauled")
        for term_box, ps in zip(self._term_widgets, r.path):
            _set_combo(term_box, ps.termination)
            term_box.setVisible(ps.how == "tied")
        for grab_box, ps in zip(self._grab_widgets, r.path):
            with QSignalBlocker(grab_box):
                grab_box.clear()
                grab_box.addItem("(no rated grab)", None)
                for hid, hw in hardware_for(rig).items():
                    if hw.kind == "grab" or hid == ps.grab:
                        grab_box.addItem(hw.name, hid)
            _set_combo(grab_box, ps.grab)
            grab_box.setVisible(ps.how == "capture")


# --- forces and features ---------------------------------------------------------------
PLAN_DIRECTION_LABEL = "Toward (bearing °, clockwise from north)"
SIDE_DIRECTION_LABEL = "Toward (° anticlockwise from right; 90 up)"


class ForcePage(_Page):
    def __init__(self, panel: "PropertiesPanel") -> None:
        super().__init__(panel)
        self.index: int | None = None
        self.header = _heading("Force")
        self.form.addRow(self.header)
        self.label = self.text_field("label", limit=("force", "label"))
        self.at = plain_label()
        self.magnitude = self.force_field("force", minimum=0, strict=True, limit=("force", "magnitude_N"))
        self.direction = QuantityField("direction", "number", suffixes=("°", "deg", "degrees"),
                                       limit=("force", "direction_deg"))
        self.form.addRow("Label", self.label)
        self.form.addRow("Acts on", self.at)
        self.form.addRow("Size", self.magnitude)
        self.form.addRow(PLAN_DIRECTION_LABEL, self.direction)
        self.label.committed.connect(lambda v: self._set(label=v or ""))
        self.magnitude.committed.connect(lambda v: self._set(magnitude_N=v))
        self.direction.committed.connect(self._direction_typed)

    def _direction_typed(self, value) -> None:
        """A typed direction: a bearing clockwise from north in plan (the file keeps its maths angle)."""
        v = float(value)
        self._set(direction_deg=direction_from_bearing(v) if self.rig.view == "plan" else v % 360.0)

    def show_force(self, index: int) -> None:
        self.index = index
        self.refresh(self.rig)

    def _set(self, **kw) -> None:
        rig = self.rig
        f = rig.forces[self.index]
        new = replace(f, **kw)
        if new != f:
            forces = list(rig.forces)
            forces[self.index] = new
            self.apply(replace(rig, forces=tuple(forces)), f"Edit force on {f.at}")

    def refresh(self, rig: Rig) -> None:
        if self.index is None or self.index >= len(rig.forces):
            return
        f = rig.forces[self.index]
        self.label.set_value(f.label)
        self.at.setText(rig.point(f.at).name if rig.has_point(f.at) else f.at)
        self.magnitude.set_value(f.magnitude_N)
        plan = rig.view == "plan"
        self.form.labelForField(self.direction).setText(PLAN_DIRECTION_LABEL if plan else SIDE_DIRECTION_LABEL)
        self.direction.set_value(round(bearing_deg(f.direction_deg), 1) % 360.0 if plan else f.direction_deg)
        self.direction.setToolTip(direction_text(f.direction_deg, rig.view, f.magnitude_N))


class FeaturePage(_Page):
    def __init__(self, panel: "PropertiesPanel") -> None:
        super().__init__(panel)
        self.feature_id: str | None = None
        self.header = _heading("Site feature")
        self.form.addRow(self.header)
        self.label = self.text_field("label", limit=("feature", "label"))
        self.kind = _combo([(FEATURE_KIND_NAMES[k], k) for k in FEATURE_KINDS])
        self.form.addRow("Label", self.label)
        self.form.addRow("Kind", self.kind)
        self.label.committed.connect(lambda v: self._set(label=v or ""))
        self.kind.currentIndexChanged.connect(lambda _i: self._set(kind=self.kind.currentData()))
        from sketchpad.water_fields import FlowFields

        self.flow = FlowFields(self)  # a water feature's current

    def show_feature(self, feature_id: str) -> None:
        self.feature_id = feature_id
        self.refresh(self.rig)

    def _set(self, **kw) -> None:
        rig = self.rig
        feats = list(rig.site.features)
        for i, f in enumerate(feats):
            if f.id == self.feature_id:
                if kw.get("kind", f.kind) != "water":
                    kw["flow"] = None  # only water carries a current
                new = replace(f, **kw)
                if new != f:
                    feats[i] = new
                    self.apply(replace(rig, site=replace(rig.site, features=tuple(feats))), f"Edit {f.label or f.id}")
                return

    def refresh(self, rig: Rig) -> None:
        f = next((f for f in rig.site.features if f.id == self.feature_id), None)
        if f is None:
            return
        self.header.setText(f"{bold('Site feature')} {escaped(f.id)}")
        self.label.set_value(f.label)
        _set_combo(self.kind, f.kind)
        self.flow.refresh(f, rig)


# --- the rig (nothing selected) ---------------------------------------------------------
class RigPage(_Page):
    def __init__(self, panel: "PropertiesPanel") -> None:
        super().__init__(panel)
        self.form.addRow(_heading("Rig"))
        self._shown: tuple | None = None  # what refresh last showed (shown_key)
        self.title = self.text_field("title", limit=("rig", "title"))
        self.notes = CommitTextEdit()
        self.notes.setPlaceholderText("Site, team, conditions, what to check…")
        self.notes.setMaximumHeight(90)
        self.view = _combo([(VIEW_NAMES[v], v) for v in ("plan", "elevation")])
        self.motion = _combo([(MOTION_NAMES[m], m) for m in MOTIONS])
        self.min_sf = QuantityField("minimum safety factor", "number", minimum=1, suffixes=(":1",),
                                    limit=("settings", "min_safety_factor"))
        self.length_unit_box = _combo([(u, u) for u in LENGTH_UNITS])
        self.force_unit_box = _combo([(u, u) for u in FORCE_UNITS])
        self.form.addRow("Title", self.title)
        self.form.addRow("Notes", self.notes)
        self.notes_error = plain_label()
        self.notes_error.setObjectName("error:notes")
        self.notes_error.setStyleSheet(ERROR_STYLE)
        self.notes_error.setWordWrap(True)
        self.notes_error.hide()
        self.form.addRow("", self.notes_error)
        self.form.addRow("View", self.view)
        self.form.addRow("Rope is", self.motion)
        self.form.addRow("Min. safety factor", self.min_sf)
        self.form.addRow("Lengths in", self.length_unit_box)
        self.form.addRow("Forces in", self.force_unit_box)
        self.title.committed.connect(lambda v: self._set_top(title=v or ""))
        self.notes.commit.connect(self._commit_notes)
        self.view.currentIndexChanged.connect(lambda _i: self._set_top(view=self.view.currentData()))
        self.motion.currentIndexChanged.connect(lambda _i: self._set_settings(motion=self.motion.currentData()))
        self.min_sf.committed.connect(lambda v: self._set_settings(min_safety_factor=float(v)))
        self.length_unit_box.currentIndexChanged.connect(
            lambda _i: self._set_display(length=self.length_unit_box.currentData())
        )
        self.force_unit_box.currentIndexChanged.connect(
            lambda _i: self._set_display(force=self.force_unit_box.currentData())
        )

    def add_section(self, title: str, widget: QWidget) -> None:
        """Append a titled section (e.g. the background image controls) below the rig fields."""
        box = QGroupBox(title)
        lay = QVBoxLayout(box)
        lay.setContentsMargins(4, 4, 4, 4)
        lay.addWidget(widget)
        self.form.addRow(box)

    def _commit_notes(self) -> None:
        """Notes as typed, or an inline message (nothing changed) when they are longer than a rig file holds."""
        text = self.notes.toPlainText()
        problem = limits.text_problem("rig", "notes", text)
        self.notes_error.setText(f"Notes {problem}: shorten them to save." if problem else "")
        self.notes_error.setVisible(bool(problem))
        if not problem:
            self._set_top(notes=text)

    def _set_top(self, **kw) -> None:
        rig = self.rig
        new = replace(rig, **kw)
        if new != rig:
            what = next(iter(kw))
            self.apply(new, f"Change rig {what}", merge_key=None)

    def _set_settings(self, **kw) -> None:
        rig = self.rig
        settings: Settings = replace(rig.settings, **kw)
        if settings != rig.settings:
            self.apply(replace(rig, settings=settings), "Change rig settings")

    def _set_display(self, **kw) -> None:
        rig = self.rig
        display: Display = replace(rig.display, **kw)
        if display != rig.display:
            self.apply(replace(rig, display=display), "Change display units")

    def shown_key(self, rig: Rig) -> tuple:
        """What this page shows of ``rig`` (a drag step, which moves points only, leaves it as it was)."""
        return rig.title, rig.notes, rig.view, rig.settings, rig.display

    def refresh(self, rig: Rig) -> None:
        self._shown = self.shown_key(rig)
        self.title.set_value(rig.title)
        if not self.notes.hasFocus():
            self.notes.set_text_quietly(rig.notes)
        _set_combo(self.view, rig.view)
        _set_combo(self.motion, rig.settings.motion)
        self.min_sf.set_value(rig.settings.min_safety_factor)
        _set_combo(self.length_unit_box, rig.display.length)
        _set_combo(self.force_unit_box, rig.display.force)


# --- the panel -------------------------------------------------------------------------
class PropertiesPanel(QWidget):
    """Stacked pages for the current selection; ``show_subject(kind, key)`` picks what is shown.

    ``kind`` is "point", "rope", "force" (key = index into ``rig.forces``),
    "feature", or None for the rig itself.
    """

    subject_changed = Signal(object)

    def __init__(self, document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self.stack = QStackedWidget(self)
        self.rig_page = RigPage(self)
        self.point_page = PointPage(self)
        self.rope_page = RopePage(self)
        self.force_page = ForcePage(self)
        self.feature_page = FeaturePage(self)
        self.multi_page = plain_label("Several things are selected: select one to edit it.")
        self.multi_page.setWordWrap(True)
        self.multi_page.setAlignment(Qt.AlignmentFlag.AlignTop)
        for page in (self.rig_page, self.point_page, self.rope_page, self.force_page, self.feature_page, self.multi_page):
            self.stack.addWidget(page)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(6, 6, 6, 6)
        lay.addWidget(self.stack)
        lay.addStretch(1)
        self.subject: tuple[str | None, object] = (None, None)
        document.changed.connect(self.refresh)
        self.show_subject(None)

    def show_subject(self, kind: str | None, key=None) -> None:
        rig = self.document.rig
        if kind == "point" and rig.has_point(key):
            self.point_page.show_point(key)
            self.stack.setCurrentWidget(self.point_page)
        elif kind == "rope" and any(r.id == key for r in rig.ropes):
            self.rope_page.show_rope(key)
            self.stack.setCurrentWidget(self.rope_page)
        elif kind == "force" and isinstance(key, int) and 0 <= key < len(rig.forces):
            self.force_page.show_force(key)
            self.stack.setCurrentWidget(self.force_page)
        elif kind == "feature" and any(f.id == key for f in rig.site.features):
            self.feature_page.show_feature(key)
            self.stack.setCurrentWidget(self.feature_page)
        elif kind == "multiple":
            self.stack.setCurrentWidget(self.multi_page)
        else:
            kind, key = None, None
            self.rig_page.refresh(rig)
            self.stack.setCurrentWidget(self.rig_page)
        current = self.stack.currentWidget()
        for i in range(self.stack.count()):
            page = self.stack.widget(i)
            policy = QSizePolicy.Policy.Preferred if page is current else QSizePolicy.Policy.Ignored
            page.setSizePolicy(QSizePolicy.Policy.Preferred, policy)
        self.stack.adjustSize()
        self.subject = (kind, key)
        self.subject_changed.emit(self.subject)

    def set_selection(self, subjects: list[tuple[str, object]]) -> None:
        """Show the one selected thing, the rig when nothing is, a note when several are."""
        if not subjects:
            self.show_subject(None)
        elif len(subjects) == 1:
            self.show_subject(*subjects[0])
        else:
            self.show_subject("multiple")

    def refresh(self, rig: Rig | None = None) -> None:
        rig = rig if rig is not None else self.document.rig
        kind, key = self.subject
        page = self.stack.currentWidget()
        if kind is not None and kind != "multiple":
            # the subject may have been deleted (or undone away): fall back to the rig page
            exists = {
                "point": lambda: rig.has_point(key),
                "rope": lambda: any(r.id == key for r in rig.ropes),
                "force": lambda: isinstance(key, int) and key < len(rig.forces),
                "feature": lambda: any(f.id == key for f in rig.site.features),
            }[kind]()
            if not exists:
                self.show_subject(None)
                return
        if page is self.rig_page and page._shown == page.shown_key(rig):
            return  # an edit of something else (every drag step): the rig's fields stay as they are
        if isinstance(page, _Page):
            page.refresh(rig)


def subjects_from_items(items, resolve: Callable[[object], tuple[str, object] | None] | None = None) -> list:
    """(kind, key) for each selected canvas item that is a view of a model object.

    Items carry ``key`` = (kind, id) (sketchpad.items.SketchItem); failing that they are asked
    for ``subject()``, else ``model_kind``/``model_id`` attributes.
    """
    out = []
    for it in items:
        sub = resolve(it) if resolve is not None else None
        key = getattr(it, "key", None)
        if sub is None and isinstance(key, tuple) and len(key) == 2 and isinstance(key[0], str):
            sub = key
        if sub is None and hasattr(it, "subject"):
            try:
                sub = it.subject() if callable(it.subject) else it.subject
            except Exception:  # noqa: BLE001 - a foreign item must not break selection
                sub = None
        if sub is None:
            kind = getattr(it, "model_kind", None) or getattr(it, "kind", None)
            key = getattr(it, "model_id", None)
            if isinstance(kind, str) and key is not None:
                sub = (kind, key)
        if sub is not None and sub not in out:
            out.append(sub)
    return out


class PropertiesDock(QDockWidget):
    """The panel in a scrollable dock titled "Properties"."""

    def __init__(self, document, parent: QWidget | None = None) -> None:
        super().__init__("Properties", parent)
        self.setObjectName("properties_dock")
        self.panel = PropertiesPanel(document)
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setWidget(self.panel)
        self.setWidget(scroll)
        self.setMinimumWidth(300)

    def follow_scene(self, scene, resolve=None) -> None:
        """Show whatever is selected in ``scene`` (a QGraphicsScene of model items)."""
        def follow() -> None:
            if shiboken6.isValid(scene) and shiboken6.isValid(self.panel):  # not while tearing down
                self.panel.set_selection(subjects_from_items(scene.selectedItems(), resolve))

        scene.selectionChanged.connect(follow)
