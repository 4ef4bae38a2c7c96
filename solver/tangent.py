"""The tangent K = dg/dx of a System at a state (N/m): the whole rig's, or the dense block of one part."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from solver import memo
from solver.evaluate import State, contact_stiffness
from solver.laws import by_material
from solver.system import FloatArray, IntArray, System

def tangent_values(s: System, st: State, kc: FloatArray | None = None, exact: bool = False) -> FloatArray:
    """Values of the tangent K = d g / d x (N/m) at fixed piece weights, on the static pattern ``s.k_rows/k_cols``.

    K = sum_k [max(N_k, 0)/l_k (I - u u^T) + contact k_c u u^T] (geometric and contact parts) + for each
    taut tied run the rank-one term (sum_k w_k grad l_k)(d tau/d x)^T with
    d tau/d x = sum_j grad l_j / (1 + eps_j) / D, D = sum_j l_j w_j eps'(T_j) / (1 + eps_j)^2
    (implicit differentiation of the run's length equation).  The k == j terms of the
    rank-one part are folded into each piece's own 4x4 block.
    """
    if s.n_pieces == 0:
        return np.zeros(0)
    if kc is None:
        kc = contact_stiffness(s)
    return np.concatenate(_block_values(s, st, kc, exact, None))[s.k_src] * s.k_sgn


@dataclass(frozen=True)
class PartPattern:
    """Where one part's tangent entries come from: its pieces and tied-run pairs, and its dense block's layout."""

    dofs: IntArray  # the part's free coordinates, in order (the block's rows and columns)
    pieces: IntArray  # the part's pieces, in order
    pair_k: IntArray  # the part's pairs, as positions in ``pieces``
    pair_j: IntArray
    pair_run: IntArray  # and their runs (global run numbers)
    src: IntArray  # per kept entry of the part, in pattern order: its index into the part's packed block values
    sgn: FloatArray  # and its sign
    lin: IntArray  # and its place in the part's dense block, row-major


def part_pattern(s: System, part: int) -> PartPattern:
    """The :class:`PartPattern` of part ``part``, kept per topology (it depends on the index arrays alone: a drag
    step's System shares them), by the topology's tangent pattern (:data:`solver.memo.PART_PATTERNS`)."""
    patterns = memo.PART_PATTERNS.get(s.k_src)
    if patterns is None:
        patterns = {}
        memo.PART_PATTERNS.put((s.k_src,), patterns)
    pat = patterns.get(part)
    if pat is None:
        if len(patterns) >= 64:
            patterns.clear()
        pat = patterns[part] = _part_pattern(s, part)
    return pat


def _part_pattern(s: System, part: int) -> PartPattern:
    """:func:`part_pattern`, computed: the part's kept entries (every entry on one of its dofs), in the same order."""
    dofs = np.flatnonzero(s.dof_comp == part)
    pieces = np.flatnonzero(s.piece_comp == part)
    local_piece = np.full(s.n_pieces, -1, dtype=np.intp)
    local_piece[pieces] = np.arange(len(pieces))
    pairs = np.flatnonzero(s.piece_comp[s.pair_k] == part) if len(s.pair_k) else np.zeros(0, np.intp)
    local_pair = np.full(len(s.pair_k), -1, dtype=np.intp)
    local_pair[pairs] = np.arange(len(pairs))
    keep = np.flatnonzero(s.dof_comp[s.k_rows] == part)
    n, m, np_, nq = s.n_pieces, len(s.pair_k), len(pieces), len(pairs)
    src = s.k_src[keep]
    block = src < 3 * n  # a piece's own block value: component src // n of piece src % n
    local = np.empty(len(src), dtype=np.intp)
    local[block] = (src[block] // n) * np_ + local_piece[src[block] % n]
    q = src[~block] - 3 * n  # else a pair's: component q // m of pair q % m
    local[~block] = 3 * np_ + (q // max(m, 1)) * nq + local_pair[q % max(m, 1)]
    local_dof = np.full(s.n_dof, -1, dtype=np.intp)
    local_dof[dofs] = np.arange(len(dofs))
    lin = local_dof[s.k_rows[keep]] * len(dofs) + local_dof[s.k_cols[keep]]
    pat = PartPattern(dofs=dofs, pieces=pieces, pair_k=local_piece[s.pair_k[pairs]],
                      pair_j=local_piece[s.pair_j[pairs]], pair_run=s.pair_run[pairs], src=local,
                      sgn=s.k_sgn[keep], lin=lin.astype(np.intp))
    for arr in (pat.dofs, pat.pieces, pat.pair_k, pat.pair_j, pat.pair_run, pat.src, pat.sgn, pat.lin):
        arr.flags.writeable = False
    return pat


def part_tangent(s: System, st: State, kc: FloatArray, exact: bool, part: int) -> FloatArray:
    """The dense block of the tangent on part ``part``'s coordinates (:attr:`PartPattern.dofs`), N/m: bit for bit
    the full dense tangent's rows and columns of those coordinates (the same values summed in the same order),
    from the part's own pieces alone (a part's pieces reach only its own coordinates)."""
    pat = part_pattern(s, part)
    m = len(pat.dofs)
    if not len(pat.pieces):
        return np.zeros((m, m))
    val = np.concatenate(_block_values(s, st, kc, exact, pat))[pat.src] * pat.sgn
    return np.bincount(pat.lin, val, minlength=m * m).reshape(m, m)


def _block_values(s: System, st: State, kc: FloatArray, exact: bool, on: PartPattern | None) -> list[FloatArray]:
    """The tangent's packed block values: [axx, axy, ayy] of each piece's 2x2 block, then [xx, xy, yx, yy] of each
    tied-run pair's rank-one block (see :func:`tangent_values`), of every piece and pair (``on`` None) or of
    those of one part (each value the same number either way)."""
    unit = st.w is s.ones  # frictionless: every weight 1, so the products by w are left out (same numbers)
    if on is None:
        u, l, N, T, eps, w, pen = st.u, st.l, st.N, st.T, st.eps, st.w, st.pen
        piece_run, piece_mat, k, j, r = s.piece_run, s.piece_mat, s.pair_k, s.pair_j, s.pair_run
    else:
        P = on.pieces
        u, l, N, T, eps, w, pen, kc = st.u[P], st.l[P], st.N[P], st.T[P], st.eps[P], st.w[P], st.pen[P], kc[P]
        piece_run, piece_mat, k, j, r = s.piece_run[P], s.piece_mat[P], on.pair_k, on.pair_j, on.pair_run
    # a piece pushed by the spacing contact (N < 0) would add negative stiffness, turning the
    # rope's kink at a two-blocked pass into a saddle for Newton: keep only the pull (PSD tangent)
    pull = N if exact else np.maximum(N, 0.0)
    geo = pull / l if st.no_zero_length else np.divide(pull, l, out=np.zeros(l.shape), where=l > 0)
    run_coef = None
    if np.count_nonzero(st.taut):
        c = 1.0 / (1.0 + eps)
        de = by_material(s, piece_mat, T, "dstrain", None if s.soft is None else s.soft[piece_run])
        D = np.bincount(piece_run, (l if unit else l * w) * de * c * c, minlength=s.n_runs)
        run_coef = np.divide(1.0, D, out=np.zeros(D.shape), where=st.taut & (D > 0))
        coef = (c if unit else w * c) * run_coef[piece_run]
        axial = np.where(pen > 0, kc, 0.0) + coef if st.closed else coef
    else:
        axial = np.where(pen > 0, kc, 0.0)
    ux, uy = u[:, 0], u[:, 1]
    # 2x2 block A = geo (I - u u^T) + axial u u^T, stored as (xx, xy, yy)
    axx = geo * (1.0 - ux * ux) + axial * ux * ux
    axy = (axial - geo) * ux * uy
    ayy = geo * (1.0 - uy * uy) + axial * uy * uy
    # every kept entry is one of these block values times +-1 (index map built by _pattern)
    packed = [axx, axy, ayy]
    if len(k):
        cj = 1.0 / (1.0 + eps[j])
        pc = w[k] * cj * (run_coef[r] if run_coef is not None else 0.0)
        packed += [ux[k] * ux[j] * pc, ux[k] * uy[j] * pc, uy[k] * ux[j] * pc, uy[k] * uy[j] * pc]
    return packed

