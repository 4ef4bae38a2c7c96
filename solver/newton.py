"""The one Newton iteration of the solver: damped, shifted Newton on the free coordinates, part by part.

Every independent part of a rig (``System.n_comp``) keeps its own Levenberg-Marquardt shift, step
cap, line search and convergence test.  Without friction the merit is the potential Pi (convex:
Kanno, Ohsaki & Ito, IJNME 2002), with friction 1/2 |g|^2 and the natural monotonicity test; both
are sums over parts, so a part is solved by the same numbers whether it is drawn alone or beside
others.  Which parts iterate together is data (:class:`_Parts`): every part of the rig, or, once only
one part is left iterating (a drag step moves one part), that part alone on its own coordinates.
"""

from __future__ import annotations

import logging
import math

import numpy as np
import scipy.linalg
import scipy.sparse

from solver import pass_order
from solver.evaluate import State, evaluate
from solver.outcome import Outcome
from solver.system import IntArray, System
from solver.tangent import part_pattern, part_tangent, tangent_values

log = logging.getLogger(__name__)

#: Largest number of unknowns solved with dense linear algebra.
DENSE_MAX = 400
#: Newton iterations per stage.
MAX_ITER = 200
#: Trial evaluations (line search included) one Newton solve may spend before giving up.
MAX_EVALUATIONS = 1500
#: Target and acceptance of the largest free-point imbalance, relative to the largest force.
TARGET_REL = 1e-10
ACCEPT_REL = 1e-7
#: A point farther than this many rig sizes from the sketch has run away.
RUNAWAY_SIZES = 100.0


def point_norms(g: np.ndarray) -> np.ndarray:
    return np.hypot(g[0::2], g[1::2]) if len(g) else np.zeros(0)


def runaway_point(s: System, st: State) -> int | None:
    """The free point (index into the System's points) farthest from the drawing when it is more than
    RUNAWAY_SIZES rig sizes away, else None."""
    # the drawing's centre is the solver's origin: no subtraction unless it moved
    off = st.x - np.tile(s.centre, s.n_dof // 2) if np.count_nonzero(s.centre) else st.x
    # no coordinate beyond reach / sqrt(2) (so no point beyond reach, |(x, y)| <= sqrt(2) max(|x|, |y|)): the
    # common case, told by one look at the largest coordinate (with room for round-off)
    if not len(off) or float(np.abs(off).max()) * 1.5 <= RUNAWAY_SIZES * s.size:
        return None
    far = point_norms(off)
    if far.max() > RUNAWAY_SIZES * s.size:
        return int(s.free_at[np.argmax(far)])
    return None


def max_norm(g: np.ndarray) -> float:
    """Largest per-point force imbalance, N (0 when nothing is free)."""
    return float(point_norms(g).max()) if len(g) else 0.0


def force_scale(s: System, st: State) -> float:
    t = float(np.abs(st.N).max()) if len(st.N) else 0.0
    return max(s.force_scale, t)


def tangent_matrix(s: System, st: State, kc: np.ndarray, dense: bool, exact: bool = False, part: int | None = None):
    """The tangent on the free dofs: a dense array for small rigs, else CSC (kept on the state: never written to).

    ``part``: only its rows and columns (:func:`_sub` of the whole), the dense block built from the part's
    own pieces (:func:`solver.tangent.part_tangent`, the same numbers).
    """
    key = (dense, exact) if part is None else (dense, exact, part)
    K = st.matrices.get(key)
    if K is not None:
        return K
    if part is None:
        K = _assembled(s, st, kc, dense, exact)
    elif dense:
        K = part_tangent(s, st, kc, exact, part)
    else:
        K = _sub(tangent_matrix(s, st, kc, dense, exact), part_pattern(s, part).dofs, dense)
    st.matrices[key] = K
    return K


def _assembled(s: System, st: State, kc: np.ndarray, dense: bool, exact: bool):
    val = tangent_values(s, st, kc, exact)
    n = s.n_dof
    if dense:
        return np.bincount(s.dense_lin, val, minlength=n * n).reshape(n, n)
    data = np.bincount(s.csc_map, val, minlength=len(s.csc_indices))
    return scipy.sparse.csc_matrix((data, s.csc_indices, s.csc_indptr), shape=(n, n))


POTRF, _POTRS, _GETRF, _GETRS = scipy.linalg.get_lapack_funcs(("potrf", "potrs", "getrf", "getrs"),
                                                                 (np.zeros((1, 1)),))


def _lapack_solved(x: np.ndarray, info: int) -> np.ndarray:
    if info != 0:
        raise ValueError(f"illegal value in argument {-info} of the LAPACK solve")
    return x


def _shifted_factor(K, lam: np.ndarray | float, dense: bool, symmetric: bool):
    """A solver for (K + diag(lam)) d = rhs (``lam`` an array or one shift for every coordinate); None when
    the shifted matrix is not usable (raise the shift)."""
    n = K.shape[0]
    try:
        if dense:
            M = K.copy()
            M.ravel()[::n + 1] += lam  # the diagonal (a view: M is a fresh contiguous copy)
            # the LAPACK routines scipy.linalg.cho_factor/cho_solve and lu_factor/lu_solve call,
            # called directly: same numbers without the wrappers' per-call overhead (small rigs)
            if symmetric:
                c, info = POTRF(M, lower=False, overwrite_a=True, clean=False)
                if info != 0:
                    return None
                return lambda rhs: _lapack_solved(*_POTRS(c, rhs, lower=False))
            lu, piv, info = _GETRF(M, overwrite_a=True)
            # info > 0: a pivot is exactly zero; a non-finite factor shows as a non-finite solution,
            # which shifted_solve refuses
            if info != 0:
                return None
            return lambda rhs: _lapack_solved(*_GETRS(lu, piv, rhs, trans=0))
        from scipy.sparse.linalg import splu  # the sparse path (big rigs) only: a small solve skips the import

        M = (K + scipy.sparse.diags(np.broadcast_to(lam, (n,)), format="csc")).tocsc()
        if symmetric:  # SPD after the shift: diagonal pivots, symmetric ordering
            lu = splu(M, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
        else:
            lu = splu(M, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.1)
        return lu.solve
    except (np.linalg.LinAlgError, scipy.linalg.LinAlgError, RuntimeError, ValueError):
        return None


def shifted_solve(K, lam: np.ndarray | float, rhs: np.ndarray, dense: bool, symmetric: bool):
    """(d, solver) with (K + diag(lam)) d = rhs, or (None, None) when the shift must rise."""
    solver = _shifted_factor(K, lam, dense, symmetric)
    if solver is None:
        return None, None
    try:
        d = solver(rhs)
    except (np.linalg.LinAlgError, scipy.linalg.LinAlgError, RuntimeError, ValueError):
        return None, None
    return (d, solver) if np.count_nonzero(np.isfinite(d)) == d.size else (None, None)


def _comp_max(s: System, values: np.ndarray) -> np.ndarray:
    """Largest per-point value (``values`` per free point) within each part."""
    if s.n_comp == 1:
        return np.array([float(values.max()) if len(values) else 0.0])
    return s.point_groups.max_into(np.zeros(s.n_comp), values)


def _comp_scale(s: System, st: State) -> np.ndarray:
    """Force scale of each part: its largest applied force, haul, pretension or piece pull, N."""
    out = s.comp_force_scale.copy()
    if s.n_comp == 1:
        out[0] = max(out[0], float(np.abs(st.N).max()) if len(st.N) else 0.0)
        return out
    return s.piece_groups.max_into(out, np.abs(st.N))


def _sub(K, idx: np.ndarray, dense: bool):
    """The tangent restricted to the coordinates ``idx`` (whole parts: K is block-diagonal over parts)."""
    if dense:
        return K[np.ix_(idx, idx)]
    return K[idx][:, idx]


class _Parts:
    """The parts one Newton iteration moves together, as data: every part of the rig, or one part alone.

    Per-part numbers are lists, one entry per part here (plain numbers: most rigs are one part, and on a
    small rig array bookkeeping would cost more than the linear algebra).  The vectors the iteration
    reads (``on``) are the whole rig's, or the one part's coordinates in order, so every sum over a
    part adds the same numbers in the same order either way: one part gives bit for bit the numbers
    it gets among the others.
    """

    __slots__ = ("ids", "part", "idx", "pieces", "cd", "size", "scale0", "single")

    def __init__(self, ids: tuple[int, ...], part: int | None, idx: IntArray | None, pieces: IntArray | None,
                 cd: IntArray, size: list[float], scale0: float) -> None:
        self.ids = ids  # the parts, by number
        self.part = part  # the one part when these are not the whole rig's coordinates, else None
        self.idx = idx  # the parts' free coordinates (None: every free coordinate)
        self.pieces = pieces  # the one part's pieces (None: every piece)
        self.cd = cd  # per coordinate (of ``idx``): the position in ``ids`` of its part
        self.size = size  # the parts' sizes, m
        self.scale0 = scale0  # the one part's largest applied force, haul or pretension, N (several parts: unused)
        self.single = len(ids) == 1

    @classmethod
    def every(cls, s: System) -> _Parts:
        return cls(tuple(range(s.n_comp)), None, None, None, s.dof_comp, s.comp_size.tolist(),
                   float(s.comp_force_scale[0]))

    @classmethod
    def one(cls, s: System, part: int) -> _Parts:
        pat = part_pattern(s, part)  # kept per topology: a drag step's System has it from the last step
        # one bin: bincount sums the part's coordinates in order
        return cls((part,), part, pat.dofs, pat.pieces, np.zeros(len(pat.dofs), dtype=np.intp),
                   [float(s.comp_size[part])], float(s.comp_force_scale[part]))

    def on(self, v: np.ndarray) -> np.ndarray:
        """The parts' coordinates of a whole-rig vector."""
        return v if self.idx is None else v[self.idx]

    def maxima(self, s: System, per_point: np.ndarray) -> list[float]:
        """Each part's largest value of ``per_point`` (one value per free point of these parts)."""
        if self.single:
            return [float(per_point.max()) if len(per_point) else 0.0]
        return _comp_max(s, per_point).tolist()

    def sums(self, cd: np.ndarray, values: np.ndarray) -> list[float]:
        """Each part's sum of ``values`` (one per coordinate, part positions ``cd``), in coordinate order."""
        return np.bincount(cd, values, minlength=len(self.ids)).tolist()

    def scales(self, s: System, st: State) -> list[float]:
        """Each part's force scale: its largest applied force, haul, pretension or piece pull, N."""
        if not self.single:
            return _comp_scale(s, st).tolist()
        N = st.N if self.pieces is None else st.N[self.pieces]
        return [max(self.scale0, float(np.abs(N).max()) if len(N) else 0.0)]

    def merits(self, st: State, symmetric: bool) -> list[float]:
        """Each part's merit: its potential (frictionless) or 1/2 |g|^2 over its coordinates."""
        if symmetric:
            return [float(st.comp_energy[self.ids[0]])] if self.single else st.comp_energy.tolist()
        g = self.on(st.g)
        return [0.5 * v for v in self.sums(self.cd, g * g)]

    def among(self, which: list[int]) -> np.ndarray:
        """Per coordinate: whether its part is one of the positions ``which``."""
        chosen = np.zeros(len(self.ids), dtype=bool)
        chosen[which] = True
        return chosen[self.cd]


def newton(s: System, x0: np.ndarray, w: np.ndarray | None, kc: np.ndarray, symmetric: bool,
           max_iter: int = MAX_ITER, target: float = TARGET_REL, state: State | None = None) -> Outcome:
    """Damped, shifted Newton iteration for g(x) = 0 at fixed piece weights ``w``, to imbalance ``target`` x force scale.

    Every independent part of the rig keeps its own Levenberg-Marquardt shift, step cap,
    line-search step and convergence test: the merit (the potential Pi without friction,
    1/2 |g|^2 with it) is a sum over parts, so a per-part Armijo test is exactly the test of that
    part alone, and the iteration count is that of the slowest part.  When one part is left
    iterating, the iteration goes on with that part's own coordinates and the dense block of its
    own pieces (:meth:`_Parts.one`): the same numbers, at the cost of that part drawn alone.
    ``state``: the state at ``x0`` with these weights when already evaluated.

    One piece on purpose (about 200 lines): the test, the matrix, the shifted solve, the step cap,
    the line search and the shift update of one iteration share a dozen per-part quantities, and the
    order of their floating-point operations is what keeps results bit for bit the same; split into
    functions they would pass all of them back and forth.
    """
    dense = s.n_dof <= DENSE_MAX
    # passes keep the order they have at x0 (one-sided spacing contact); the order never enters a force,
    # so it is taken after the state at x0 is evaluated, from that state's pieces (the same numbers)
    st = state if state is not None and not state.closed else evaluate(s, x0, w, kc)
    at_x0 = st.x is x0
    if at_x0:
        pass_order.start_at(s, st)
    else:
        pass_order.start(s, x0)
    if s.n_dof == 0:
        return Outcome(st, 0, True)
    if s.n_comp == 1:  # one part from the start: its order taken again from the state (as it always was)
        if not at_x0:
            pass_order.start(s, st.x)
        if st.closed:
            st = evaluate(s, st.x, w, kc)
    parts = _Parts.every(s)
    n = len(parts.ids)
    mu = [1e-10] * n  # shift per part, relative to its largest diagonal
    cap = [0.1 * z for z in parts.size]  # step cap per part, m
    stall = [0] * n  # iterations without the imbalance halving
    best = [math.inf] * n
    ok = [False] * n  # parts that stopped converged
    active = [True] * n  # parts still iterating
    others_ok = True  # the parts left behind when one part goes on alone
    debug = log.isEnabledFor(logging.DEBUG)
    evaluations = 0
    it = 0
    for it in range(max_iter):
        if evaluations > MAX_EVALUATIONS:
            break
        scale = parts.scales(s, st)
        res = parts.maxima(s, point_norms(parts.on(st.g)))
        left = []  # the parts still iterating after this test
        for j in range(n):
            if active[j]:
                done = res[j] <= target * scale[j] or (scale[j] == 0.0 and res[j] == 0.0)
                if res[j] < 0.5 * best[j]:
                    best[j], stall[j] = res[j], 0
                else:
                    stall[j] += 1
                # at the round-off floor: no progress for several iterations but within the acceptance
                if done or (stall[j] >= 4 and res[j] <= ACCEPT_REL * scale[j]):
                    ok[j], active[j] = True, False
                else:
                    left.append(j)
        if not left:
            return Outcome(st, it, all(ok) and others_ok)
        if n > 1 and len(left) == 1:  # one part still iterating (a drag step moves one): that part alone, from here
            j = left[0]
            others_ok = all(ok[i] for i in range(n) if i != j)
            parts = _Parts.one(s, parts.ids[j])
            mu, cap, stall, best, scale, res = [mu[j]], [cap[j]], [stall[j]], [best[j]], [scale[j]], [res[j]]
            n, ok, active, left = 1, [False], [True], [0]
        K = tangent_matrix(s, st, kc, dense, exact=not symmetric, part=parts.part)
        diag = K.diagonal()
        # each part's largest diagonal entry (= the largest of its x and y maxima)
        if n == 1:
            base = [max(float(diag.max()), scale[0] / parts.size[0], 1e-12)]
        else:
            top = parts.maxima(s, np.maximum(diag[0::2], diag[1::2]))
            base = [max(t, sc / z, 1e-12) for t, sc, z in zip(top, scale, parts.size)]
        m0 = parts.merits(st, symmetric)
        g = parts.on(st.g)
        cd = parts.cd
        whole = parts.idx is None  # the parts' coordinates are every free coordinate
        x_part = None if whole else st.x[parts.idx]
        x_new = st.x.copy()
        pending = left  # parts still looking for a step (a list of its own: changed below)
        alpha = [1.0] * n
        capped = [False] * n
        trial = None
        for _attempt in range(8):
            if not pending:
                break
            every = len(pending) == n
            sub = None if every else np.flatnonzero(parts.among(pending))  # the pending parts' coordinates
            Ks = K if every else _sub(K, sub, dense)
            cd_sub = cd if every else cd[sub]
            # the shift of each coordinate's part (one number when one part is pending)
            if len(pending) == 1:
                lam = mu[pending[0]] * base[pending[0]]
            else:
                lam = np.asarray([m * b for m, b in zip(mu, base)])[cd_sub]
            d_sub, solver = shifted_solve(Ks, lam, -(g if every else g[sub]), dense, symmetric)
            if d_sub is None:
                for j in pending:
                    mu[j] *= 100.0
                continue
            if every:
                d = d_sub
            else:
                d = np.zeros(len(g))
                d[sub] = d_sub
            step = parts.maxima(s, point_norms(d))
            shrink = [1.0] * n
            for j in pending:
                capped[j] = step[j] > cap[j]
                if capped[j]:
                    shrink[j] = cap[j] / max(step[j], 1e-300)
            if not symmetric:  # the full Newton correction, for the natural monotonicity test below
                nat0 = [math.sqrt(v) for v in parts.sums(cd_sub, d_sub * d_sub)]
            d = d * (shrink[pending[0]] if len(pending) == 1 else np.asarray(shrink)[cd])
            if symmetric:
                slope = parts.sums(cd, g * d)
                uphill = []
                for j in pending:
                    if slope[j] >= 0.0:
                        uphill.append(j)
            else:
                Kd = Ks @ d if every else np.zeros(len(g))
                if not every:
                    Kd[sub] = Ks @ d[sub]
                slope = parts.sums(cd, g * Kd)
                # slope of 1/2 |K^-1 g|^2 along d (K with its shift: the level function's own matrix)
                nat_slope = parts.sums(cd_sub, d_sub * solver(Kd if every else Kd[sub]))
                # uphill for the residual merit and for the natural level function too
                uphill = []
                for j in pending:
                    if slope[j] >= 0.0 and nat_slope[j] >= 0.0:
                        uphill.append(j)
                slope = [min(v, 0.0) for v in slope]  # Armijo on |g|^2 only where it is a descent direction
            for j in uphill:
                mu[j] *= 100.0
            trying = [j for j in pending if j not in set(uphill)] if uphill else list(pending)
            a = [0.0] * n
            for j in trying:
                a[j] = 1.0
            for _ls in range(30):
                if not trying:
                    break
                evaluations += 1
                if n == 1:  # one part, every coordinate of it moving
                    if whole:
                        xt = st.x + a[0] * d
                    else:
                        xt = st.x.copy()
                        xt[parts.idx] = x_part + a[0] * d
                else:
                    xt = x_new.copy()
                    tdofs = parts.among(trying)
                    xt[tdofs] = st.x[tdofs] + (np.asarray(a)[cd] * d)[tdofs]
                trial = evaluate(s, xt, w, kc)
                m1 = parts.merits(trial, symmetric)
                passed = []  # per trying part: whether its step is taken
                for j in trying:
                    passed.append(m1[j] <= m0[j] + 1e-4 * a[j] * slope[j])
                if not symmetric and not all(passed):
                    # natural monotonicity test (Deuflhard, Newton Methods for Nonlinear Problems,
                    # 2004, sec. 3.3): the Newton correction from the trial point, with this
                    # iteration's matrix, must shrink.  Affine invariant, so a stiff rope's tiny
                    # overstretch along a curved path does not veto the step as |g|^2 would.
                    tg = parts.on(trial.g)
                    nat1 = [math.sqrt(v) for v in parts.sums(cd_sub, solver(-(tg if every else tg[sub])) ** 2)]
                    passed = [p or nat1[j] <= (1.0 - 1e-4 * a[j] * shrink[j]) * nat0[j] for p, j in zip(passed, trying)]
                # round-off: merit flat to machine precision but the imbalance still shrinks
                now = None
                for i, j in enumerate(trying):
                    if not passed[i] and abs(m1[j] - m0[j]) <= 1e-13 * (abs(m0[j]) + scale[j] * parts.size[j]):
                        if now is None:
                            now = parts.maxima(s, point_norms(parts.on(trial.g)))
                        passed[i] = now[j] < 0.9 * res[j]
                if any(passed):  # never carry a pass across its neighbour (outside the contact too)
                    crossed = pass_order.crossed(s, trial)
                    if crossed is not None:
                        passed = [p and not crossed[parts.ids[j]] for p, j in zip(passed, trying)]
                taken = sum(passed)
                if taken:
                    if taken == len(trying):
                        x_new = xt  # (xt is x_new with every trying part's step)
                    else:
                        gd = parts.among([j for p, j in zip(passed, trying) if p])
                        x_new[gd] = xt[gd]
                    for p, j in zip(passed, trying):
                        if p:
                            alpha[j] = a[j]
                            pending.remove(j)
                    trying = [j for p, j in zip(passed, trying) if not p]
                for j in trying:
                    a[j] = 0.5 * a[j]
            for j in trying:
                mu[j] *= 100.0  # line search failed: more damping
        for j in pending:  # no step found: stop this part where it is
            ok[j] = res[j] <= ACCEPT_REL * scale[j]
            active[j] = False
        if trial is None or (trial.x is not x_new and not np.array_equal(trial.x, x_new)):
            evaluations += 1
            trial = evaluate(s, x_new, w, kc)
        if debug:
            log.debug("it %d res %s mu %s alpha %s cap %s capped %s", it, res, mu, alpha, cap, capped)
        for j in range(n):
            if active[j] and alpha[j] == 1.0:
                mu[j] = max(mu[j] / 10.0, 1e-10)
                if capped[j]:
                    cap[j] = 2.0 * cap[j]
        st = trial if not pass_order.follow(s, trial) else evaluate(s, trial.x, w, kc)
        runaway = runaway_point(s, st)
        if runaway is not None:
            return Outcome(st, it + 1, False, runaway=runaway)
        if not any(active):
            return Outcome(st, it + 1, all(ok) and others_ok)
    scale = parts.scales(s, st)
    res = parts.maxima(s, point_norms(parts.on(st.g)))
    return Outcome(st, it + 1, others_ok and all(o or r <= ACCEPT_REL * sc for o, r, sc in zip(ok, res, scale)))
