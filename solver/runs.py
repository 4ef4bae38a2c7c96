"""The tension of every rope run: a hauled run's haul force, a tied run's root of its length equation."""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from solver.laws import by_material, law, softening
from solver.system import FloatArray, IntArray, System

def solve_run_tensions(s: System, L: FloatArray, l: FloatArray, w: FloatArray) -> tuple[FloatArray, NDArray[np.bool_]]:
    """Reference tension tau_r of every run: haul force for hauled runs, else the root of the length equation.

    Tied run: sum_k l_k / (1 + eps(w_k tau)) = L0 (strictly decreasing in tau), solved by a
    bracketed Newton iteration vectorised over runs; tau = 0 when slack (sum l_k <= L0).
    """
    nr = s.n_runs
    tied_run = s.run_tied
    taut = tied_run & (L >= s.run_L0)
    if w is s.ones:
        # frictionless: every weight 1, so each tied run's tension is its curve at L / L0 - 1 (the
        # bracket below closes on it at once; a slack run's strain <= 0 gives 0) -- same numbers
        t_all = by_material(s, s.run_mat, L / s.run_L0_div - 1.0, "tension", s.soft)
        return np.where(tied_run, t_all, s.haul_P_or_0), taut
    fixed = s.__dict__.get("_run_tension_fixed")
    if fixed is None:  # per-System constants of the weighted case, built on first use
        hauled_at = s.run_hauled.nonzero()[0]
        fixed = s._run_tension_fixed = (hauled_at, (s.run_start + s.run_count - 1)[hauled_at], s.run_P[hauled_at])
    hauled_at, hauled_last, hauled_P = fixed
    w_of, run_wmin, run_wmax, uneven, hauled_tau = s.__dict__.get("_run_weight_range") or (None,) * 5
    if w_of is not w:  # the weights are fixed through a Newton solve: their per-run range once per array
        run_wmin = np.minimum.reduceat(w, s.run_start) if nr else w
        run_wmax = np.maximum.reduceat(w, s.run_start) if nr else w
        uneven = np.count_nonzero(tied_run & (run_wmin != run_wmax)) > 0
        hauled_tau = hauled_P / w[hauled_last]  # a hauled run's first piece: its haul force over the last's weight
        s._run_weight_range = (w, run_wmin, run_wmax, uneven, hauled_tau)
    tau = np.zeros(nr)
    tau[hauled_at] = hauled_tau
    strict = (tied_run & (L > s.run_L0)).nonzero()[0]
    if len(strict) == 0:
        return tau, taut
    lam_e = L[strict] / s.run_L0[strict] - 1.0
    t_lam = by_material(s, s.run_mat[strict], lam_e, "tension", softening(s, runs=strict))
    if not uneven:  # each tied run's pieces share one weight: the bracket below is closed already
        tau[strict] = t_lam / run_wmax[strict]
        return tau, taut
    wmin, wmax = run_wmin[strict], run_wmax[strict]
    lo = t_lam / wmax
    hi = t_lam / wmin
    t = 0.5 * (lo + hi)  # the root when the bracket is closed
    todo = (hi - lo > 1e-15 * hi).nonzero()[0]
    if len(todo):
        # pieces of the runs still to solve
        runs = strict[todo]
        pieces, owner = _run_pieces(s, runs)
        lk, wk, mk = l[pieces], w[pieces], s.piece_mat[pieces]
        kk = softening(s, pieces=pieces)
        L0 = s.run_L0[runs]
        lo_t, hi_t = lo[todo], hi[todo]
        n_todo = len(runs)
        lk_wk = lk * wk  # (read by every Newton step below too: a * b * c is (a * b) * c)
        # start at the run's stretch tension over its length-weighted mean weight (inside the
        # bracket; exact for a rope of constant stiffness in the limit of small strain)
        w_mean = np.bincount(owner, lk_wk, minlength=n_todo) / np.bincount(owner, lk, minlength=n_todo)
        tt = np.clip(t_lam[todo] / w_mean, lo_t, hi_t)
        # within one solve the last evaluation's tensions are closer still (the geometry moved a
        # step); the solver clears them when a solve starts, so a solve's numbers do not depend on
        # what was solved before
        last = s.__dict__.get("_last_tau")
        if last is not None and last[0] is w:
            prev = last[1][runs]
            tt = np.where((prev > lo_t) & (prev < hi_t), prev, tt)
        # what every step below reads unchanged, made once; no piece tension below is negative
        # (weights >= 0, tt inside a bracket from t_lam / wmax >= 0)
        strain, dstrain = law(s, mk, kk, "strain", positive=True), law(s, mk, kk, "dstrain", positive=True)
        f_tol = 1e-15 * L0
        for _ in range(100):
            Tk = wk * tt[owner]
            one_e = 1.0 + strain(Tk)
            f = np.bincount(owner, lk / one_e, minlength=n_todo) - L0
            lo_t = np.where(f > 0, tt, lo_t)
            hi_t = np.where(f < 0, tt, hi_t)
            done = (np.abs(f) <= f_tol) | (hi_t - lo_t <= 1e-15 * hi_t)
            if done.all():
                break  # (the slope is needed only for another step)
            fp = -np.bincount(owner, lk_wk * dstrain(Tk) / one_e ** 2, minlength=n_todo)
            # a flat f (fp = 0) gives no Newton step: inf, refused below like any step off the bracket
            step = tt - np.divide(f, fp, out=np.full(n_todo, np.inf), where=fp != 0.0)
            # inside the (finite) bracket: a step that is not a number or infinite fails both tests
            inside = (step > lo_t) & (step < hi_t)
            tt = np.where(inside, step, 0.5 * (lo_t + hi_t))
        t[todo] = tt
    tau[strict] = t
    s._last_tau = (w, tau)
    return tau, taut


def _run_pieces(s: System, runs: IntArray) -> tuple[IntArray, IntArray]:
    """(every piece of the runs ``runs``, in order; the position in ``runs`` of each), kept per System by runs."""
    memo = s.__dict__.setdefault("_run_pieces_memo", {})
    key = runs.tobytes()
    hit = memo.get(key)
    if hit is None:
        counts = s.run_count[runs]
        pieces = np.repeat(s.run_start[runs] - np.cumsum(counts) + counts, counts) + np.arange(counts.sum())
        owner = np.repeat(np.arange(len(runs)), counts)
        if len(memo) > 64:
            memo.clear()
        hit = memo[key] = (pieces, owner)
    return hit

