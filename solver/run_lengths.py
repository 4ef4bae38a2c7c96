"""Unstretched run lengths set directly on a compiled System, for solving by rope paid in.

The haul plan (:mod:`solver.haul_plan`) changes only how much rope is in each run from one
step to the next.  A rig's ``rigged`` slack is part of its compiled structure, so setting the
lengths through it would compile the rig again at every step; instead the plan solves one rig
of unchanged structure and hands the solver each rope's unstretched length (m) here, on a copy
of the cached System (the cache itself is never changed).
"""

from __future__ import annotations

import copy
import math
from typing import Mapping

import numpy as np

from solver.assembly import System
from solver.errors import RigModelError


def with_unstretched(s: System, lengths: Mapping[str, float]) -> System:
    """A copy of ``s`` whose runs of the ropes in ``lengths`` (rope id -> m, one run each) have those lengths.

    Raises RigModelError naming the rope when a length is not above 0, a rope is unknown, or a rope
    has more than one run (its length would be ambiguous).
    """
    index = s.__dict__.get("_run_of_rope")
    if index is None:  # per System (its ropes never change): rope id -> its one run, -1 for several
        index = {}
        for i, rope in enumerate(s.run_rope):
            index[rope] = -1 if rope in index else i
        s._run_of_rope = index
    run_L0 = s.run_L0.copy()
    for rope, L0 in lengths.items():
        i = index.get(rope)
        if i is None or i < 0:
            raise RigModelError(f'rope "{rope}" needs exactly one run to be given its length', subject=rope)
        if not (math.isfinite(L0) and L0 > 0):
            raise RigModelError(f'rope "{rope}" would have no rope left ({L0:.3f} m)', subject=rope)
        if s.run_hauled[i]:
            raise RigModelError(f'rope "{rope}" is hauled: its tension, not its length, is set', subject=rope)
        run_L0[i] = float(L0)
    out = copy.copy(s)
    out.__dict__.pop("_last_tau", None)
    out.soft = None  # as a fresh compile: the solver works out its soft start for these lengths
    out.run_L0 = run_L0
    out.run_L0_div = np.where(s.run_hauled, 1.0, run_L0) if s.n_runs else np.zeros(0)
    return out
