"""What one Newton iteration (:class:`Outcome`) and one whole solve (:class:`Solved`) hand on."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from solver.evaluate import State


@dataclass
class Outcome:
    """Where a Newton iteration stopped: the state, the iterations it took, whether it met its tolerance."""

    state: State
    iterations: int
    converged: bool
    runaway: int | None = None  # free point index (into System points) that ran away


@dataclass
class Solved:
    """The states a solve found: the reported one and its frictionless reference for the ideal MA."""

    state: State
    ideal: State | None  # the frictionless reference (None: not wanted)
    iterations: int
    converged: bool
    runaway: int | None
    w: np.ndarray
