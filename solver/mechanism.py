"""Whether the structure holds every free point: a zero-stiffness mode of the frictionless tangent."""

from __future__ import annotations

import numpy as np
import scipy.linalg
import scipy.sparse

from solver import free_directions
from solver.evaluate import State
from solver.newton import DENSE_MAX, POTRF, force_scale, tangent_matrix
from solver.system import System

#: Smallest tangent eigenvalue, relative to the largest diagonal, that still holds a point.
MECHANISM_REL = 1e-11


def mechanism(s: System, st: State, kc: np.ndarray) -> tuple[int, np.ndarray] | None:
    """(free point index, its x and y in each zero-stiffness mode of the symmetric tangent), or None."""
    if s.n_dof == 0:
        return None
    dense = s.n_dof <= DENSE_MAX
    K = tangent_matrix(s, st, kc, dense)
    diag = np.asarray(K.diagonal())
    top = max(float(diag.max()), force_scale(s, st) / s.size, 1e-12)
    if dense:
        Ks = 0.5 * (K + K.T)
        # Ks - threshold I positive definite (its Cholesky factor exists) means every eigenvalue is
        # above the threshold: held, at a fraction of the cost of the eigenvalues
        M = Ks.copy()
        M.ravel()[::len(M) + 1] -= MECHANISM_REL * top
        if POTRF(M, lower=False, overwrite_a=True, clean=False)[1] == 0:
            return None
        lam = float(np.linalg.eigvalsh(Ks)[0])  # values only: fast; the vector only on failure
        if lam > MECHANISM_REL * top:
            return None
        # every near-zero mode: a point free in two independent ways is free in every direction
        vals, vecs = scipy.linalg.eigh(Ks, subset_by_value=(-np.inf, MECHANISM_REL * top))
        if not len(vals):
            vals, vecs = scipy.linalg.eigh(Ks, subset_by_index=[0, 0])
        lam, v = float(vals[0]), vecs
    else:
        # inverse iteration from a fixed pseudo-random start: a near-zero eigenvalue dominates at once
        Ks = (0.5 * (K + K.T)).tocsc()
        n = Ks.shape[0]
        shift = 1e-3 * MECHANISM_REL * top
        from scipy.sparse.linalg import splu  # the sparse path (big rigs) only: a small solve skips the import

        try:
            lu = splu((Ks + shift * scipy.sparse.identity(n, format="csc")).tocsc(),
                      permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
        except RuntimeError:
            lam, v = 0.0, np.zeros(n)
            v[int(np.argmin(np.abs(Ks.diagonal())))] = 1.0
        else:
            v = np.random.default_rng(12345).standard_normal(n)
            for _ in range(4):
                v = lu.solve(v)
                v /= np.linalg.norm(v)
            lam = float(v @ (Ks @ v))
    if lam > MECHANISM_REL * top:
        return None
    k = free_directions.most_moving(v)
    free_idx = np.flatnonzero(s.free)
    share = free_directions.point_share(v, k)
    if not dense:
        share = free_directions.with_own_block(share, Ks[2 * k:2 * k + 2, 2 * k:2 * k + 2].toarray(),
                                               MECHANISM_REL * top)
    return int(free_idx[k]), share
