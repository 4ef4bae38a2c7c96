"""Naming the material whose stretch table is too extreme to solve, instead of blaming the rig's shape.

A stretch table may be valid (rising, within the format's bounds) and still make a rope so stiff,
or so much stiffer in one part than another, that Newton cannot balance the rig to its tolerance:
a millionth of a millimetre of stretch carries the whole load.  When a solve does not settle, the
words then name that material and its numbers (slopes of the tension-strain table, N per unit of
strain) rather than "a part of the rig that nothing holds", which sends a rigger looking for the
wrong thing.
"""

from __future__ import annotations

from solver import materials
from solver.errors import RopewrightError
from solver.model import Material, Rig

#: A table whose steepest piece passes this (N per unit strain, ~100 times a 100 mm steel rope) ...
STIFF_N = 1e11
#: ... or whose steepest piece is this many times its softest, is named when a solve fails.
SPREAD = 1e6
#: ... as is one whose softest piece stretches a rope by its whole length under less than this (N).
SOFT_N = 1.0


def _slopes(m: Material) -> tuple[float, float]:
    """(softest, steepest) slope of the table's pieces from (0, 0), N per unit strain."""
    prev_t, prev_e = 0.0, 0.0
    lo, hi = float("inf"), 0.0
    for t, e in m.stretch:
        k = (t - prev_t) / (e - prev_e) if e > prev_e else float("inf")
        lo, hi = min(lo, k), max(hi, k)
        prev_t, prev_e = t, e
    return lo, hi


def extreme_material(rig: Rig) -> tuple[Material, float, float] | None:
    """The first material the ropes use whose table is extreme (see module docstring), with its slopes."""
    for mat_id in materials.used_material_ids(rig):
        try:
            mat = materials.material_for(rig, mat_id)
        except RopewrightError:
            continue
        lo, hi = _slopes(mat)
        if hi > STIFF_N or hi > SPREAD * lo or lo < SOFT_N:
            return mat, lo, hi
    return None


def unsettled_words(rig: Rig) -> str:
    """What to check when a solve did not settle: the extreme material if there is one, else the rig's parts."""
    found = extreme_material(rig)
    if found is None:
        return "check for a part of the rig that nothing holds"
    mat, lo, hi = found
    name = f'"{mat.id}"' + (f" ({mat.label})" if mat.label and mat.label != mat.id else "")
    return (f"the stretch table of material {name} is too extreme to solve (its slope goes from {lo:.3g} to "
            f"{hi:.3g} N per unit of strain): check its numbers, strain is a fraction (0.05 = 5 %)")
