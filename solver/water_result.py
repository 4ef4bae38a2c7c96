"""What the water did, as plain immutable records on the Result (``Result.water``), SI units.

``WetRope``: a rope piece bowed by the current, its solved polyline (site metres, the user's two end
points first and last) and the tension at both ends of its wet part (N).  ``BodyDrag``: the drag on a
load or point in the water (N, site axes).  These are what the plan draws and the report lists.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class WetRope:
    """One rope piece in moving water, solved: bowed polyline, drag and end tensions."""

    rope: str
    index: int  # piece index along the rope's path
    from_point: str
    to_point: str
    polyline: tuple[tuple[float, float], ...]  # site metres, bowed (straight when the piece was not cut)
    wet_from: int  # polyline index where the wet part begins
    wet_to: int  # ... and ends
    tension_in_N: float  # tension at the wet part's upstream-in-path end
    tension_out_N: float  # ... and at its other end
    drag_N: float  # the water's push on the whole piece, N (resultant of the segment drags)
    drag_x_N: float
    drag_y_N: float
    bowed: bool  # cut and bowed by the solver (every wet piece with a rope diameter is, through pulleys too)
    sag_m: float  # largest distance of the rope from its chord, m

    def to_json(self) -> dict[str, Any]:
        return {"rope": self.rope, "index": self.index, "from": self.from_point, "to": self.to_point,
                "polyline": [list(p) for p in self.polyline], "wet_from": self.wet_from, "wet_to": self.wet_to,
                "tension_in_N": self.tension_in_N, "tension_out_N": self.tension_out_N,
                "drag_N": self.drag_N, "bowed": self.bowed, "sag_m": self.sag_m}


@dataclass(frozen=True)
class BodyDrag:
    """The current's drag on one load or point (N): along the local flow."""

    point: str
    force_N: float
    fx_N: float
    fy_N: float
    speed_m_s: float
    feature: str | None  # the water feature whose current it is

    @property
    def direction_deg(self) -> float:
        return math.degrees(math.atan2(self.fy_N, self.fx_N)) % 360.0 if self.force_N > 0 else 0.0


@dataclass(frozen=True)
class WaterResult:
    """Everything the current did to one rig: bowed ropes, drag on bodies, and how the drag was settled."""

    ropes: tuple[WetRope, ...] = ()
    bodies: tuple[BodyDrag, ...] = ()
    rounds: int = 0  # solves taken to settle the drag directions
    drag_mismatch_N: float = 0.0  # drag used vs drag of the solved geometry, largest per point
    sides: tuple[tuple[str, str], ...] = ()  # (point id, "river left"/"river right") of anchors, haul teams, people

    def to_json(self) -> dict[str, Any]:
        from solver.directions import bearing_or_none

        return {"ropes": [r.to_json() for r in self.ropes],
                "bodies": {b.point: {"force_N": b.force_N, "bearing_deg": bearing_or_none(b.direction_deg, "plan",
                                                                                          b.force_N),
                                     "speed_m_s": b.speed_m_s, "feature": b.feature} for b in self.bodies},
                "rounds": self.rounds, "drag_mismatch_N": self.drag_mismatch_N, "sides": dict(self.sides)}
