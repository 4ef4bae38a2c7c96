"""A solved state held by a closed spacing contact is reported only where it is stable.

Why.  Without contact the frictionless potential of a rig is convex (Kanno, Ohsaki & Ito, IJNME
2002): every equilibrium is its minimum.  The spacing contact (``solver.pass_order``) is not: a
pass two-blocked against its neighbour rests on a disc round it, and a jammed pair may sit on
either side of it.  A Z hauled beyond its anchor pulley, jammed, is pulled toward the haul by the
haul strand P and toward the load by the load rope T; the pair rests on the side the larger one
pulls it, or on the other side balanced like an inverted pendulum.  Both are equilibria; Newton
reaches either, and from a drawing that is exactly symmetric (a Z drawn in line) it lands on the
balanced one, 0.1 deg off line on the other: the answer then depends on the drawing's round-off
and on what was solved before.  On site a pulley clipped to its anchor swings round to the side
the pair is pulled; the balanced state is not reached.

The test.  An equilibrium of a conservative system is stable when the second variation of its
potential is positive definite, i.e. the smallest eigenvalue of the tangent stiffness is > 0
(energy criterion, Bazant & Cedolin, *Stability of Structures*, ch. 4, from memory).  With
friction the tangent is not symmetric; its symmetric part is the second variation of the work
along a small displacement, and we ask the same of it.  Only a piece the contact pushes (N < 0)
brings negative stiffness: every other term of the tangent is positive semidefinite (a rope's
geometric stiffness N/l across it, its axial stiffness and the contact's along it, a tied run's
coupling).  So the eigenvalues are looked at only when some piece is pushed; a drag step without
one pays one comparison (a Z swung over its anchor rests with every piece pulled).  A state that fails
is left along the eigenvector of the negative eigenvalue and solved again from there (either sign:
off a saddle both sides go down); the answer is kept when it converges, passes the contact guard
and is stable, else the first answer stands (``solve`` reports whatever it then is).  A rig drawn
exactly symmetric whose pair rests part way round (the two pulls nearly equal) has two mirror-image
rests with the same forces: a warm solve keeps the side it came from.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import NamedTuple

import numpy as np

from solver.evaluate import State, contact_stiffness
from solver.outcome import Solved
from solver.result import Result
from solver.system import System
from solver.tangent import part_pattern, part_tangent

#: An eigenvalue below -UNSTABLE_REL x the part's largest diagonal stiffness is unstable: far above round-off
#: (1e-16), and a jammed pair's roll -(P - T)/r against the contact's 1e4 F/r (evaluate.CONTACT_STIFFNESS) is
#: seen once one side outpulls the other by 0.001 % of the force scale F.
UNSTABLE_REL = 1e-9
#: How far a rejected state is moved along its unstable mode before solving again, x the contact's spacing.
NUDGE = 0.5


class Softest(NamedTuple):
    """The softest mode of a solved state's contact-holding parts."""

    stiffness: float  # smallest eigenvalue of the tangent's symmetric part, N/m
    relative: float  # the same / its part's largest diagonal stiffness
    mode: np.ndarray  # its unit eigenvector, on every free coordinate (0 outside its part)


def softest(s: System, st: State) -> Softest | None:
    """The softest mode over the parts of ``st`` holding a closed contact; None when no contact is closed.

    Elsewhere the tangent is positive semidefinite (module docstring); each part's dense block is built from its
    own pieces (``tangent.part_tangent``).
    """
    if not st.closed or not s.n_pieces:
        return None
    kc = contact_stiffness(s)
    shut = (st.pen > 0) & (s.piece_comp >= 0)
    best: Softest | None = None
    for part in np.unique(s.piece_comp[shut]).tolist():
        K = part_tangent(s, st, kc, True, part)
        K = 0.5 * (K + K.T)
        lam, vec = np.linalg.eigh(K)
        rel = float(lam[0]) / max(float(np.abs(np.diag(K)).max()), 1e-300)
        if best is None or rel < best.relative:
            mode = np.zeros(s.n_dof)
            mode[part_pattern(s, part).dofs] = vec[:, 0]
            best = Softest(float(lam[0]), rel, mode)
    return best


def unstable_mode(s: System, st: State) -> np.ndarray | None:
    """A unit displacement of the free coordinates along which ``st`` loses stiffness, or None when it is stable
    (its smallest eigenvalue above -UNSTABLE_REL x its part's largest diagonal stiffness; no piece pushed by the
    contact: nothing to look at, module docstring)."""
    if not st.closed or not (st.N < 0.0).any():
        return None
    soft = softest(s, st)
    return soft.mode if soft is not None and soft.relative < -UNSTABLE_REL else None


def stable(s: System, sol: Solved | Result, solve_from: Callable[[np.ndarray], Solved | Result],
           guard: Callable[[Solved | Result], np.ndarray]) -> Solved | Result:
    """``sol``, or, when it is a converged state that is unstable, the stable equilibrium next to it.

    ``solve_from(x)`` solves again from free coordinates ``x``; ``guard(sol)`` names contacts a state may not
    be reported with (``records.contact_off``).  Iterations of the first answer count in the second.
    """
    if not isinstance(sol, Solved) or not sol.converged or sol.runaway is not None:
        return sol
    mode = unstable_mode(s, sol.state)
    if mode is None:
        return sol
    shut = sol.state.pen > 0
    step = NUDGE * float(s.s_min[shut].min()) / max(float(np.abs(mode).max()), 1e-300)
    for sign in (1.0, -1.0):
        again = solve_from(sol.state.x + sign * step * mode)
        if (isinstance(again, Solved) and again.converged and again.runaway is None and not len(guard(again))
                and unstable_mode(s, again.state) is None):
            again.iterations += sol.iterations
            return again
    return sol
