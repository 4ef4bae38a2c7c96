"""A material's stretch law applied element by element, each element with its own material's curve."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from solver.system import FloatArray, IntArray, System

def by_material(s: System, mats: IntArray, values: FloatArray, method: str,
                kappa: FloatArray | None = None) -> FloatArray:
    """Apply StretchCurve ``method`` elementwise, each element with its material's curve.

    ``kappa`` (optional, per element) softens the law to T = kappa * T_material(eps), as the
    solver's soft start does (see :attr:`System.soft`).
    """
    if kappa is not None:
        if method == "strain":
            return by_material(s, mats, values / kappa, method)
        if method == "dstrain":
            return by_material(s, mats, values / kappa, method) / kappa
        return kappa * by_material(s, mats, values, method)  # tension, dtension, energy
    if len(s.curves) == 1:  # the curve returns a new float array of the same shape
        return np.asarray(getattr(s.curves[0], method)(values), dtype=float)
    out = np.empty_like(values)
    for m, curve in enumerate(s.curves):
        idx = np.flatnonzero(mats == m)
        if len(idx):
            out[idx] = getattr(curve, method)(values[idx])
    return out


def law(s: System, mats: IntArray, kappa: FloatArray | None, method: str,
         positive: bool = False) -> Callable[[FloatArray], FloatArray | float]:
    """:func:`by_material` with ``method`` for elements of materials ``mats`` (softened by ``kappa``), as a function
    of the values alone: the curve's own method when there is one curve and no softening (the same numbers).

    ``positive``: no value it is given is negative, so that the curve's tension-only branch is left
    out (:meth:`StretchCurve.of_positive`; the same numbers, a compliance perhaps as one number for all).
    """
    if kappa is None and len(s.curves) == 1:
        curve = s.curves[0]
        return curve.of_positive(method) if positive else getattr(curve, method)
    return lambda values: by_material(s, mats, values, method, kappa)


def softening(s: System, runs: IntArray | None = None, pieces: IntArray | None = None) -> FloatArray | None:
    """Softening factor of the given runs or pieces (None: the real ropes)."""
    if s.soft is None:
        return None
    if pieces is not None:
        return s.soft[s.piece_run[pieces]]
    return s.soft[runs]

