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
