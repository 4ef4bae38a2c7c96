"""The property panel's current fields for a water feature: speed and the bearing the water flows toward.

Speeds read and are typed in the rig's unit system (m/s with metres, mph with feet, as the load
estimate); the file keeps m/s.  Clearing the speed takes the current off (still water).  Each edit
goes through the page's ``_set`` (one undoable command).
"""

from __future__ import annotations

from solver.model import Flow
from solver.units import SPEED_FACTORS, speed_unit_for

from sketchpad.fields import QuantityField


class FlowFields:
    """Two rows on a FeaturePage: current speed and the bearing it flows toward (water features only)."""

    def __init__(self, page) -> None:
        self.page = page
        self.speed = QuantityField("current speed", "number", minimum=0.0, optional=True, placeholder="still water")
        self.toward = QuantityField("current bearing", "number", suffixes=("°", "deg", "degrees"), optional=True)
        page.form.addRow("Current speed", self.speed)
        page.form.addRow("Flows toward (bearing °)", self.toward)
        self.speed.committed.connect(self._speed_typed)
        self.toward.committed.connect(self._toward_typed)

    def _feature(self):
        return next((f for f in self.page.rig.site.features if f.id == self.page.feature_id), None)

    def _factor(self) -> float:
        return SPEED_FACTORS[speed_unit_for(self.page.rig.display.length)]

    def _speed_typed(self, value) -> None:
        f = self._feature()
        if f is None:
            return
        if value is None:
            self.page._set(flow=None)
            return
        bearing = f.flow.bearing_deg if f.flow is not None else 90.0
        self.page._set(flow=Flow(float(value) * self._factor(), bearing))

    def _toward_typed(self, value) -> None:
        f = self._feature()
        if f is None or value is None or f.flow is None:
            return
        self.page._set(flow=Flow(f.flow.speed_m_s, float(value) % 360.0))

    def refresh(self, f, rig) -> None:
        water = f.kind == "water" and f.polygon is not None
        for field in (self.speed, self.toward):
            field.setVisible(water)
            label = self.page.form.labelForField(field)
            if label is not None:
                label.setVisible(water)
        unit = speed_unit_for(rig.display.length)
        self.page.form.labelForField(self.speed).setText(f"Current speed ({unit})")
        if f.flow is None:
            self.speed.set_value(None)
            self.toward.set_value(None)
        else:
            self.speed.set_value(round(f.flow.speed_m_s / self._factor(), 3))
            self.toward.set_value(round(f.flow.bearing_deg % 360.0, 1))


class BodyFields:
    """Rows on a PointPage for a load or free point in the water: wetted area, drag shape, and a button
    that sets a stuck load's force to free it from the current (the load estimate, filled in when asked)."""

    def __init__(self, page) -> None:
        from PySide6.QtWidgets import QComboBox, QPushButton

        from solver.loads import DRAG_SHAPES

        self.page = page
        self.area = QuantityField("wetted area", "number", minimum=0.0, optional=True, placeholder="not in the water")
        self.shape = QComboBox()
        self.shape.addItem("—", None)
        for key, s in DRAG_SHAPES.items():
            self.shape.addItem(f"{s.label} (Cd {s.cd:g})", key)
        self.from_current = QPushButton("Force to free it from the current")
        page.form.addRow("Wetted area", self.area)
        page.form.addRow("Shape in the flow", self.shape)
        page.form.addRow("", self.from_current)
        self.area.committed.connect(self._area_typed)
        self.shape.currentIndexChanged.connect(self._shape_chosen)
        self.from_current.clicked.connect(self._ask_current)

    def _factor(self) -> float:
        from solver.units import AREA_FACTORS

        return AREA_FACTORS["ft²" if self.page.rig.display.length == "ft" else "m²"]

    def _apply(self, verb: str, **kw) -> None:
        from dataclasses import replace

        p = self.page._point()
        new = replace(p, **kw)
        if new != p:
            self.page.apply(self.page.rig.with_point(new), f"{verb} {p.name}")

    def _area_typed(self, value) -> None:
        p = self.page._point()
        if value is None or value == 0:
            self._apply("Take out of the water", wetted_area_m2=None, drag_shape=None)
            return
        # a wetted area needs a shape: the load estimate's default until one is chosen
        self._apply("Set wetted area of", wetted_area_m2=float(value) * self._factor(),
                    drag_shape=p.drag_shape or "raft-broadside")

    def _shape_chosen(self, _i: int) -> None:
        key = self.shape.currentData()
        p = self.page._point()
        if key is None:
            self._apply("Take out of the water", wetted_area_m2=None, drag_shape=None)
        elif key != p.drag_shape and p.wetted_area_m2:
            self._apply("Set shape of", drag_shape=key)

    def _ask_current(self) -> None:
        from solver.errors import RigModelError
        from solver.water_loads import required_from_current

        p = self.page._point()
        try:
            self.page.apply(required_from_current(self.page.rig, p.id), f"Force to free {p.name} from the current")
        except RigModelError as exc:
            self.from_current.setToolTip(exc.message)

    def refresh(self, p, rig) -> None:
        """Show the rows for loads and free points in plan view; the button for a fixed load in the water."""
        from PySide6.QtCore import QSignalBlocker

        unit = "ft²" if rig.display.length == "ft" else "m²"
        show = rig.view == "plan" and p.kind in ("load", "point")
        self.page.form.setRowVisible(self.area, show)
        self.page.form.setRowVisible(self.shape, show)
        self.page.form.setRowVisible(self.from_current, show and p.kind == "load" and p.is_fixed
                                     and bool(p.wetted_area_m2) and p.drag_shape is not None)
        self.page.form.labelForField(self.area).setText(f"Wetted area ({unit})")
        self.area.set_value(None if p.wetted_area_m2 is None else round(p.wetted_area_m2 / self._factor(), 4))
        with QSignalBlocker(self.shape):
            self.shape.setCurrentIndex(max(0, self.shape.findData(p.drag_shape)))
