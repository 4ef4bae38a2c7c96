"""solver.brent against an independent implementation of Brent's method: ``scipy.optimize.brentq``.

The two must agree bit for bit (same trial points in the same order, same root) on smooth,
steep, flat, kinked and discontinuous functions, on brackets given either way round and with
the tolerances the solver uses; and both must refuse the same bad brackets.  Roots are also
checked against their closed forms (sqrt(2), pi/2, ln 3, the cube root of 2, from memory, exact
mathematics).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from solver.brent import RootBracketError, RootNotConverged, brent_root


def _traced(f):
    """f, and the list of the points it was called at."""
    calls: list[float] = []

    def g(x: float) -> float:
        calls.append(x)
        return f(x)

    return g, calls


def _both(f, a, b, **kw):
    """(our root, our calls, scipy's root, scipy's calls) for the same function and bracket.

    A root not found to the tolerance within ``maxiter`` is the string "no root" on both sides.
    """
    g1, ours = _traced(f)
    g2, theirs = _traced(f)
    try:
        our_root = brent_root(g1, a, b, **kw)
    except RootNotConverged:
        our_root = "no root"
    try:
        their_root = brentq(g2, a, b, **kw)
    except RuntimeError:
        their_root = "no root"
    return our_root, ours, their_root, theirs


FUNCTIONS = [
    # (name, f, a, b, exact root or None)
    ("x^2 - 2", lambda x: x * x - 2.0, 0.0, 2.0, math.sqrt(2.0)),
    ("cos x", math.cos, 0.0, 3.0, math.pi / 2),
    ("exp(x) - 3", lambda x: math.exp(x) - 3.0, -5.0, 5.0, math.log(3.0)),
    ("x^3 - 2", lambda x: x ** 3 - 2.0, -10.0, 10.0, 2.0 ** (1 / 3)),
    ("(x - 1)^3 (flat at the root)", lambda x: (x - 1.0) ** 3, -3.0, 4.0, 1.0),
    ("steep tanh", lambda x: math.tanh(50.0 * (x - 0.3)), -1.0, 1.0, 0.3),
    ("kinked |x| - 0.5", lambda x: abs(x) - 0.5, 0.0, 7.0, 0.5),
    ("step (no zero: the jump)", lambda x: -1.0 if x < 0.7 else 1.0, 0.0, 1.0, 0.7),
    ("x e^-x - 0.1", lambda x: x * math.exp(-x) - 0.1, 0.0, 1.0, None),
    ("log pull shape: 5000 (1 - e^-p/800) - 3000",
     lambda lp: 5000.0 * (1.0 - math.exp(-math.exp(lp) / 800.0)) - 3000.0, math.log(10.0), math.log(1e5), None),
]


@pytest.mark.parametrize("name,f,a,b,exact", FUNCTIONS, ids=[t[0] for t in FUNCTIONS])
@pytest.mark.parametrize("tol", [dict(), dict(xtol=2e-4, rtol=1e-10, maxiter=30), dict(xtol=1e-7)])
def test_same_trial_points_and_root_as_scipy(name, f, a, b, exact, tol):
    ours, our_calls, theirs, their_calls = _both(f, a, b, **tol)
    assert our_calls == their_calls
    assert ours == theirs
    if exact is not None and ours != "no root":
        assert abs(ours - exact) <= 2 * (tol.get("xtol", 2e-12) + 4 * 2.2205e-16 * abs(exact)) + 1e-15


@pytest.mark.parametrize("name,f,a,b,exact", FUNCTIONS[:4], ids=[t[0] for t in FUNCTIONS[:4]])
def test_bracket_given_the_other_way_round(name, f, a, b, exact):
    ours, our_calls, theirs, their_calls = _both(f, b, a)
    assert our_calls == their_calls and ours == theirs


def test_values_equal_to_the_last_bit_bisect_as_scipy_does():
    # found by the random polynomials: f(x) = c (1 + x) with c ~ 1e-272, whose differences underflow to 0
    # (a division by zero that C turns into an infinite step, which Brent's rule refuses: bisection)
    c = 2.8405653065695356e-272
    ours, our_calls, theirs, their_calls = _both(lambda x: c + c * x, -2.125, 0.875)
    assert our_calls == their_calls and ours == theirs


def test_a_root_at_either_end_is_returned_at_once():
    assert brent_root(lambda x: x - 1.0, 1.0, 3.0) == brentq(lambda x: x - 1.0, 1.0, 3.0) == 1.0
    assert brent_root(lambda x: x - 3.0, 1.0, 3.0) == brentq(lambda x: x - 3.0, 1.0, 3.0) == 3.0


def test_refuses_what_scipy_refuses():
    with pytest.raises(RootBracketError, match="same sign"):
        brent_root(lambda x: x * x + 1.0, -1.0, 1.0)
    with pytest.raises(ValueError):
        brentq(lambda x: x * x + 1.0, -1.0, 1.0)
    with pytest.raises(RootBracketError, match="NaN"):
        brent_root(lambda x: math.nan if x > 0.5 else x - 0.75, 0.0, 1.0)
    with pytest.raises(ValueError):
        brentq(lambda x: math.nan if x > 0.5 else x - 0.75, 0.0, 1.0)
    with pytest.raises(ValueError):
        brent_root(lambda x: x, -1.0, 1.0, xtol=0.0)
    with pytest.raises(ValueError):
        brent_root(lambda x: x, -1.0, 1.0, rtol=1e-17)


def test_gives_up_after_maxiter_where_scipy_does():
    f = lambda x: math.exp(x) - 3.0  # noqa: E731
    with pytest.raises(RootNotConverged) as ours:
        brent_root(f, -50.0, 50.0, maxiter=3)
    with pytest.raises(RuntimeError):
        brentq(f, -50.0, 50.0, maxiter=3)
    assert isinstance(ours.value, RuntimeError) and math.isfinite(ours.value.x)


def test_what_the_function_raises_passes_through():
    class Stop(Exception):
        pass

    def f(x: float) -> float:
        if x > 0.2:
            raise Stop
        return x - 0.1

    with pytest.raises(Stop):
        brent_root(f, 0.0, 1.0)


@settings(max_examples=300, deadline=None)
@given(st.lists(st.floats(-10, 10, allow_nan=False), min_size=2, max_size=5),
       st.floats(-20, 0), st.floats(0.01, 20), st.sampled_from([2e-12, 1e-7, 2e-4]))
def test_random_polynomials_agree_with_scipy(coeffs, a, width, xtol):
    f = lambda x: sum(c * x ** k for k, c in enumerate(coeffs))  # noqa: E731
    b = a + width
    fa, fb = f(a), f(b)
    if fa != 0 and fb != 0 and (fa < 0) == (fb < 0):  # no sign change: both refuse the bracket
        with pytest.raises(ValueError):
            brentq(f, a, b, xtol=xtol)
        with pytest.raises(RootBracketError):
            brent_root(f, a, b, xtol=xtol)
        return
    ours, our_calls, theirs, their_calls = _both(f, a, b, xtol=xtol)
    assert our_calls == their_calls and ours == theirs
    assert ours == "no root" or a <= ours <= b
