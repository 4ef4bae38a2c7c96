"""Nonlinear static equilibrium of a rig: elastic tension-only ropes, pulleys, edges, hauls.

Unknowns are the free points' positions; each tied run's tension is condensed out of its
length equation and each hauled run carries its haul force (``shared/design/solver-notes.md``).
Without friction the equilibrium minimises the total potential
Pi = sum_runs U_r(L_r) - F.x, which is convex (Kanno, Ohsaki & Ito, IJNME 2002), so a
Levenberg-Marquardt-shifted Newton method with a step cap and Armijo backtracking on Pi
reaches it from the drawn geometry.  Friction is then added by continuation from that
geometry (merit 1/2 |R|^2), re-evaluating edge wrap angles until they settle.
:func:`solve` never raises for a bad rig: it returns status "invalid", "mechanism" or
"diverged" with a message in a rigger's words.
"""

from __future__ import annotations

import logging
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

from solver import free_directions, friction, pass_order
from solver.blas_threads import solving_on_one_blas_thread
from solver.capacity import utilization as capacity_utilization
from solver.units import format_force_sig, format_length
from solver.assembly import (
    State,
    System,
    Topology,
    compile_topology,
    contact_stiffness,
    directions,
    evaluate,
    part_pattern,
    part_tangent,
    reweighted,
    same_structure,
    tangent_values,
    with_forces,
    with_geometry,
)
from solver.errors import RigModelError
from solver.extreme_specs import unsettled_words
from solver.model import Rig
from solver.result import AnchorResult, HoldRange, Result, SegmentResult, Warning_, record
from solver.run_lengths import with_unstretched
from solver.water import dry_site, in_water, solve_in_water, without_current

log = logging.getLogger(__name__)

#: Largest number of unknowns solved with dense linear algebra.
DENSE_MAX = 400
#: Newton iterations per stage.
MAX_ITER = 200
#: Trial evaluations (line search included) one Newton solve may spend before giving up.
MAX_EVALUATIONS = 1500
#: Target and acceptance of the largest free-point imbalance, relative to the largest force.
TARGET_REL = 1e-10
#: Imbalance at which a cold solve hands the frictionless state on to the friction stage when that
#: state itself is not reported (no load point needs the ideal MA): the friction stage converges
#: from there in as many steps as from the exact frictionless equilibrium.
HANDOVER_REL = 1e-3
ACCEPT_REL = 1e-7
#: A point farther than this many rig sizes from the sketch has run away.
RUNAWAY_SIZES = 100.0
#: Soft start: ropes are first softened so that the largest force of their part stretches them this much ...
SOFT_STRAIN = 0.05
#: ... when their real stretch under that force would be less than this fraction of it (stiff ropes).
SOFT_BELOW = 0.1
#: Smallest tangent eigenvalue, relative to the largest diagonal, that still holds a point.
MECHANISM_REL = 1e-11


@dataclass
class _Outcome:
    state: State
    iterations: int
    converged: bool
    runaway: int | None = None  # free point index (into System points) that ran away


def _point_norms(g: np.ndarray) -> np.ndarray:
    return np.hypot(g[0::2], g[1::2]) if len(g) else np.zeros(0)


def _runaway(s: System, st: State) -> int | None:
    """The free point (index into the System's points) farthest from the drawing when it is more than
    RUNAWAY_SIZES rig sizes away, else None."""
    # the drawing's centre is the solver's origin: no subtraction unless it moved
    far = _point_norms(st.x - np.tile(s.centre, s.n_dof // 2)) if np.any(s.centre) else _point_norms(st.x)
    if far.max() > RUNAWAY_SIZES * s.size:
        return int(s.free_at[np.argmax(far)])
    return None


def _max_norm(g: np.ndarray) -> float:
    """Largest per-point force imbalance, N (0 when nothing is free)."""
    return float(_point_norms(g).max()) if len(g) else 0.0


def _force_scale(s: System, st: State) -> float:
    t = float(np.max(np.abs(st.N))) if len(st.N) else 0.0
    return max(s.force_scale, t)


def _matrix(s: System, st: State, kc: np.ndarray, dense: bool, exact: bool = False, part: int | None = None):
    """The tangent on the free dofs: a dense array for small rigs, else CSC (kept on the state: never written to).

    ``part``: only its rows and columns (:func:`_sub` of the whole), the dense block built from the part's
    own pieces (:func:`solver.assembly.part_tangent`, the same numbers).
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
        K = _sub(_matrix(s, st, kc, dense, exact), part_pattern(s, part).dofs, dense)
    st.matrices[key] = K
    return K


def _assembled(s: System, st: State, kc: np.ndarray, dense: bool, exact: bool):
    val = tangent_values(s, st, kc, exact)
    n = s.n_dof
    if dense:
        return np.bincount(s.dense_lin, val, minlength=n * n).reshape(n, n)
    data = np.bincount(s.csc_map, val, minlength=len(s.csc_indices))
    return scipy.sparse.csc_matrix((data, s.csc_indices, s.csc_indptr), shape=(n, n))


_POTRF, _POTRS, _GETRF, _GETRS = scipy.linalg.get_lapack_funcs(("potrf", "potrs", "getrf", "getrs"),
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
                c, info = _POTRF(M, lower=False, overwrite_a=True, clean=False)
                if info != 0:
                    return None
                return lambda rhs: _lapack_solved(*_POTRS(c, rhs, lower=False))
            lu, piv, info = _GETRF(M, overwrite_a=True)
            # info > 0: a pivot is exactly zero; a non-finite factor shows as a non-finite solution,
            # which _shifted_solve refuses
            if info != 0:
                return None
            return lambda rhs: _lapack_solved(*_GETRS(lu, piv, rhs, trans=0))
        M = (K + scipy.sparse.diags(np.broadcast_to(lam, (n,)), format="csc")).tocsc()
        if symmetric:  # SPD after the shift: diagonal pivots, symmetric ordering
            lu = scipy.sparse.linalg.splu(M, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                          options={"SymmetricMode": True})
        else:
            lu = scipy.sparse.linalg.splu(M, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.1)
        return lu.solve
    except (np.linalg.LinAlgError, scipy.linalg.LinAlgError, RuntimeError, ValueError):
        return None


def _shifted_solve(K, lam: np.ndarray | float, rhs: np.ndarray, dense: bool, symmetric: bool):
    """(d, solver) with (K + diag(lam)) d = rhs, or (None, None) when the shift must rise."""
    solver = _shifted_factor(K, lam, dense, symmetric)
    if solver is None:
        return None, None
    try:
        d = solver(rhs)
    except (np.linalg.LinAlgError, scipy.linalg.LinAlgError, RuntimeError, ValueError):
        return None, None
    return (d, solver) if np.isfinite(d).all() else (None, None)


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


def _newton(s: System, x0: np.ndarray, w: np.ndarray | None, kc: np.ndarray, symmetric: bool,
            max_iter: int = MAX_ITER, target: float = TARGET_REL, state: State | None = None) -> _Outcome:
    """Damped, shifted Newton iteration for g(x) = 0 at fixed piece weights ``w``, to imbalance ``target`` x force scale.

    Every independent part of the rig (``System.n_comp``) keeps its own Levenberg-Marquardt
    shift, step cap, line-search step and convergence test: the merit (the potential Pi
    without friction, 1/2 |g|^2 with it) is a sum over parts, so a per-part Armijo test is
    exactly the test of that part alone.  A part is solved by the same numbers whether it is
    drawn alone or beside others, and the iteration count is that of the slowest part.
    ``state``: the state at ``x0`` with these weights when already evaluated.
    """
    dense = s.n_dof <= DENSE_MAX
    pass_order.start(s, x0)  # passes keep the order they have here (one-sided spacing contact)
    st = state if state is not None and not state.closed else evaluate(s, x0, w, kc)
    if s.n_dof == 0:
        return _Outcome(st, 0, True)
    if s.n_comp == 1:
        return _newton_one_part(s, st, w, kc, symmetric, max_iter, target)
    C = s.n_comp
    cd = s.dof_comp
    cp = cd[0::2]
    size = s.comp_size

    def merit(state: State) -> np.ndarray:
        if symmetric:
            return state.comp_energy
        return 0.5 * np.bincount(cd, state.g * state.g, minlength=C)

    cap = 0.1 * size
    mu = np.full(C, 1e-10)
    active = np.ones(C, dtype=bool)  # parts still iterating
    ok = np.zeros(C, dtype=bool)  # parts that stopped converged
    stall = np.zeros(C, dtype=np.intp)  # iterations without the imbalance halving
    best = np.full(C, np.inf)
    debug = log.isEnabledFor(logging.DEBUG)
    evaluations = 0
    it = 0
    for it in range(max_iter):
        if evaluations > MAX_EVALUATIONS:
            break
        scale = _comp_scale(s, st)
        pn = _point_norms(st.g)
        res = _comp_max(s, pn)
        done = active & ((res <= target * scale) | ((scale == 0.0) & (res == 0.0)))
        # at the round-off floor: no progress for several iterations but within the acceptance
        improved = res < 0.5 * best
        best_before, stall_before = best, stall
        best = np.where(improved, res, best)
        stall = np.where(improved, 0, stall + 1)
        done |= active & (stall >= 4) & (res <= ACCEPT_REL * scale)
        ok |= done
        active &= ~done
        left = np.flatnonzero(active)
        if len(left) == 0:
            return _Outcome(st, it, bool(ok.all()))
        if len(left) == 1:  # one part still iterating (a drag step moves one): the plain-number loop, from here
            c = int(left[0])
            others_ok = bool(np.delete(ok, c).all())
            carry = _Carry(it, float(mu[c]), float(cap[c]), int(stall_before[c]), float(best_before[c]), evaluations)
            out = _newton_one_part(s, st, w, kc, symmetric, max_iter, target, part=c, carry=carry)
            out.converged = out.converged and others_ok
            return out
        K = _matrix(s, st, kc, dense, exact=not symmetric)
        diag = K.diagonal()
        base = _comp_max(s, np.maximum(diag[0::2], diag[1::2]))
        base = np.maximum(np.maximum(base, scale / size), 1e-12)
        m0 = merit(st)
        x_new = st.x.copy()
        pending = active.copy()
        alpha = np.ones(C)
        capped = np.zeros(C, dtype=bool)
        trial = None
        for _attempt in range(8):
            if not pending.any():
                break
            idx = (pending[cd]).nonzero()[0]
            every = len(idx) == s.n_dof
            Ks = K if every else _sub(K, idx, dense)
            lam = (mu * base)[cd[idx]]
            d_sub, solver = _shifted_solve(Ks, lam, -st.g[idx], dense, symmetric)
            if d_sub is None:
                mu[pending] *= 100.0
                continue
            d = np.zeros(s.n_dof)
            d[idx] = d_sub
            step = _comp_max(s, _point_norms(d))
            shrink = np.where(pending & (step > cap), cap / np.maximum(step, 1e-300), 1.0)
            capped = np.where(pending, step > cap, capped)
            if not symmetric:
                # the full Newton correction, for the natural monotonicity test below
                nat0 = np.sqrt(np.bincount(cd[idx], d_sub * d_sub, minlength=C))
            d *= shrink[cd]
            if symmetric:
                slope = np.bincount(cd, st.g * d, minlength=C)
            else:
                Kd = np.zeros(s.n_dof)
                Kd[idx] = Ks @ d[idx]
                slope = np.bincount(cd, st.g * Kd, minlength=C)
                # slope of 1/2 |K^-1 g|^2 along d (K with its shift: the level function's own matrix)
                nat_dir = np.zeros(s.n_dof)
                nat_dir[idx] = solver(Kd[idx])
                nat_slope = np.bincount(cd[idx], d_sub * nat_dir[idx], minlength=C)
            # uphill for the residual merit and (unsymmetric) for the natural level function too
            uphill = pending & (slope >= 0.0)
            if not symmetric:
                uphill &= nat_slope >= 0.0
                slope = np.minimum(slope, 0.0)  # Armijo on |g|^2 only where it is a descent direction
            mu[uphill] *= 100.0
            trying = pending & ~uphill
            a = np.where(trying, 1.0, 0.0)
            for _ls in range(30):
                if not trying.any():
                    break
                evaluations += 1
                xt = x_new.copy()
                tdofs = trying[cd]
                xt[tdofs] = st.x[tdofs] + (a[cd] * d)[tdofs]
                trial = evaluate(s, xt, w, kc)
                m1 = merit(trial)
                good = trying & (m1 <= m0 + 1e-4 * a * slope)
                if not symmetric:
                    # natural monotonicity test (Deuflhard, Newton Methods for Nonlinear Problems,
                    # 2004, sec. 3.3): the Newton correction from the trial point, with this
                    # iteration's matrix, must shrink.  Affine invariant, so a stiff rope's tiny
                    # overstretch along a curved path does not veto the step as |g|^2 would.
                    nat1 = np.sqrt(np.bincount(cd[idx], solver(-trial.g[idx]) ** 2, minlength=C))
                    good |= trying & (nat1 <= (1.0 - 1e-4 * a * shrink) * nat0)
                # round-off: merit flat to machine precision but the imbalance still shrinks
                flat = trying & (np.abs(m1 - m0) <= 1e-13 * (np.abs(m0) + scale * size))
                if flat.any():
                    good |= flat & (_comp_max(s, _point_norms(trial.g)) < 0.9 * res)
                good &= ~pass_order.crossed(s, trial)  # never carry a pass across its neighbour
                if good.any():
                    gd = good[cd]
                    x_new[gd] = xt[gd]
                    alpha[good] = a[good]
                    pending &= ~good
                    trying &= ~good
                a = np.where(trying, 0.5 * a, a)
            mu[trying] *= 100.0  # line search failed: more damping
        for c in np.flatnonzero(pending):  # no step found: stop this part where it is
            ok[c] = res[c] <= ACCEPT_REL * scale[c]
            active[c] = False
        if trial is None or not np.array_equal(trial.x, x_new):
            evaluations += 1
            trial = evaluate(s, x_new, w, kc)
        if debug:
            log.debug("it %d res %s mu %s alpha %s cap %s capped %s", it, res, mu, alpha, cap, capped)
        stepped = active & (alpha == 1.0)
        mu[stepped] = np.maximum(mu[stepped] / 10.0, 1e-10)
        cap = np.where(stepped & capped, 2.0 * cap, cap)
        st = trial if not pass_order.follow(s, trial) else evaluate(s, trial.x, w, kc)
        runaway = _runaway(s, st)
        if runaway is not None:
            return _Outcome(st, it + 1, False, runaway=runaway)
        if not active.any():
            return _Outcome(st, it + 1, bool(ok.all()))
    scale = _comp_scale(s, st)
    res = _comp_max(s, _point_norms(st.g))
    return _Outcome(st, it + 1, bool(np.all(ok | (res <= ACCEPT_REL * scale))))


@dataclass
class _Carry:
    """Where the general loop hands its last iterating part over: iteration, that part's shift, step cap,
    stalled iterations and best imbalance before this iteration's test, and trial evaluations spent."""

    it: int
    mu: float
    cap: float
    stall: int
    best: float
    evaluations: int


def _newton_one_part(s: System, st: State, w: np.ndarray | None, kc: np.ndarray, symmetric: bool,
                     max_iter: int, target: float = TARGET_REL, part: int | None = None,
                     carry: _Carry | None = None) -> _Outcome:
    """:func:`_newton` for one part, from its state ``st``: the whole rig (``part`` None, ``s.n_comp == 1``),
    or part ``part`` of a rig whose other parts have stopped, continuing the general loop from ``carry``.

    The same iteration, test for test and in the same floating-point operations (sums over the
    part's coordinates in the same order), with the per-part arrays held as plain numbers: most
    rigs are one part, a drag step moves one part of a larger rig, and on a small rig the array
    bookkeeping of the general loop costs more than the linear algebra.
    """
    dense = s.n_dof <= DENSE_MAX
    if part is None:
        idx = None
        cd = s.dof_comp
        size = float(s.comp_size[0])
        comp_scale0 = float(s.comp_force_scale[0])
    else:
        pat = part_pattern(s, part)  # kept per topology: a drag step's System has it from the last step
        idx, pieces = pat.dofs, pat.pieces
        cd = np.zeros(len(idx), dtype=np.intp)  # one bin: bincount sums the part's coordinates in order
        size = float(s.comp_size[part])
        comp_scale0 = float(s.comp_force_scale[part])

    def on_part(v: np.ndarray) -> np.ndarray:
        return v if idx is None else v[idx]

    def merit(state: State) -> float:
        if symmetric:
            return state.comp_energy[0 if part is None else part]
        g = on_part(state.g)
        return 0.5 * np.bincount(cd, g * g, minlength=1)[0]

    def nat_norm(v: np.ndarray) -> float:
        return np.sqrt(np.bincount(cd, v * v, minlength=1))[0]

    def scale_of(state: State) -> float:
        N = state.N if idx is None else state.N[pieces]
        return max(comp_scale0, float(np.abs(N).max()) if len(N) else 0.0)

    def imbalance(state: State) -> float:
        return float(_point_norms(on_part(state.g)).max())

    if carry is None:
        carry = _Carry(0, 1e-10, 0.1 * size, 0, np.inf, 0)
        pass_order.start(s, st.x)  # passes keep the order they have here (one-sided spacing contact)
        if st.closed:
            st = evaluate(s, st.x, w, kc)
    cap, mu, stall, best, evaluations = carry.cap, carry.mu, carry.stall, carry.best, carry.evaluations
    ok = False
    debug = log.isEnabledFor(logging.DEBUG)
    it = carry.it
    for it in range(carry.it, max_iter):
        if evaluations > MAX_EVALUATIONS:
            break
        scale = scale_of(st)
        res = imbalance(st)
        done = (res <= target * scale) or (scale == 0.0 and res == 0.0)
        improved = res < 0.5 * best
        if improved:
            best = res
            stall = 0
        else:
            stall += 1
        done = done or (stall >= 4 and res <= ACCEPT_REL * scale)
        if done:
            return _Outcome(st, it, True)
        K = _matrix(s, st, kc, dense, exact=not symmetric, part=part)
        base = max(float(K.diagonal().max()), scale / size, 1e-12)  # = the largest of the x and y maxima
        m0 = merit(st)
        x_new = st.x.copy()
        pending = True
        alpha = 1.0
        capped = False
        trial = None
        g = on_part(st.g)
        x_part = on_part(st.x)
        for _attempt in range(8):
            if not pending:
                break
            d_sub, solver = _shifted_solve(K, mu * base, -g, dense, symmetric)
            if d_sub is None:
                mu *= 100.0
                continue
            step = float(_point_norms(d_sub).max())
            capped = step > cap
            shrink = cap / max(step, 1e-300) if capped else 1.0
            if not symmetric:
                nat0 = nat_norm(d_sub)
            d = d_sub * shrink
            slope = np.bincount(cd, g * d, minlength=1)[0] if symmetric else None
            if symmetric:
                uphill = slope >= 0.0
            else:
                Kd = K @ d
                slope = np.bincount(cd, g * Kd, minlength=1)[0]
                nat_slope = np.bincount(cd, d_sub * solver(Kd), minlength=1)[0]
                uphill = slope >= 0.0 and nat_slope >= 0.0
                slope = min(slope, 0.0)
            if uphill:
                mu *= 100.0
            trying = not uphill
            a = 1.0 if trying else 0.0
            for _ls in range(30):
                if not trying:
                    break
                evaluations += 1
                if idx is None:
                    xt = st.x + a * d
                else:
                    xt = st.x.copy()
                    xt[idx] = x_part + a * d
                trial = evaluate(s, xt, w, kc)
                m1 = merit(trial)
                good = m1 <= m0 + 1e-4 * a * slope
                if not symmetric and not good:
                    good = nat_norm(solver(-on_part(trial.g))) <= (1.0 - 1e-4 * a * shrink) * nat0
                if not good and abs(m1 - m0) <= 1e-13 * (abs(m0) + scale * size):
                    good = imbalance(trial) < 0.9 * res
                if good and trial.closed:  # never carry a pass across its neighbour
                    good = not pass_order.crossed(s, trial)[0 if part is None else part]
                if good:
                    x_new = xt
                    alpha = a
                    pending = False
                    trying = False
                else:
                    a = 0.5 * a
            if trying:
                mu *= 100.0  # line search failed: more damping
        active = True
        if pending:  # no step found: stop where it is
            ok = res <= ACCEPT_REL * scale
            active = False
        if trial is None or (trial.x is not x_new and not np.array_equal(trial.x, x_new)):
            evaluations += 1
            trial = evaluate(s, x_new, w, kc)
        if debug:
            log.debug("it %d res %s mu %s alpha %s cap %s capped %s", it, res, mu, alpha, cap, capped)
        if active and alpha == 1.0:
            mu = max(mu / 10.0, 1e-10)
            if capped:
                cap = 2.0 * cap
        st = trial if not pass_order.follow(s, trial) else evaluate(s, trial.x, w, kc)
        runaway = _runaway(s, st)
        if runaway is not None:
            return _Outcome(st, it + 1, False, runaway=runaway)
        if not active:
            return _Outcome(st, it + 1, ok)
    scale = scale_of(st)
    res = imbalance(st)
    return _Outcome(st, it + 1, bool(ok or res <= ACCEPT_REL * scale))


# --- words -----------------------------------------------------------------------------------------

def _heading_words(vx: float, vy: float, elevation: bool) -> str:
    ang = math.degrees(math.atan2(vy, vx)) % 360.0
    if elevation:
        names = ["to the right", "up and right", "up", "up and left", "to the left", "down and left", "down",
                 "down and right"]
    else:
        names = ["east", "northeast", "north", "northwest", "west", "southwest", "south", "southeast"]
    return names[int(((ang + 22.5) % 360.0) // 45.0)]


def _point_name(rig: Rig, pid: str) -> str:
    p = rig.point(pid)
    return f'"{p.id}"' if not p.label else f'"{p.id}" ({p.label})'


# --- checks ----------------------------------------------------------------------------------------

def _mechanism(s: System, st: State, kc: np.ndarray) -> tuple[int, np.ndarray] | None:
    """(free point index, its x and y in each zero-stiffness mode of the symmetric tangent), or None."""
    if s.n_dof == 0:
        return None
    dense = s.n_dof <= DENSE_MAX
    K = _matrix(s, st, kc, dense)
    diag = np.asarray(K.diagonal())
    top = max(float(diag.max()), _force_scale(s, st) / s.size, 1e-12)
    if dense:
        Ks = 0.5 * (K + K.T)
        # Ks - threshold I positive definite (its Cholesky factor exists) means every eigenvalue is
        # above the threshold: held, at a fraction of the cost of the eigenvalues
        M = Ks.copy()
        M.ravel()[::len(M) + 1] -= MECHANISM_REL * top
        if _POTRF(M, lower=False, overwrite_a=True, clean=False)[1] == 0:
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
        try:
            lu = scipy.sparse.linalg.splu((Ks + shift * scipy.sparse.identity(n, format="csc")).tocsc(),
                                          permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                          options={"SymmetricMode": True})
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


# --- the solver --------------------------------------------------------------------------------------

def _start_x(s: System, start) -> np.ndarray:
    """The free coordinates to start from: ``start``'s position (site metres) of each free point it gives
    with finite coordinates, else the drawn one."""
    xy = s.xy0.copy()
    if start:
        given = [start.get(pid) for pid in s.free_ids]
        at = s.free_at
        if None in given:  # a warm drag step gives every free point (the dragged one is drawn where it is fixed)
            at = np.array([i for i, v in zip(at.tolist(), given) if v is not None], dtype=np.intp)
            given = [v for v in given if v is not None]
        if len(at):
            # (x, y) pairs as an x and a y column (one sequence per point would be looked at point by point)
            vals = np.array([[v[0] for v in given], [v[1] for v in given]], dtype=float).T
            ok = np.isfinite(vals).all(axis=1)
            xy[at[ok]] = vals[ok] - s.origin
    return s.x_from(xy)


@dataclass
class _Solved:
    state: State
    ideal: State | None  # the frictionless reference (None: not wanted)
    iterations: int
    converged: bool
    runaway: int | None
    w: np.ndarray


def _friction_solve(s: System, x0: np.ndarray, motion: str, kc: np.ndarray,
                    start: State | None = None) -> tuple[_Outcome, np.ndarray]:
    """Equilibrium with the pass friction of ``motion``, from ``x0``; edge wraps re-evaluated until settled.

    ``start``: the frictionless state at ``x0`` when already evaluated (a warm drag step has none:
    the first weights need only the piece directions, and the state is evaluated only if jams are
    looked for).  Every pass first runs with the ratio of ``motion`` (rig-format.md).  When that
    finds no equilibrium and passes are two-blocked (at the start or where the iteration stopped),
    it is solved again with those passes jammed (static ratio 1, see friction.jammed_passes):
    a pulley hauled into a knot would otherwise need the spacing contact to pull.
    """
    u0 = start.u if start is not None else directions(s, x0)
    fr, w = _friction_stage(s, x0, u0, motion, kc, None)
    if fr.converged or fr.runaway is not None:
        return fr, w
    if start is None:
        start = evaluate(s, x0, None, kc)
    jam = friction.jammed_passes(s, start.pen) | friction.jammed_passes(s, fr.state.pen)
    if not jam.any():
        return fr, w
    again, w2 = _friction_stage(s, x0, u0, motion, kc, jam)
    again.iterations += fr.iterations
    if again.runaway is not None:
        return again, w2
    # a pass given ratio 1 that slid off its neighbour again is not jammed: not this model's answer
    st = again.state
    return (again, w2) if again.converged and friction.ratios_hold(s, st.u, st.w, st.pen, motion) else (fr, w)


def _friction_stage(s: System, x0: np.ndarray, u0: np.ndarray, motion: str, kc: np.ndarray,
                    jam: np.ndarray | None) -> tuple[_Outcome, np.ndarray]:
    """One friction solve from ``x0`` (piece directions ``u0`` there) with the passes ``jam`` (None: none) jammed."""
    iters = 0
    x = x0
    # passes jammed stay jammed and new two-blocked ones join (when jamming at all): the set
    # only grows, so the outer loop cannot cycle between a running and a jammed pass
    w = friction.weights(s, u0, motion, jam)
    for _outer in range(40):
        fr = _newton(s, x, w, kc, symmetric=False)
        if not fr.converged and fr.runaway is None:
            fr = _soft_retry(s, x, w, kc, fr)
        iters += fr.iterations
        st = fr.state
        x = st.x
        if fr.runaway is not None or not fr.converged:
            return _Outcome(st, iters, False, fr.runaway), w
        if jam is not None:
            jam = jam | friction.jammed_passes(s, st.pen)
        elif not s.has_edges:  # pulley ratios do not depend on the geometry: these weights are final
            return _Outcome(st, iters, _max_norm(st.g) <= ACCEPT_REL * _force_scale(s, st)), w
        w_new = friction.weights(s, st.u, motion, jam)
        if np.max(np.abs(w_new / w - 1.0), initial=0.0) <= 1e-12:
            if s.has_edges:
                st = evaluate(s, st.x, w_new, kc)
                w = w_new
            return _Outcome(st, iters, _max_norm(st.g) <= ACCEPT_REL * _force_scale(s, st)), w
        w = w_new
    return _Outcome(st, iters, False), w


def _soft_retry(s: System, x0: np.ndarray, w: np.ndarray, kc: np.ndarray, failed: _Outcome) -> _Outcome:
    """A failed friction solve tried again through softened ropes (see _soft_factors); ``failed`` if no better.

    A pass that friction draws a long way along its rope (a pulley climbing to the next
    anchor) follows a curved path; on stiff ropes the straight Newton chords overstretch them
    and the iteration stalls, as in the frictionless soft start.
    """
    kappa = _soft_factors(s)
    if kappa is None:
        return failed
    s.soft = kappa
    try:
        pre = _newton(s, x0, w, kc, symmetric=False, max_iter=60)
    finally:
        s.soft = None
    if pre.runaway is not None:
        return failed
    out = _newton(s, pre.state.x, w, kc, symmetric=False)
    out.iterations += pre.iterations + failed.iterations
    if out.converged or out.runaway is not None:
        return out
    return failed


def _soft_factors(s: System) -> np.ndarray | None:
    """Per run: the softening kappa that lets its part's largest force stretch it by SOFT_STRAIN, or None.

    None when every rope is soft enough already.  Straight Newton steps cannot follow the arc a
    point swings through on a stiff rope (each chord overstretches it), so a cold solve of a
    stiff rig first finds the equilibrium of the same rig with softened ropes, where the swing
    takes a few long steps, and then stiffens to the real ropes from there.
    """
    if s.n_runs == 0 or s.n_comp == 0:
        return None
    force = np.where(s.run_comp >= 0, s.comp_force_scale[np.maximum(s.run_comp, 0)], 0.0)
    t_soft = np.array([float(c.tension(SOFT_STRAIN)) for c in s.curves])[s.run_mat]
    kappa = np.clip(force / t_soft, 1e-12, 1.0)
    tied = ~s.run_hauled & (s.run_comp >= 0) & (force > 0)
    if not np.any(tied & (kappa < SOFT_BELOW)):
        return None
    return np.where(tied, kappa, 1.0)


def _soft_start_newton(s: System, x0: np.ndarray, kc: np.ndarray, target: float = TARGET_REL) -> _Outcome:
    """Frictionless Newton solve from the drawn geometry (to imbalance ``target`` x force scale), through a
    softened-rope solve for stiff rigs."""
    kappa = _soft_factors(s)
    if kappa is None:
        return _newton(s, x0, None, kc, symmetric=True, target=target)
    s.soft = kappa
    try:
        pre = _newton(s, x0, None, kc, symmetric=True, max_iter=60)
    finally:
        s.soft = None
    start = pre.state.x if pre.runaway is None else x0
    out = _newton(s, start, None, kc, symmetric=True, target=target)
    out.iterations += pre.iterations
    return out


#: A failed solve (a pass jammed against its neighbour, or trial steps overshooting into it) is tried
#: again with the spacing contact this many times softer, stiffened a decade at a time from each
#: answer to the next (penalty continuation; Wriggers, Computational Contact Mechanics, 2nd ed.
#: 2006, penalty method, from memory): the full contact is far stiffer than the ropes, and Newton
#: zig-zags across it from afar.
CONTACT_STEPS = (1e-4, 1e-3, 1e-2, 1e-1)


def _jam_settled(s: System, x0: np.ndarray, kc: np.ndarray, failed: _Outcome,
                 solve_at: Callable[[np.ndarray, np.ndarray], _Outcome]) -> _Outcome:
    """``failed`` (a solve from ``x0`` that did not converge and did not run away) again through a softer
    spacing contact; ``solve_at(x, kc)`` solves from ``x`` with contact stiffness ``kc``.  The last
    step is the full contact; ``failed`` stands when that does not converge."""
    if failed.converged or failed.runaway is not None or not s.contact_on.any():
        return failed
    x, iters = x0, 0
    for factor in CONTACT_STEPS:
        step = solve_at(x, kc * factor)
        iters += step.iterations
        if step.runaway is not None:
            return failed
        x = step.state.x
    out = solve_at(x, kc)
    out.iterations += iters
    return out if out.converged else failed


def _friction_settled(s: System, x0: np.ndarray, motion: str, kc: np.ndarray, fr: _Outcome,
                      w: np.ndarray) -> tuple[_Outcome, np.ndarray]:
    """:func:`_friction_solve`'s answer ``(fr, w)`` from ``x0``, or, when that failed, the friction solve
    again through a softer contact (:func:`_jam_settled`) when that converges."""
    last_w = [w]

    def solve_at(x: np.ndarray, k: np.ndarray) -> _Outcome:
        out, last_w[0] = _friction_solve(s, x, motion, k)
        return out

    out = _jam_settled(s, x0, kc, fr, solve_at)
    if out is fr:
        out = _slid_to_its_stop(s, motion, kc, fr, solve_at)
    return (fr, w) if out is fr else (out, last_w[0])


#: Passes :func:`_slid_to_its_stop` tries, the most out of balance first (each try costs a contact-continuation
#: solve; only rigs that failed pay).
SLIDE_TRIES = 2


def _slid_to_its_stop(s: System, motion: str, kc: np.ndarray, failed: _Outcome,
                      solve_at: Callable[[np.ndarray, np.ndarray], _Outcome]) -> _Outcome:
    """``failed`` (a friction solve that did not converge) tried again from where it stopped with a pass placed
    against the neighbour its friction pulls it toward; the answer when that converges, else ``failed``.

    A pulley or edge whose friction outweighs what holds it is drawn along its rope toward the next
    pass (a pulley climbing its rope to the anchor knot): on the way the imbalance along the rope
    stays about as large as the friction, and Newton stalls wherever the iteration left it.  The
    equilibrium is at the far end, jammed, or on the way back from there, so the solve starts at the
    stop (:func:`friction.pulled_passes`, :func:`friction.placed_against`) through the softened
    contact (:func:`_jam_settled`).  ``solve_at(x, kc)`` is the friction solve from ``x``.
    """
    if failed.runaway is not None:
        return failed
    st = failed.state
    for p, piece in friction.pulled_passes(s, st.T, st.g, motion)[:SLIDE_TRIES]:
        x = friction.placed_against(s, st.x, p, piece)
        if x is None:
            continue
        out = _jam_settled(s, x, kc, failed, solve_at)
        if out is not failed:
            out.iterations += failed.iterations
            return out
    return failed


def _mechanism_result(s: System, st: State, kc: np.ndarray, iters: int) -> Result | None:
    mech = _mechanism(s, st, kc)
    if mech is None:
        return None
    i, share = mech
    pid = s.point_ids[i]
    words = free_directions.free_words(share, s.rig.view == "elevation")
    return Result(status="mechanism", subject=pid, iterations=iters, points=_all_points(s, st),
                  message=f"point {_point_name(s.rig, pid)} is not held: it {words} "
                          "with nothing resisting (tie it off, tension its ropes or add a load)")


def _solve_system(s: System, x0: np.ndarray, motion: str, warm: bool = False,
                  ideal: bool = True) -> _Solved | Result:
    """Equilibrium of ``s`` from ``x0``; a failed Result (mechanism) or the solved states.

    Cold: frictionless first (convex, robust from the drawn geometry), mechanism check, then
    friction by continuation.  Warm (``x0`` is a nearby solution): friction straight away, and
    the frictionless reference for the ideal MA from there (its iterations are not counted).
    ``ideal`` False: no frictionless reference is wanted (the solved ``ideal`` state is None
    when friction acts).
    """
    s.__dict__.pop("_last_tau", None)  # run tensions of an earlier solve are no start for this one
    kc = contact_stiffness(s)
    lonely = s.unattached
    if lonely is not None:
        pid = s.point_ids[lonely]
        return Result(status="mechanism", subject=pid,
                      message=f"point {_point_name(s.rig, pid)} is not held: no rope is attached to it")
    frictional = motion != "hold" and s.has_friction
    if warm and frictional:
        fr, w = _friction_settled(s, x0, motion, kc, *_friction_solve(s, x0, motion, kc))
        if fr.runaway is not None or not fr.converged:
            return _Solved(fr.state, fr.state, fr.iterations, False, fr.runaway, w)
        # held or not is a property of the structure: judged on the frictionless (symmetric) tangent,
        # which is also the first matrix of the frictionless re-solve for the ideal MA
        frictionless = reweighted(s, fr.state, None, kc)  # = evaluate(s, fr.state.x, None, kc)
        failed = _mechanism_result(s, frictionless, kc, fr.iterations)
        if failed is not None:
            return failed
        if not ideal:
            return _Solved(fr.state, None, fr.iterations, True, None, w)
        ref = _newton(s, fr.state.x, None, kc, symmetric=True, state=frictionless)
        return _Solved(fr.state, ref.state if ref.converged else fr.state, fr.iterations, True, None, w)
    # the frictionless state is reported only without friction or as the ideal of a load's MA;
    # otherwise it is just where the friction stage starts, and needs no last digits
    handover = frictional and not (ideal and s.load_at)
    target = HANDOVER_REL if handover else TARGET_REL
    out = _soft_start_newton(s, x0, kc, target)
    out = _jam_settled(s, x0, kc, out, lambda x, k: _soft_start_newton(s, x, k, target))
    if out.runaway is not None or not out.converged:
        return _Solved(out.state, out.state, out.iterations, False, out.runaway, out.state.w)
    failed = _mechanism_result(s, out.state, kc, out.iterations)
    if failed is not None:
        return failed
    if not frictional:
        return _Solved(out.state, out.state, out.iterations, True, None, out.state.w)
    fr, w = _friction_settled(s, out.state.x, motion, kc, *_friction_solve(s, out.state.x, motion, kc, out.state))
    return _Solved(fr.state, out.state if ideal else None, out.iterations + fr.iterations, fr.converged, fr.runaway, w)


#: Fewer rows than this are made afresh every time rather than kept: for a handful of records the
#: comparison costs more than the records (~12 us a memo against ~2 us for a 3-point rig's, measured on
#: the 500-step vector-pull sweep, where a kept record is never reused).
MIN_ROWS = 8


class _LastRows:
    """What the last Result of one structure made from each row of an array (records, tuples, numbers).

    A drag step re-solves the whole rig but moves only the dragged part: a row whose bit pattern
    is unchanged (-0.0 and 0.0 differ, as they print) keeps the last Result's object, so only the
    moved part's objects are made again, and the overlay can recognise the rest by identity.
    """

    def __init__(self) -> None:
        self._last: tuple | None = None

    def changed(self, key: tuple, rows: np.ndarray) -> tuple[list | None, np.ndarray | None]:
        """(the last values, per row whether its bits changed) when ``key`` is the last call's -- objects the
        same, numbers equal -- and the rows line up; else (None, None): make every value afresh."""
        last = self._last
        if last is None or last[1].shape != rows.shape or len(last[0]) != len(key) or not all(
                a is b or (isinstance(a, (int, float, tuple)) and a == b) for a, b in zip(last[0], key)):
            return None, None
        return last[2], (np.ascontiguousarray(rows).view(np.int64) != last[1]).any(axis=1)

    def keep(self, key: tuple, rows: np.ndarray, values: list) -> None:
        """Remember ``values`` made from ``rows`` (float, one row per value's inputs) under ``key``; fewer than
        MIN_ROWS rows are not kept (see there)."""
        self._last = (key, np.ascontiguousarray(rows).view(np.int64).copy(), values) if len(rows) >= MIN_ROWS else None

    def forget(self) -> None:
        self._last = None


_POINT_ROWS = _LastRows()  # position tuples per structural point
_SEGMENT_ROWS = _LastRows()  # SegmentResult per piece
_ANCHOR_ROWS = _LastRows()  # AnchorResult per fixed anchor
_LOAD_ROWS = _LastRows()  # AnchorResult (force delivered) per load point
_TURN_ROWS = _LastRows()  # turn per middle pass, kept by the directions of every piece


def _all_points(s: System, st: State) -> dict[str, tuple[float, float]]:
    """Every point's solved position (site metres); a point at the bit for bit same place as in the last
    Result of the same structure keeps that Result's tuple (a drag step moves the dragged part only)."""
    ox, oy = float(s.origin[0]), float(s.origin[1])
    xy = np.ascontiguousarray(st.xy)
    key = (s.point_ids, (ox, oy))
    old, moved = _POINT_ROWS.changed(key, xy)
    if old is None:
        xys = [(x + ox, y + oy) for x, y in xy.tolist()]
    else:
        xys = list(old)
        changed = np.flatnonzero(moved).tolist()
        for i, (x, y) in zip(changed, xy[changed].tolist()):
            xys[i] = (x + ox, y + oy)
    _POINT_ROWS.keep(key, xy, xys)
    pos = dict(zip(s.point_ids, xys))
    if len(pos) == len(s.rig.points):  # every point is structural: already in the rig's order
        return pos
    return {p.id: pos.get(p.id, (p.x, p.y)) for p in s.rig.points}


def _resultants(s: System, st: State) -> np.ndarray:
    """Force the ropes exert on every structural point (n_points, 2), N."""
    n = len(s.point_ids)
    if not s.n_pieces:
        return np.zeros((n, 2))
    pull = st.N[:, None] * st.u  # rope pulls a toward b and b toward a
    # every a end, then every b end, each added in piece order (the sums np.add.at would make)
    both = np.concatenate((pull, -pull))
    f = np.empty((n, 2))
    f[:, 0] = np.bincount(s.piece_ends, both[:, 0], minlength=n)
    f[:, 1] = np.bincount(s.piece_ends, both[:, 1], minlength=n)
    return f


def _anchor(fx: float, fy: float, capacity: float | None, sf: float, kind: str = "strength") -> AnchorResult:
    mag = math.hypot(fx, fy)
    util = capacity_utilization(mag, capacity, kind, sf)
    return record(AnchorResult, force_N=mag,
                  direction_deg=math.degrees(math.atan2(fy, fx)) % 360.0 if mag > 0 else 0.0,
                  capacity_N=capacity, utilization=util, fx_N=fx, fy_N=fy, capacity_kind=kind)


def _mech_advantage(s: System, st: State, f: np.ndarray | None = None) -> float | None:
    """Force delivered to the load points over the input (haul forces, else external pulls).

    ``f``: the rope forces on the points at ``st`` (:func:`_resultants`) when already known.
    """
    rig = s.rig
    load_ids = s.load_at
    if not load_ids:
        return None
    if f is None:
        f = _resultants(s, st)
    delivered = float(sum(math.hypot(fx, fy) for fx, fy in f[load_ids].tolist()))
    hauled = s.run_hauled
    inp = float(s.run_P[hauled].sum()) if hauled.any() else float(sum(abs(fc.magnitude_N) for fc in rig.forces))
    return delivered / inp if inp > 0 else None


def _blocked_pair(s: System, k: int) -> tuple[str, str]:
    """(the pass that ran in, the point it ran into) of piece ``k`` closed up to its minimum spacing."""
    pa, pb = s.point_ids[s.a[k]], s.point_ids[s.b[k]]
    return (pb, pa) if s.free[s.b[k]] else (pa, pb)


#: A pass within this fraction of its minimum spacing from its neighbour counts as jammed there.
JAM_MARGIN = 0.01


def _jammed_piece(s: System, st: State) -> int | None:
    """The piece between two passes closest to (or deepest into) their minimum spacing, when a pass is
    jammed or within JAM_MARGIN of it; else None."""
    if not s.n_pieces or not s.contact_on.any():
        return None
    ratio = np.where(s.contact_on, st.l / s.s_min, np.inf)
    k = int(np.argmin(ratio))
    return k if ratio[k] <= 1.0 + JAM_MARGIN else None


def _two_blocked(s: System, st: State, kc: np.ndarray) -> list[Warning_]:
    """A warning for each pair of passes pressed together at their minimum spacing (out of throw)."""
    out: list[Warning_] = []
    seen: set[str] = set()
    for k in np.flatnonzero(st.pen > 0):
        subject, other = _blocked_pair(s, int(k))
        if subject in seen:
            continue
        seen.add(subject)
        push = float(kc[k] * st.pen[k])
        shown = s.rig.display  # every message in the user's units
        out.append(Warning_(
            code="two-blocked", subject=subject, severity="danger",
            message=f'on rope "{s.piece_rope[k]}" the pass at "{subject}" has run into '
                    f'"{other}" ({format_length(float(s.s_min[k]), shown.length)} apart): the system is '
                    f"two-blocked (out of throw) and the hardware bears {'' if push >= 0.5 else 'under '}"
                    f"{format_force_sig(push if push >= 0.5 else 1.0, shown.force, 2 if push >= 0.5 else 1)} "
                    "against each other that no rope carries; hauling further only loads the hardware — reset it"))
    return out


def _segment_records(s: System, st: State, sf: float) -> list[SegmentResult]:
    """A SegmentResult per piece; a piece whose tension, length and strain are bit for bit those of the
    last Result of the same structure (and the same safety factor and MBS) keeps that Result's record."""
    rows = np.empty((s.n_pieces, 3))  # the columns T, l, eps (np.stack's bookkeeping costs more than the copy)
    rows[:, 0], rows[:, 1], rows[:, 2] = st.T, st.l, st.eps
    key = (s.piece_rope, sf, s.piece_mbs)
    old, moved = _SEGMENT_ROWS.changed(key, rows)
    if old is None:
        changed: range | list[int] = range(s.n_pieces)
        segments = [None] * s.n_pieces
        T, length, eps, mbs, index = st.T, st.l, st.eps, s.piece_mbs, s.piece_index
    else:
        changed = np.flatnonzero(moved).tolist()
        segments = list(old)
        idx = np.asarray(changed, dtype=np.intp)
        T, length, eps, mbs, index = st.T[idx], st.l[idx], st.eps[idx], s.piece_mbs[idx], s.piece_index[idx]
    if len(changed):
        util = (T * sf / mbs).tolist()  # whole arrays to Python numbers at once (= float())
        for i, k, t, ln, e, u in zip(changed, index.tolist(), T.tolist(), length.tolist(), eps.tolist(), util):
            segments[i] = record(SegmentResult, rope=s.piece_rope[i], index=k,
                                 from_point=s.piece_from[i], to_point=s.piece_to[i], tension_N=t, length_m=ln,
                                 strain=e, utilization=u, run=s.piece_run_in_rope[i])
    _SEGMENT_ROWS.keep(key, rows, segments)
    return segments


def _point_records(s: System, at: list, memo: _LastRows, f: np.ndarray, f_list: list, sf: float,
                   rated: bool) -> dict[str, AnchorResult]:
    """An AnchorResult of the rope force on each structural point ``at`` (with the point's capacity when
    ``rated``); one whose force is bit for bit that of the last Result of the same structure, with the
    same capacity and safety factor, keeps that Result's record (``memo``)."""
    if not at:
        return {}
    points = s.points
    rows = f[at]
    key = (at, sf)
    old, moved = memo.changed(key, rows)
    caps = [points[i].capacity_N for i in at] if rated else [None] * len(at)
    kinds = [points[i].capacity_kind for i in at] if rated else ["strength"] * len(at)
    if old is None:
        made = [None] * len(at)
        redo = range(len(at))
    else:  # only the points whose force or capacity changed
        made = list(old)
        redo = [j for j, (m, a, c, k) in enumerate(zip(moved.tolist(), old, caps, kinds))
                if m or a.capacity_N != c or a.capacity_kind != k]
    for j in redo:
        made[j] = _anchor(*f_list[at[j]], caps[j], sf, kinds[j])
    memo.keep(key, rows, made)
    ids = s.point_ids
    return {ids[i]: a for i, a in zip(at, made)}


#: (hauled runs, their haul points, haul forces, the haul dict) of the last Result: a drag step's rig hauls
#: with the same forces, so the same dict (and float objects) is handed on.
_LAST_HAUL: list = [None]


def _haul_forces(s: System) -> dict[str, float]:
    """The haul force at each haul point, N (the sum of the runs hauled there)."""
    last = _LAST_HAUL[0]
    if (last is not None and last[0] is s.run_hauled and last[1] is s.run_haul_point
            and (last[2] is s.run_P or np.array_equal(last[2], s.run_P))):
        return last[3]
    haul: dict[str, float] = {}
    for hauled, hp, P in zip(s.run_hauled.tolist(), s.run_haul_point, s.run_P.tolist()):
        if hauled:
            haul[hp] = haul.get(hp, 0.0) + P
    # a compiled topology's arrays are read-only (shared by every System of it): kept as they are
    _LAST_HAUL[0] = (s.run_hauled, s.run_haul_point, s.run_P if not s.run_P.flags.writeable else s.run_P.copy(),
                     haul)
    return haul


def _deflections(s: System, st: State) -> dict[str, float]:
    """Turn (degrees) of the rope at every middle pass; a pass whose two pieces point bit for bit as in the
    last Result of the same structure keeps that Result's number (the same float object)."""
    if not s.middle_passes:
        return {}
    key = (s.middle_passes,)
    old, moved = _TURN_ROWS.changed(key, st.u)
    if old is None:
        turns = [0.0] * len(s.middle_passes)
        redo = range(len(s.middle_passes))
    else:  # only the passes with a piece that turned
        turns = list(old)
        redo = np.flatnonzero(moved[s.middle_in] | moved[s.middle_out]).tolist()
    if redo:
        u_list = st.u.tolist()
        for j in redo:
            mp = s.middle_passes[j]
            (ax, ay), (bx, by) = u_list[mp.piece_in], u_list[mp.piece_out]
            c = ax * bx + ay * by
            turns[j] = math.degrees(math.acos(max(-1.0, min(1.0, c))))
    _TURN_ROWS.keep(key, st.u, turns)
    return dict(zip(s.middle_keys, turns))


def _build_result(s: System, sol: _Solved, motion: str) -> Result:
    rig = s.rig
    st = sol.state
    sf = rig.settings.min_safety_factor
    segments = _segment_records(s, st, sf)
    f = _resultants(s, st)
    f_list = f.tolist()  # Python numbers at once (same values as float())
    anchors = _point_records(s, s.anchor_at, _ANCHOR_ROWS, f, f_list, sf, rated=True)  # fixed anchors
    loads = _point_records(s, s.load_at, _LOAD_ROWS, f, f_list, sf, rated=False)  # force delivered to each load
    haul = _haul_forces(s)
    deflection = _deflections(s, st)
    scale = _force_scale(s, st)
    residual = _max_norm(st.g) if s.n_dof else 0.0
    warnings = _two_blocked(s, st, contact_stiffness(s)) if st.closed else []
    for pid in s.ignored_forces:
        warnings.append(Warning_("force-on-fixed-point", pid,
                                 f'the force drawn at "{pid}" acts on a fixed point and is not part of the solve'))
    status, message, subject = "ok", "", ""
    # the length equation of every taut tied run must hold
    bad_len = None
    if s.n_pieces:
        unst = np.add.reduceat(st.l / (1.0 + st.eps), s.run_start)
        tight = s.run_tied & (st.tau > 0)
        err = np.abs(unst - s.run_L0) / s.run_L0
        if (tight & (err > 1e-9)).any():
            bad_len = int(np.flatnonzero(tight & (err > 1e-9))[0])
    if (st.T < 0).any() or not sol.converged or bad_len is not None or residual > ACCEPT_REL * max(scale, 1e-9):
        status = "diverged"
        worst = int(np.argmax(_point_norms(st.g))) if s.n_dof else 0
        subject = s.point_ids[np.flatnonzero(s.free)[worst]] if s.n_dof else ""
        jammed = _jammed_piece(s, st)
        if jammed is not None:  # a pass at its neighbour: name it (that is where the solve stuck)
            k = jammed
            runner, other = _blocked_pair(s, k)
            message = (f"no equilibrium found after {sol.iterations} iterations: on rope \"{s.piece_rope[k]}\" "
                       f"the pass at {_point_name(rig, runner)} runs into {_point_name(rig, other)} "
                       "(two-blocked) and the rig could not be settled with it jammed there (largest imbalance "
                       f"{format_force_sig(residual, rig.display.force)} at point {_point_name(rig, subject) if subject else ''}); "
                       "give that pass room to run, or tie the rope off where it jams")
        else:
            message = (f"no equilibrium found after {sol.iterations} iterations: the largest imbalance is "
                       f"{format_force_sig(residual, rig.display.force)} at point {_point_name(rig, subject) if subject else ''}; "
                       + unsettled_words(rig))
    ma = _mech_advantage(s, st, f)  # (the anchors above are the fixed anchors; loads any load point)
    if not (s.has_friction and motion != "hold"):
        ma_ideal = ma  # no friction acts: the ideal is the actual
    else:
        ma_ideal = _mech_advantage(s, sol.ideal) if sol.ideal is not None else None
    return Result(status=status, message=message, subject=subject, iterations=sol.iterations,
                  residual_N=residual, points=_all_points(s, st), segments=tuple(segments), anchors=anchors,
                  loads=loads, haul=haul, ma_actual=ma, ma_ideal=ma_ideal, deflection_deg=deflection,
                  warnings=tuple(warnings))


def _runaway_result(s: System, sol: _Solved) -> Result:
    rig = s.rig
    i = sol.runaway
    pid = s.point_ids[i]
    dx, dy = sol.state.xy[i] - s.xy0[i]
    heading = _heading_words(float(dx), float(dy), rig.view == "elevation")
    return Result(status="diverged", subject=pid, iterations=sol.iterations,
                  message=f"the rig cannot hold the load: point {_point_name(rig, pid)} runs away {heading} — "
                          "the forces pulling it that way are more than the ropes can resist in any position "
                          "(for example a haul too weak for the mechanical advantage, or a load with nothing "
                          "under it)")


#: Compiled systems of the last few rigs solved, with their topologies, most recent first.  A Rig
#: is immutable, so the same object always compiles to the same arrays: re-solving a rig skips the
#: compile; a moved copy of a recent rig (a drag step) only rebuilds the geometry.
_CACHE: list[tuple[Rig, str | None, System, Topology]] = []
_CACHE_SIZE = 4


def _compiled(rig: Rig, motion: str | None) -> System:
    for r, m, s, _ in _CACHE:
        if r is rig and m == motion:
            return s
    for _, _, _, topo in _CACHE:
        if same_structure(topo, rig, motion):
            break
    else:
        for _, _, _, topo in _CACHE:
            if same_structure(topo, rig, motion, forces=False):  # a force slider: same index arrays, new forces
                topo = with_forces(topo, rig)
                break
        else:
            topo = compile_topology(rig, motion)  # = compile_rig, keeping the topology
    s = with_geometry(topo, rig)
    _CACHE.insert(0, (rig, motion, s, topo))
    del _CACHE[_CACHE_SIZE:]
    return s


@solving_on_one_blas_thread  # small dense problems: one BLAS thread (solver/blas_threads.py)
def solve(rig: Rig, *, start=None, motion: str | None = None, ideal: bool = True,
          unstretched_m: Mapping[str, float] | None = None) -> Result:
    """Solve ``rig`` for static equilibrium; ``start`` = {point_id: (x, y)} warm start, metres.

    ``unstretched_m`` = {rope_id: m} sets the unstretched length of one-run tied ropes instead of
    their rigging (the haul plan's rope paid in; :func:`solver.run_lengths.with_unstretched`).

    ``ideal`` False skips the frictionless re-solve behind ``ma_ideal`` (None then, when friction
    acts): the live drag asks for the equilibrium alone, and the ideal MA follows with the
    full analysis once the rig is still.

    ``motion`` overrides ``rig.settings.motion`` ("haul", "hold" or "lower").  Never raises for
    a bad rig: the Result's status, message and subject say what is wrong.  ``iterations``
    counts the Newton iterations that produced the reported state (cold: frictionless and
    friction stages; warm: the friction stage only, not the frictionless reference for
    ``ma_ideal``, which is the same rig re-solved with every pass frictionless).

    ``ma_ideal`` is deliberately that re-solve, not a statics evaluation at the friction
    geometry.  At a fixed geometry the frictionless tensions are overdetermined: each free
    point gives two balance equations, each tied run only one unknown tau (hauled runs none:
    tau = haul force), so a least-squares tau leaves an out-of-balance force at every free
    point whose ropes are not collinear (a grab of a Z-rig drawn off-line, a redirect at an
    angle).  That "ideal MA" would be the force of a state no rope can hold and would depend
    on the least-squares weighting.  The frictionless re-solve is a true equilibrium; its
    geometry differs from the friction geometry only by the small swing friction causes.
    """
    if rig.site.features and in_water(rig):  # currents push on ropes and bodies: solver.water
        if unstretched_m is None:
            return solve_in_water(rig, start=start, motion=motion, ideal=ideal)
        return without_current(solve(dry_site(rig), start=start, motion=motion, ideal=ideal,
                                     unstretched_m=unstretched_m))
    try:
        s = _compiled(rig, motion)
        if unstretched_m:
            s = with_unstretched(s, unstretched_m)
    except RigModelError as exc:
        return Result(status="invalid", message=exc.message, subject=exc.subject or exc.where)
    motion = s.motion
    sol = _solve_system(s, _start_x(s, start), motion, warm=bool(start), ideal=ideal)
    if isinstance(sol, Result):
        return sol
    if sol.runaway is not None:
        return _runaway_result(s, sol)
    result = _build_result(s, sol, motion)
    if motion == "hold" and result.ok and s.has_friction:
        result = _with_hold_ranges(s, result, sol)
    return result


def _with_hold_ranges(s: System, held: Result, sol: _Solved) -> Result:
    """Hold: static friction allows every pass between eta and 1/eta (edges e^(-+mu phi)); report extremes."""
    from dataclasses import replace

    extremes: list[Result] = []
    for m in ("haul", "lower"):
        sub = _solve_system(s, sol.state.x, m)
        if isinstance(sub, Result) or not sub.converged or sub.runaway is not None:
            return held
        extremes.append(_build_result(s, sub, m))
    anchor_range = {}
    for aid, a in held.anchors.items():
        vals = [a.force_N] + [r.anchors[aid].force_N for r in extremes]
        anchor_range[aid] = HoldRange(min(vals), max(vals))
    haul_range = {}
    ma_hold = held.ma_actual
    ma_haul, ma_lower = extremes[0].ma_actual, extremes[1].ma_actual
    if ma_hold and ma_haul and ma_lower:
        for hid, P in held.haul.items():
            lo, hi = P * ma_hold / ma_lower, P * ma_hold / ma_haul
            haul_range[hid] = HoldRange(min(lo, hi), max(lo, hi))
    return replace(held, hold_anchor_range=anchor_range, hold_haul_range=haul_range)


__all__ = ["solve"]
