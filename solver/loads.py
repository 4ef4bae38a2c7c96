"""Load estimates for a craft pinned in moving water: the drag equation and named shapes.

The force the current puts on a pinned boat or raft is estimated with the drag equation
F = 1/2 * rho * C_d * A * v^2 (N), rho the water density (kg/m^3), C_d the drag
coefficient of the shape, A the wetted area facing the flow (m^2) and v the current
speed (m/s).  Force grows with the square of speed: double the current, four times the
force.  The estimate sets the load's ``required_N`` (the force the rig must deliver to
free it), with its assumptions kept beside it in the point's ``extra``.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, replace
from typing import Any

from solver.errors import RigModelError
from solver.model import Rig

log = logging.getLogger(__name__)

#: Fresh water, kg/m^3 (check-values.md: rho about 1000 kg/m^3).
FRESH_WATER_KG_M3 = 1000.0

#: Key under a load point's ``extra`` that keeps the estimate's inputs and assumptions.
EXTRA_KEY = "load_estimate"

_MATTHEWS = "C. Matthews, Aeronautical Engineer's Data Book, drag coefficient table"


@dataclass(frozen=True)
class DragShape:
    """A named shape with its drag coefficient, where C_d comes from, and what is assumed."""

    key: str
    label: str
    cd: float
    source: str
    assumption: str = ""


DRAG_SHAPES: dict[str, DragShape] = {s.key: s for s in (
    DragShape("flat-plate-square", "flat plate, square, face to the flow", 1.17, _MATTHEWS),
    DragShape("flat-plate-long", "flat plate, long strip, face to the flow", 1.98, _MATTHEWS),
    DragShape("half-cylinder-open", "open half-cylinder, hollow facing the flow", 2.30, _MATTHEWS),
    DragShape("raft-broadside", "raft or open hull pinned broadside, open side upstream", 2.30, _MATTHEWS,
              "Assumed to act like an open half-cylinder facing the flow (the upper value in the "
              "table): the hull wraps the water like a cup. A hull pinned with its floor upstream "
              "is nearer a long flat plate (1.98)."),
    DragShape("hull-side-on", "closed hull side-on (floor or side to the flow)", 1.98, _MATTHEWS,
              "Assumed to act like a long flat plate normal to the flow."),
    DragShape("panel-square", "squarish panel or door face to the flow", 1.17, _MATTHEWS,
              "Assumed to act like a square flat plate normal to the flow."),
)}


def drag_force(speed_m_s: float, area_m2: float, cd: float, rho: float = FRESH_WATER_KG_M3) -> float:
    """Drag force in N from the drag equation F = 1/2 rho C_d A v^2 (SI inputs)."""
    for name, value in (("current speed", speed_m_s), ("area facing the flow", area_m2),
                        ("drag coefficient", cd), ("water density", rho)):
        if not math.isfinite(value) or value < 0:
            raise RigModelError(f"The {name} must be a number of zero or more (got {value})", subject=name)
    return 0.5 * rho * cd * area_m2 * speed_m_s * speed_m_s


@dataclass(frozen=True)
class LoadEstimate:
    """Inputs of one drag estimate and the force they give (N), with the assumptions in words."""

    speed_m_s: float
    area_m2: float
    shape: str = "raft-broadside"
    cd: float | None = None  # overrides the shape's C_d when given
    rho: float = FRESH_WATER_KG_M3
    factor: float = 1.0  # extra multiplier, e.g. for a swamped boat full of water; 1 = none
    note: str = ""

    @property
    def drag_shape(self) -> DragShape:
        try:
            return DRAG_SHAPES[self.shape]
        except KeyError:
            raise RigModelError(f"Unknown shape '{self.shape}'; choose one of: " + ", ".join(DRAG_SHAPES),
                                subject=self.shape) from None

    @property
    def coefficient(self) -> float:
        return float(self.cd) if self.cd is not None else self.drag_shape.cd

    @property
    def force_N(self) -> float:
        """Estimated force, N: drag equation times ``factor``."""
        if not math.isfinite(self.factor) or self.factor <= 0:
            raise RigModelError(f"The extra factor must be above zero (got {self.factor})", subject="factor")
        return drag_force(self.speed_m_s, self.area_m2, self.coefficient, self.rho) * self.factor

    @property
    def assumptions(self) -> str:
        """The estimate in words: formula, inputs, C_d source and what was assumed."""
        shape = self.drag_shape
        parts = [
            f"Drag equation F = 1/2 rho Cd A v^2 with v = {self.speed_m_s:g} m/s, A = {self.area_m2:g} m^2, "
            f"rho = {self.rho:g} kg/m^3, Cd = {self.coefficient:g}.",
        ]
        if self.cd is not None:
            parts.append(f"Cd entered by hand ({shape.label} would be {shape.cd:g}).")
        else:
            parts.append(f"Cd for {shape.label}: {shape.source}.")
            if shape.assumption:
                parts.append(shape.assumption)
        if self.factor != 1.0:
            parts.append(f"Multiplied by {self.factor:g} for conditions the equation leaves out.")
        parts.append("Force grows with the square of the current speed: a faster current than "
                     "measured means much more force. Pinning, suction and water held in the hull "
                     "are not in the equation.")
        if self.note:
            parts.append(self.note)
        return " ".join(parts)

    def to_extra(self) -> dict[str, Any]:
        return {
            "method": "drag-equation",
            "speed_m_s": self.speed_m_s,
            "area_m2": self.area_m2,
            "shape": self.shape,
            "cd": self.coefficient,
            "rho_kg_m3": self.rho,
            "factor": self.factor,
            "force_N": self.force_N,
            "assumptions": self.assumptions,
        }


def apply_load_estimate(rig: Rig, load_id: str, estimate: LoadEstimate) -> Rig:
    """A new Rig whose load ``load_id`` has ``required_N`` = the estimate (N) and keeps its inputs."""
    try:
        point = rig.point(load_id)
    except KeyError:
        raise RigModelError(f"The load '{load_id}' is not in the drawing", subject=load_id) from None
    if point.kind != "load":
        raise RigModelError(f"'{point.name}' is not a load; a current estimate goes on the load", subject=load_id)
    force = estimate.force_N
    extra = dict(point.extra)
    extra[EXTRA_KEY] = estimate.to_extra()
    log.debug("load %s: drag estimate %.0f N", load_id, force)
    return rig.with_point(replace(point, required_N=force, extra=extra))
