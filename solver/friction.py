"""Pass friction: tension ratios along each run from pulley efficiency and edge wrap (capstan).

Piece k of a run carries T_k = w_k * tau, with w = 1 on the run's first piece and each
middle pass multiplying by its factor in the rope's direction of travel (rig-format.md):
``haul`` travels first -> last, so a pulley multiplies by 1/eta and an edge by e^(mu phi)
(Euler-Eytelwein capstan equation, phi = wrap angle in radians); ``lower`` travels the other
way (eta, e^(-mu phi)); ``hold`` and sliding passes are frictionless.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from solver.system import PASS_EDGE, PASS_PULLEY, System

FloatArray = NDArray[np.float64]


def turn_angles(s: System, u: FloatArray) -> FloatArray:
    """Angle in radians through which the rope turns at the pass before each piece (0 on a run's first piece).

    ``u`` holds the unit direction of every piece (n_pieces, 2); 0 = straight through, pi = doubled back.
    """
    phi = np.zeros(s.n_pieces)
    inner = np.flatnonzero(~s.piece_first)
    if len(inner):
        cos = np.einsum("ij,ij->i", u[inner - 1], u[inner])
        phi[inner] = np.arccos(np.clip(cos, -1.0, 1.0))
    return phi


def log_factors(s: System, u: FloatArray, motion: str) -> FloatArray:
    """log of the tension ratio across the pass before each piece, for ``motion`` (haul/lower/hold)."""
    if motion == "hold" or s.n_pieces == 0:
        return np.zeros(s.n_pieces)
    sign = 1.0 if motion == "haul" else -1.0
    lf = np.zeros(s.n_pieces)
    pul = s.pass_kind == PASS_PULLEY
    lf[pul] = -sign * np.log(s.pass_eta[pul])
    edge = s.pass_kind == PASS_EDGE
    if np.count_nonzero(edge):
        lf[edge] = sign * s.pass_mu[edge] * turn_angles(s, u)[edge]
    return lf


def jammed_passes(s: System, pen: FloatArray) -> NDArray[np.bool_]:
    """Per piece: the pass before it is jammed, i.e. a piece on either side of it is pressed at its minimum spacing.

    A pass two-blocked against its neighbour (a pulley run into a knot or into the next
    pulley) lets no rope run through it, so it transmits the static ratio 1, which lies in
    the static friction range [eta, 1/eta] (rig-format.md) -- not the running ratio of
    ``haul``/``lower``, which would ask the contact to pull the two passes together.
    """
    touch = pen > 0
    jam = np.zeros(s.n_pieces, dtype=bool)
    inner = np.flatnonzero(~s.piece_first)
    if len(inner):
        jam[inner] = touch[inner] | touch[inner - 1]
    return jam


def weights(s: System, u: FloatArray, motion: str, jammed: NDArray[np.bool_] | None = None) -> FloatArray:
    """Tension weight w_k of every piece relative to its run's first piece (product of pass factors).

    ``jammed`` (per piece, optional): passes that transmit ratio 1 (see :func:`jammed_passes`).
    """
    lf = log_factors(s, u, motion)
    if s.n_pieces == 0:
        return lf
    if jammed is not None:
        lf = np.where(jammed, 0.0, lf)
    cs = np.cumsum(lf)
    start = s.run_start[s.piece_run]
    return np.exp(cs - cs[start])


#: A pass placed against its neighbour (see :func:`placed_against`) starts this fraction inside its minimum spacing.
PLACED_INSIDE = 1e-3


def pulled_passes(s: System, T: FloatArray, g: FloatArray, motion: str) -> list[tuple[int, int]]:
    """(pass point, piece it closes up) for every free pass with friction, the pass with the largest imbalance first.

    Across a pulley or an edge the rope is tighter on one side (the ratio of ``motion``), so
    friction pulls the pass along its rope toward the tighter side's neighbour; the piece on
    that side is the one that closes up if nothing else holds the pass.  ``T`` are piece
    tensions and ``g`` the free-coordinate imbalance of the state the pass is pulled in.
    """
    if motion == "hold":  # hold: every pass frictionless
        return []
    out: list[tuple[float, int, int]] = []
    for k in np.flatnonzero(~s.piece_first):
        p = int(s.a[k])
        kind = s.pass_kind[k]
        rubs = (kind == PASS_PULLEY and s.pass_eta[k] < 1.0) or (kind == PASS_EDGE and s.pass_mu[k] > 0.0)
        if not rubs or not s.free[p]:
            continue
        closing = int(k - 1) if T[k - 1] >= T[k] else int(k)
        if not s.contact_on[closing]:
            continue
        out.append((-float(np.hypot(*g[s.dof[p]])), p, closing))
    return [(p, c) for _, p, c in sorted(out)]


def placed_against(s: System, x: FloatArray, p: int, piece: int) -> FloatArray | None:
    """Free coordinates ``x`` with point ``p`` moved along ``piece`` to just inside its minimum spacing from the
    piece's other end (None when the two coincide and the piece has no direction)."""
    xy = s.positions(x)
    q = int(s.b[piece]) if int(s.a[piece]) == p else int(s.a[piece])
    v = xy[p] - xy[q]
    n = float(np.hypot(*v))
    if n == 0.0:
        return None
    out = x.copy()
    out[s.dof[p]] = xy[q] + v * (s.s_min[piece] * (1.0 - PLACED_INSIDE) / n)
    return out


def ratios_hold(s: System, u: FloatArray, w: FloatArray, pen: FloatArray, motion: str) -> bool:
    """Whether weights ``w`` (piece directions ``u``, contact penetrations ``pen``) give every pass the running ratio
    of ``motion``, or the static ratio 1 where the pass is jammed against a neighbour (:func:`jammed_passes`)."""
    inner = np.flatnonzero(~s.piece_first)
    if not len(inner):
        return True
    across = np.log(w[inner] / w[inner - 1])
    running = np.abs(across - log_factors(s, u, motion)[inner]) <= 1e-9
    jammed = (np.abs(across) <= 1e-9) & jammed_passes(s, pen)[inner]
    return np.count_nonzero(running | jammed) == len(inner)

