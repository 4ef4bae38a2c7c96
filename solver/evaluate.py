"""The state of a System at one geometry: piece lengths and directions, run tensions, forces, energy."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from solver.laws import by_material
from solver.runs import solve_run_tensions
from solver.system import FloatArray, System, per_piece

#: Stiffness of the two-blocking contact, as a multiple of (force scale / minimum spacing).
CONTACT_STIFFNESS = 1e4


@dataclass(slots=True)  # (slots: made for every trial step of every Newton iteration, and read field by field)
class State:
    """Everything at one trial geometry: piece lengths/directions, run tensions, forces."""

    x: FloatArray
    xy: FloatArray
    l: FloatArray  # piece lengths, m
    u: FloatArray  # piece unit vectors (n_pieces, 2)
    w: FloatArray  # piece tension weights
    L: FloatArray  # run lengths, m
    tau: FloatArray  # run reference tensions (first piece), N
    taut: NDArray[np.bool_]  # tied runs at or beyond their unstretched length
    T: FloatArray  # piece tensions, N
    eps: FloatArray  # piece strains
    pen: FloatArray  # contact penetration (>0 when two passes are closer than their size), m
    N: FloatArray  # piece axial pull incl. contact push, N
    g: FloatArray  # out-of-balance: internal resistance minus external force, per dof, N
    closed: bool = False  # some contact is closed (pen > 0 somewhere)
    no_zero_length: bool = True  # every piece has a length > 0
    # what the potential is computed from, on first use (the friction solve never asks for it)
    potential_from: tuple | None = field(default=None, repr=False, compare=False)
    _energy_terms: tuple | None = field(default=None, repr=False, compare=False)
    matrices: dict = field(default_factory=dict, repr=False, compare=False)  # tangents at this state, by kind
    _potential: FloatArray | None = field(default=None, repr=False, compare=False)

    @property
    def energy(self) -> float:
        """Total potential (meaningful without friction), J."""
        U, contact, fx = self._terms()
        return float(U.sum()) + float(contact.sum()) - float(fx.sum())

    @property
    def comp_energy(self) -> FloatArray:
        """The potential of each free part (energy = their sum + a constant), J."""
        if self._potential is None:
            s = self.potential_from[0]
            U, contact, fx = self._terms()
            comp_energy = -np.bincount(s.dof_comp, fx, minlength=s.n_comp)
            if s.n_runs:
                on = s.run_on
                comp_energy += np.bincount(s.run_comp[on], U[on], minlength=s.n_comp)
                if self.closed:
                    on = s.piece_on
                    comp_energy += np.bincount(s.piece_comp[on], contact[on], minlength=s.n_comp)
            self._potential = comp_energy
        return self._potential

    def _terms(self) -> tuple[FloatArray, FloatArray, FloatArray]:
        if self._energy_terms is None:
            self._energy_terms = _potential(*self.potential_from)
        return self._energy_terms


def _potential(s: System, soft: FloatArray | None, x: FloatArray, L: FloatArray, kc: FloatArray,
               pen: FloatArray) -> tuple[FloatArray, FloatArray, FloatArray]:
    """The terms of the potential at a state, J: (run energies U, contact energies, F x per dof).

    ``soft`` = the softening then in force.  Exact for frictionless weights: a hauled run
    stores P L, a taut tied run L0 W(L/L0 - 1), a closed contact k pen^2 / 2.
    """
    U = s.haul_P_or_0 * L if s.n_runs else np.zeros(0)  # tied runs: 0 * L = 0, set below when taut
    tied = (s.run_tied & (L > s.run_L0)).nonzero()[0]
    if len(tied):
        e_r = L[tied] / s.run_L0[tied] - 1.0
        U[tied] = s.run_L0[tied] * by_material(s, s.run_mat[tied], e_r, "energy",
                                               None if soft is None else soft[tied])
    contact = 0.5 * kc * pen * pen
    return U, contact, s.F * x



def contact_stiffness(s: System) -> FloatArray:
    """Penalty stiffness of the minimum-spacing contact of each piece, N/m (from its own part's force scale)."""
    scale = per_piece(s, s.comp_force_scale, s.force_scale)
    return CONTACT_STIFFNESS * np.maximum(scale, 1.0) / np.maximum(s.s_min, 1e-6)



def _pieces_at(s: System, x: FloatArray) -> tuple[FloatArray, FloatArray, bool, FloatArray]:
    """Point positions, piece lengths, whether no piece has zero length, and piece unit vectors at ``x``."""
    xy = s.positions(x)
    d = xy[s.b] - xy[s.a]
    l = np.hypot(d[:, 0], d[:, 1])
    # (count_nonzero: the same answer as all()/any(), a NaN counting as non-zero, at a third of the cost)
    no_zero_length = np.count_nonzero(l) == len(l)
    if no_zero_length:
        u = d / l[:, None]
    else:
        u = np.divide(d, l[:, None], out=np.zeros(d.shape), where=(l > 0)[:, None])
    return xy, l, no_zero_length, u


def directions(s: System, x: FloatArray) -> FloatArray:
    """The unit vector of every piece at ``x`` (what the friction weights read), as :func:`evaluate` has it,
    without solving the run tensions."""
    return _pieces_at(s, x)[3]


def evaluate(s: System, x: FloatArray, w: FloatArray | None = None, kc: FloatArray | None = None) -> State:
    """The state at free coordinates ``x`` (m) with piece weights ``w`` (None: frictionless)."""
    xy, l, no_zero_length, u = _pieces_at(s, x)
    L = np.add.reduceat(l, s.run_start) if s.n_runs else np.zeros(0)
    return _loaded(s, x, xy, l, no_zero_length, u, L, w, kc)


def reweighted(s: System, st: State, w: FloatArray | None = None, kc: FloatArray | None = None) -> State:
    """:func:`evaluate` at ``st.x`` with piece weights ``w`` (None: frictionless), the geometry (positions, piece
    lengths and directions, run lengths, contact penetrations) taken from ``st``, where it is the same numbers:
    only the weights differ."""
    return _loaded(s, st.x, st.xy, st.l, st.no_zero_length, st.u, st.L, w, kc, (st.pen, st.closed))


def _loaded(s: System, x: FloatArray, xy: FloatArray, l: FloatArray, no_zero_length: bool, u: FloatArray,
            L: FloatArray, w: FloatArray | None, kc: FloatArray | None, contact: tuple | None = None) -> State:
    """The state at ``x`` of :func:`evaluate` from its geometry: run tensions, piece forces, out-of-balance.

    ``contact``: (penetrations, whether any is closed) at this geometry when known.
    """
    if w is None:
        w = s.ones
    tau, taut = solve_run_tensions(s, L, l, w)
    if not s.n_pieces:
        T = np.zeros(0)
    else:
        T = tau[s.piece_run] if w is s.ones else w * tau[s.piece_run]
    kappa = None if s.soft is None else s.soft[s.piece_run]  # = softening(s, pieces=every piece)
    eps = by_material(s, s.piece_mat, T, "strain", kappa) if s.n_pieces else np.zeros(0)
    if kc is None:
        kc = contact_stiffness(s)
    if contact is None:
        # 0 where the contact is off (s_min_on = -inf); the passes' order is kept by the line searches (pass_order)
        pen = np.maximum(s.s_min_on - l, 0.0)
        closed = np.count_nonzero(pen) > 0
    else:
        pen, closed = contact
    N = T - kc * pen if closed else T
    if s.n_pieces:
        # dPi/dx_a = -N u, dPi/dx_b = +N u: the contact pushes along the piece, as two bodies touching do
        nu = (N[:, None] * u).reshape(-1)
        g = np.bincount(s.g_idx, nu[s.g_src] * s.g_sgn, minlength=s.n_dof) - s.F
    else:
        g = -s.F
    return State(x=x, xy=xy, l=l, u=u, w=w, L=L, tau=tau, taut=taut, T=T, eps=eps, pen=pen, N=N, g=g,
                 closed=closed, no_zero_length=no_zero_length,
                 potential_from=(s, s.soft, x, L, kc, pen))

