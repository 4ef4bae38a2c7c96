"""A root of a scalar function inside a sign-changing bracket, by Brent's method (no scipy import).

Why our own: ``scipy.optimize`` costs about 0.1 s to import, more than a whole first solve, and
``ropewright solve`` needs only this one root finder (the pull needed, :mod:`solver.pull_needed`).

The method is Brent's (R. P. Brent, *Algorithms for Minimization without Derivatives*,
Prentice-Hall 1973, ch. 4; W. H. Press et al., *Numerical Recipes*, 2nd ed., sec. 9.3): keep a
bracket [x, x_far] with the best estimate x (smallest |f|), try inverse quadratic (or, after
the bracket turned over, secant) interpolation, and fall back to bisection whenever the step
would leave the bracket or fail to halve the step before last.  The step rules and the
stopping test are the ones of ``scipy.optimize.brentq`` (tolerance ``xtol + rtol·|x|``), so the
same function and bracket give the same sequence of trial points and the same root, bit for
bit: tests/solver/test_brent.py holds the two side by side.  Its guarantees are Brent's: at most
about (log2((b - a)/tol))² evaluations, never outside the bracket, any function continuous on it.
"""

from __future__ import annotations

import math
import sys
from typing import Callable

#: Default absolute and relative tolerances on the root, and the iteration limit (scipy's brentq defaults).
XTOL = 2e-12
RTOL = 4 * sys.float_info.epsilon
MAXITER = 100


class RootBracketError(ValueError):
    """The bracket does not bracket a root (same sign at both ends), or the function gave NaN."""


class RootNotConverged(RuntimeError):
    """The iteration limit was reached before the bracket was small enough; ``x`` is the last estimate."""

    def __init__(self, message: str, x: float) -> None:
        super().__init__(message)
        self.x = x


def brent_root(f: Callable[[float], float], a: float, b: float, *, xtol: float = XTOL, rtol: float = RTOL,
               maxiter: int = MAXITER) -> float:
    """A root of ``f`` in [a, b] (``f(a)``, ``f(b)`` of opposite signs), to ``xtol + rtol·|root|``.

    Raises :class:`RootBracketError` for a bracket without a sign change or a NaN value,
    :class:`RootNotConverged` after ``maxiter`` iterations; exceptions ``f`` raises pass through.
    """
    if not xtol > 0:
        raise ValueError(f"xtol must be positive, not {xtol!r}")
    if not rtol >= RTOL:
        raise ValueError(f"rtol must be at least {RTOL!r}, not {rtol!r}")

    def value(x: float) -> float:
        fx = float(f(x))
        if math.isnan(fx):
            raise RootBracketError(f"the function is NaN at x={x!r}; no root can be found")
        return fx

    # x: best estimate; x_prev: the estimate before it; x_far: the other end of the bracket
    x_prev, x = float(a), float(b)
    f_prev, fx = value(x_prev), value(x)
    if f_prev == 0:
        return x_prev
    if fx == 0:
        return x
    if (f_prev < 0) == (fx < 0):
        raise RootBracketError(f"f(a) = {f_prev!r} and f(b) = {fx!r} have the same sign: [a, b] brackets no root")
    x_far = f_far = 0.0
    step = step_before = 0.0
    for _ in range(maxiter):
        if f_prev != 0 and fx != 0 and (f_prev < 0) != (fx < 0):  # the root lies between x_prev and x
            x_far, f_far = x_prev, f_prev
            step = step_before = x - x_prev
        if abs(f_far) < abs(fx):  # keep the smaller |f| as the estimate
            x_prev, x, x_far = x, x_far, x
            f_prev, fx, f_far = fx, f_far, fx
        half_tol = (xtol + rtol * abs(x)) / 2
        half_bracket = (x_far - x) / 2
        if fx == 0 or abs(half_bracket) < half_tol:
            return x
        step_before, step = _next_step(x, fx, x_prev, f_prev, x_far, f_far, step_before, step,
                                       half_bracket, half_tol)
        x_prev, f_prev = x, fx
        x += step if abs(step) > half_tol else (half_tol if half_bracket > 0 else -half_tol)
        fx = value(x)
    raise RootNotConverged(f"no root to the tolerance after {maxiter} iterations (last estimate {x!r})", x)


def _next_step(x: float, fx: float, x_prev: float, f_prev: float, x_far: float, f_far: float,
               step_before: float, step: float, half_bracket: float, half_tol: float) -> tuple[float, float]:
    """(the step to remember as the one before, the step to take): interpolation if it is short enough, else bisection."""
    if abs(step_before) > half_tol and abs(fx) < abs(f_prev):
        try:
            if x_prev == x_far:  # two points: secant
                trial = -fx * (x - x_prev) / (fx - f_prev)
            else:  # three points: inverse quadratic interpolation
                slope_prev = (f_prev - fx) / (x_prev - x)
                slope_far = (f_far - fx) / (x_far - x)
                trial = -fx * (f_far * slope_far - f_prev * slope_prev) / (slope_far * slope_prev * (f_far - f_prev))
        except ZeroDivisionError:  # values equal to the last bit (IEEE: an infinite or NaN step): bisect
            trial = math.inf
        if 2 * abs(trial) < min(abs(step_before), 3 * abs(half_bracket) - half_tol):
            return step, trial
    return half_bracket, half_bracket
