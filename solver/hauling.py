"""Haul team arithmetic at a fixed mechanical advantage: ceil(force / (MA x force per hauler)).

This is exact only where the MA does not change with the pull (a rig whose geometry stays put).
What a rig really needs is solved on the rig itself: :mod:`solver.pull_needed` (every surface
shows that).  Here: the per-hauler default and the fixed-MA arithmetic a new system's default
team size starts from (:mod:`solver.templates`).  The default
per-hauler force is 0.22 kN (about 50 lbf), what one person sustains on a long haul
(common practice, no source); a short hard pull can be near body weight.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from solver.errors import RigModelError
from solver.units import format_force

#: Force one hauler sustains on a long haul, N (common practice, no source).
DEFAULT_PER_PERSON_N = 220.0


def haulers_needed(required_N: float, ma_actual: float, per_person_N: float = DEFAULT_PER_PERSON_N) -> int:
    """Whole number of haulers whose pull through ``ma_actual`` reaches ``required_N`` (N in, people out)."""
    if not math.isfinite(required_N) or required_N < 0:
        raise RigModelError(f"The force needed must be zero or more (got {required_N})", subject="required_N")
    if not math.isfinite(ma_actual) or ma_actual <= 0:
        raise RigModelError("The system gives no mechanical advantage to haul with; check the rig solves",
                            subject="mechanical_advantage")
    if not math.isfinite(per_person_N) or per_person_N <= 0:
        raise RigModelError(f"The force per hauler must be above zero (got {per_person_N})",
                            subject="force_per_person_N")
    # a relative hair of tolerance so 2.000000000001 people (rounding) stays 2; any force needs one
    n = math.ceil(required_N / (ma_actual * per_person_N) * (1.0 - 1e-12))
    return max(1 if required_N > 0 else 0, n)


@dataclass(frozen=True)
class HaulPlan:
    """Haulers needed for one load through one system, with the numbers behind it (N)."""

    required_N: float
    ma_actual: float
    per_person_N: float
    haulers: int
    team_force_N: float  # what that many haulers pull in total
    delivered_N: float  # team force through the actual MA

    def text(self, unit: str = "kN") -> str:
        """The plan in a rigger's words, forces in ``unit``."""
        per = format_force(self.per_person_N, unit)
        return (
            f"Needs {format_force(self.required_N, unit)} at the load. With an actual MA of "
            f"{self.ma_actual:.2f}:1 each hauler at {per} delivers "
            f"{format_force(self.ma_actual * self.per_person_N, unit)}, so {self.haulers} "
            f"hauler{'s' if self.haulers != 1 else ''} (pulling {format_force(self.team_force_N, unit)} "
            f"together, {format_force(self.delivered_N, unit)} at the load). The per-hauler force "
            f"is a sustained long-haul figure: if the load does not move, stop and re-assess "
            f"rather than pull harder."
        )


def haul_plan(required_N: float, ma_actual: float, per_person_N: float = DEFAULT_PER_PERSON_N) -> HaulPlan:
    """The haul plan for ``required_N`` through ``ma_actual`` at ``per_person_N`` each."""
    n = haulers_needed(required_N, ma_actual, per_person_N)
    return HaulPlan(float(required_N), float(ma_actual), float(per_person_N), n,
                    n * per_person_N, n * per_person_N * ma_actual)
