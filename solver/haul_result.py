"""What a haul plan answers: one row per stroke, one frame per solved step, and the plan with its status.

Frozen records of :func:`solver.haul_plan.plan_haul`; ``HaulPlan.to_json`` is the ``ropewright haul
--json`` object (rig-format.md "Commands").  Distances in metres, forces in newtons.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping


@dataclass(frozen=True)
class HaulStroke:
    """One stroke: rope paid in, load travel, peak haul force, throw eaten by stretch, capture load at its reset."""

    paid_in_m: float
    load_travel_m: float
    haul_force_max_N: float
    stretch_m: float
    capture_N: float | None  # None: no reset after this stroke, or no progress capture to hold the load
    ended_by: str  # "throw", "two-blocked", "target", "stopped"
    capture_slip_m: float = 0.0
    reset: bool = False  # the team reset after this stroke

    def to_json(self) -> dict:
        return {"paid_in_m": self.paid_in_m, "load_travel_m": self.load_travel_m,
                "haul_force_max_N": self.haul_force_max_N, "stretch_m": self.stretch_m,
                "capture_N": self.capture_N, "ended_by": self.ended_by, "capture_slip_m": self.capture_slip_m,
                "reset": self.reset}


@dataclass(frozen=True)
class HaulFrame:
    """One solved step of the haul, for the scrubber and the plot: totals so far and where every point is."""

    stroke: int  # 1-based
    phase: str  # "stroke" or "reset"
    paid_in_m: float  # rope through the team's hands so far
    load_travel_m: float  # load travel so far
    haul_force_N: float
    points: Mapping[str, tuple[float, float]]


@dataclass(frozen=True)
class HaulPlan:
    """The whole haul: per-stroke rows, totals, frames, and a status with a sentence saying why it stopped."""

    status: str  # "ok", "unreachable", "failed", "invalid"
    message: str
    load: str = ""
    haul: str = ""
    target_m: float = 0.0
    throw_m: float = 0.0
    paid_in_before_move_m: float | None = None
    strokes: tuple[HaulStroke, ...] = ()
    frames: tuple[HaulFrame, ...] = ()
    ma_ideal: float | None = None
    warnings: tuple[str, ...] = ()
    subject: str = ""
    peak_anchor: str = ""  # the anchor loaded most at any step of the haul (resets included)
    peak_anchor_N: float = 0.0

    @property
    def ok(self) -> bool:
        return self.status == "ok"

    @property
    def load_travel_m(self) -> float:
        return sum(s.load_travel_m for s in self.strokes)

    @property
    def paid_in_m(self) -> float:
        """Total rope through the team's hands, m."""
        return sum(s.paid_in_m for s in self.strokes)

    @property
    def resets(self) -> int:
        return sum(1 for s in self.strokes if s.reset)

    def to_json(self) -> dict:
        return {"status": self.status, "message": self.message, "load": self.load, "haul": self.haul,
                "travel_m": self.target_m, "throw_m": self.throw_m,
                "paid_in_before_move_m": self.paid_in_before_move_m, "load_travel_m": self.load_travel_m,
                "paid_in_m": self.paid_in_m, "resets": self.resets, "ma_ideal": self.ma_ideal,
                "strokes": [s.to_json() for s in self.strokes], "warnings": list(self.warnings),
                "peak_anchor": self.peak_anchor or None, "peak_anchor_N": self.peak_anchor_N}
