"""Monotone tension-strain curves for ropes: strain(T), tension(eps), energy(eps), vectorised.

A Material's ``stretch`` table lists ``(tension_N, strain)`` points increasing in both
columns, starting after (0, 0).  The curve is piecewise linear through (0, 0) and those
points and continues at its last slope beyond the last point (rig-format.md).  Ropes are
tension-only: a negative strain carries zero tension and stores zero energy.
"""

from __future__ import annotations

from typing import Callable, Iterable, Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray

FloatArray = NDArray[np.float64]


class StretchCurve:
    """Piecewise-linear, strictly increasing tension-strain law T(eps) of one rope material.

    Units: tension in N, strain dimensionless (0.02 = 2 %).  ``energy(eps)`` is the strain
    energy per unit unstretched length, W(eps) = integral of T d(eps), in N (J/m).
    """

    def __init__(self, points: Iterable[Sequence[float]]) -> None:
        pts = [(float(t), float(e)) for t, e in points]
        if not pts:
            raise ValueError("the stretch table is empty: give at least one (tension, strain) point")
        t = np.array([0.0] + [p[0] for p in pts])
        e = np.array([0.0] + [p[1] for p in pts])
        if not (np.all(np.isfinite(t)) and np.all(np.isfinite(e))):
            raise ValueError("the stretch table has a value that is not a number")
        if np.any(np.diff(t) <= 0.0) or np.any(np.diff(e) <= 0.0):
            raise ValueError(
                "the stretch table must rise in both tension and strain from (0, 0): "
                "each point needs more tension and more stretch than the one before"
            )
        self._t = t  # knots, tension (N)
        self._e = e  # knots, strain
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):  # checked just below, in words
            self._k = np.diff(t) / np.diff(e)  # slope of each piece, N per unit strain
            # energy at each knot: trapezoid areas
            self._w = np.concatenate(([0.0], np.cumsum(0.5 * (t[1:] + t[:-1]) * np.diff(e))))
        if not (np.all(np.isfinite(self._k)) and np.all(self._k > 0.0) and np.all(np.isfinite(self._w))):
            raise ValueError("the stretch table rises too steeply (or too little) to compute with: "
                             "check its numbers, strain is a fraction (0.05 = 5 %)")
        # one straight piece from (0, 0): the piecewise formulas reduce to T = k0 eps exactly
        self._linear = len(self._k) == 1
        self._k0 = float(self._k[0])

    @property
    def knots(self) -> tuple[FloatArray, FloatArray]:
        """(tension_N, strain) knot arrays including the origin."""
        return self._t.copy(), self._e.copy()

    @property
    def initial_stiffness(self) -> float:
        """dT/d(eps) at zero strain, N."""
        return float(self._k[0])

    def _piece_e(self, eps: FloatArray) -> NDArray[np.intp]:
        if len(self._k) == 1:  # one straight piece (a linear rope): no search
            return np.zeros(np.shape(eps), dtype=np.intp)
        idx = np.searchsorted(self._e, eps, side="right") - 1
        return np.minimum(np.maximum(idx, 0), len(self._k) - 1)

    def _piece_t(self, tension: FloatArray) -> NDArray[np.intp]:
        if len(self._k) == 1:
            return np.zeros(np.shape(tension), dtype=np.intp)
        idx = np.searchsorted(self._t, tension, side="right") - 1
        return np.minimum(np.maximum(idx, 0), len(self._k) - 1)

    def tension(self, eps: ArrayLike) -> FloatArray:
        """Tension in N at strain ``eps`` (zero for eps <= 0)."""
        e = np.asarray(eps, dtype=float)
        if self._linear:  # the formula below with knot 0 = (0, 0): the same numbers, fewer array passes
            return np.where(e > 0.0, self._k0 * e, 0.0)
        i = self._piece_e(e)
        out = self._t[i] + self._k[i] * (e - self._e[i])
        return np.where(e > 0.0, out, 0.0)

    def dtension(self, eps: ArrayLike) -> FloatArray:
        """Tangent stiffness dT/d(eps) in N at strain ``eps`` (zero for eps < 0)."""
        e = np.asarray(eps, dtype=float)
        if self._linear:
            return np.where(e >= 0.0, self._k0, 0.0)
        return np.where(e >= 0.0, self._k[self._piece_e(e)], 0.0)

    def strain(self, tension: ArrayLike) -> FloatArray:
        """Strain at tension ``tension`` N (zero for T <= 0)."""
        t = np.asarray(tension, dtype=float)
        if self._linear:
            return np.where(t > 0.0, t / self._k0, 0.0)
        i = self._piece_t(t)
        out = self._e[i] + (t - self._t[i]) / self._k[i]
        return np.where(t > 0.0, out, 0.0)

    def dstrain(self, tension: ArrayLike) -> FloatArray:
        """Compliance d(eps)/dT in 1/N at tension ``tension`` (zero for T < 0)."""
        t = np.asarray(tension, dtype=float)
        if self._linear:
            return np.where(t >= 0.0, 1.0 / self._k0, 0.0)
        return np.where(t >= 0.0, 1.0 / self._k[self._piece_t(t)], 0.0)

    def of_positive(self, method: str) -> Callable[[FloatArray], FloatArray | float]:
        """``method`` ("strain" or "dstrain") for tensions that are none of them negative: for a linear rope
        T / k0 and the one number 1 / k0 (the numbers of :meth:`strain` and :meth:`dstrain` there, without
        their tension-only branch; a tension of -0.0 gives a strain of -0.0), else the method itself."""
        if not self._linear:
            return getattr(self, method)
        if method == "strain":
            return self._linear_strain
        if method == "dstrain":
            return self._linear_compliance
        raise ValueError(f"no positive-tension form of {method!r}")

    def _linear_strain(self, tension: FloatArray) -> FloatArray:
        return tension / self._k0

    def _linear_compliance(self, tension: FloatArray) -> float:
        return 1.0 / self._k0

    def energy(self, eps: ArrayLike) -> FloatArray:
        """Strain energy per unstretched metre W(eps) = integral_0^eps T de, in N (J/m)."""
        e = np.asarray(eps, dtype=float)
        if self._linear:
            return np.where(e > 0.0, 0.5 * self._k0 * e * e, 0.0)
        i = self._piece_e(e)
        de = e - self._e[i]
        out = self._w[i] + self._t[i] * de + 0.5 * self._k[i] * de * de
        return np.where(e > 0.0, out, 0.0)


def curve_for_material(stretch: Iterable[Sequence[float]]) -> StretchCurve:
    """The StretchCurve of a Material's ``stretch`` table (raises ValueError if not monotone)."""
    return StretchCurve(stretch)
