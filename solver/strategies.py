"""The strategies for hard rigs around the Newton iteration: soft start, friction stages, contact
continuation, sliding to a stop.

A cold solve is frictionless first (convex, robust from the drawn geometry), checked for a
mechanism, then given friction by continuation, re-evaluating edge wraps until they settle; a warm
solve (a drag step) goes to friction at once.  Only a solve that fails pays for the retries: stiff
ropes softened first, a jammed pass settled through a softer contact, a pass friction draws along
its rope started at its stop.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from solver import friction
from solver.evaluate import State, contact_stiffness, directions, evaluate, reweighted
from solver.newton import ACCEPT_REL, TARGET_REL, force_scale, max_norm, newton
from solver.outcome import Outcome, Solved
from solver.records import mechanism_result
from solver.result import Result
from solver.system import System
from solver.wording import point_name

#: Imbalance at which a cold solve hands the frictionless state on to the friction stage when that
#: state itself is not reported (no load point needs the ideal MA): the friction stage converges
#: from there in as many steps as from the exact frictionless equilibrium.
HANDOVER_REL = 1e-3
#: Soft start: ropes are first softened so that the largest force of their part stretches them this much ...
SOFT_STRAIN = 0.05
#: ... when their real stretch under that force would be less than this fraction of it (stiff ropes).
SOFT_BELOW = 0.1


def _friction_solve(s: System, x0: np.ndarray, motion: str, kc: np.ndarray,
                    start: State | None = None) -> tuple[Outcome, np.ndarray]:
    """Equilibrium with the pass friction of ``motion``, from ``x0``; edge wraps re-evaluated until settled.

    ``start``: the frictionless state at ``x0`` when already evaluated (a warm drag step has none:
    the first weights need only the piece directions, and the state is evaluated only if jams are
    looked for).  Every pass first runs with the ratio of ``motion`` (rig-format.md).  When that
    finds no equilibrium and passes are two-blocked (at the start or where the iteration stopped),
    it is solved again with those passes jammed (static ratio 1, see friction.jammed_passes):
    a pulley hauled into a knot would otherwise need the spacing contact to pull.
    """
    u0 = start.u if start is not None else directions(s, x0)
    fr, w = _friction_stage(s, x0, u0, motion, kc, None, start)
    if fr.converged or fr.runaway is not None:
        return fr, w
    if start is None:
        start = evaluate(s, x0, None, kc)
    jam = friction.jammed_passes(s, start.pen) | friction.jammed_passes(s, fr.state.pen)
    if not jam.any():
        return fr, w
    again, w2 = _friction_stage(s, x0, u0, motion, kc, jam, start)
    again.iterations += fr.iterations
    if again.runaway is not None:
        return again, w2
    # a pass given ratio 1 that slid off its neighbour again is not jammed: not this model's answer
    st = again.state
    return (again, w2) if again.converged and friction.ratios_hold(s, st.u, st.w, st.pen, motion) else (fr, w)


def _friction_stage(s: System, x0: np.ndarray, u0: np.ndarray, motion: str, kc: np.ndarray,
                    jam: np.ndarray | None, start: State | None = None) -> tuple[Outcome, np.ndarray]:
    """One friction solve from ``x0`` (piece directions ``u0`` there) with the passes ``jam`` (None: none) jammed;
    ``start``: the frictionless state at ``x0`` when evaluated (its geometry is the first state's)."""
    iters = 0
    x = x0
    # passes jammed stay jammed and new two-blocked ones join (when jamming at all): the set
    # only grows, so the outer loop cannot cycle between a running and a jammed pass
    w = friction.weights(s, u0, motion, jam)
    for _outer in range(40):
        # the first state re-weighted from the frictionless one at x0: the same numbers as evaluated afresh
        first = reweighted(s, start, w, kc) if start is not None and x is start.x else None
        fr = newton(s, x, w, kc, symmetric=False, state=first)
        if not fr.converged and fr.runaway is None:
            fr = _soft_retry(s, x, w, kc, fr)
        iters += fr.iterations
        st = fr.state
        x = st.x
        if fr.runaway is not None or not fr.converged:
            return Outcome(st, iters, False, fr.runaway), w
        if jam is not None:
            jam = jam | friction.jammed_passes(s, st.pen)
        elif not s.has_edges:  # pulley ratios do not depend on the geometry: these weights are final
            return Outcome(st, iters, max_norm(st.g) <= ACCEPT_REL * force_scale(s, st)), w
        w_new = friction.weights(s, st.u, motion, jam)
        if np.abs(w_new / w - 1.0).max(initial=0.0) <= 1e-12:
            if s.has_edges:
                st = evaluate(s, st.x, w_new, kc)
                w = w_new
            return Outcome(st, iters, max_norm(st.g) <= ACCEPT_REL * force_scale(s, st)), w
        w = w_new
    return Outcome(st, iters, False), w


def _soft_retry(s: System, x0: np.ndarray, w: np.ndarray, kc: np.ndarray, failed: Outcome) -> Outcome:
    """A failed friction solve tried again through softened ropes (see soft_factors); ``failed`` if no better.

    A pass that friction draws a long way along its rope (a pulley climbing to the next
    anchor) follows a curved path; on stiff ropes the straight Newton chords overstretch them
    and the iteration stalls, as in the frictionless soft start.
    """
    kappa = soft_factors(s)
    if kappa is None:
        return failed
    s.soft = kappa
    try:
        pre = newton(s, x0, w, kc, symmetric=False, max_iter=60)
    finally:
        s.soft = None
    if pre.runaway is not None:
        return failed
    out = newton(s, pre.state.x, w, kc, symmetric=False)
    out.iterations += pre.iterations + failed.iterations
    if out.converged or out.runaway is not None:
        return out
    return failed


def soft_factors(s: System) -> np.ndarray | None:
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


def _soft_start_newton(s: System, x0: np.ndarray, kc: np.ndarray, target: float = TARGET_REL) -> Outcome:
    """Frictionless Newton solve from the drawn geometry (to imbalance ``target`` x force scale), through a
    softened-rope solve for stiff rigs."""
    kappa = soft_factors(s)
    if kappa is None:
        return newton(s, x0, None, kc, symmetric=True, target=target)
    s.soft = kappa
    try:
        pre = newton(s, x0, None, kc, symmetric=True, max_iter=60)
    finally:
        s.soft = None
    start = pre.state.x if pre.runaway is None else x0
    out = newton(s, start, None, kc, symmetric=True, target=target)
    out.iterations += pre.iterations
    return out


#: A failed solve (a pass jammed against its neighbour, or trial steps overshooting into it) is tried
#: again with the spacing contact this many times softer, stiffened a decade at a time from each
#: answer to the next (penalty continuation; Wriggers, Computational Contact Mechanics, 2nd ed.
#: 2006, penalty method, from memory): the full contact is far stiffer than the ropes, and Newton
#: zig-zags across it from afar.
CONTACT_STEPS = (1e-4, 1e-3, 1e-2, 1e-1)


def _jam_settled(s: System, x0: np.ndarray, kc: np.ndarray, failed: Outcome,
                 solve_at: Callable[[np.ndarray, np.ndarray], Outcome]) -> Outcome:
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


def _friction_settled(s: System, x0: np.ndarray, motion: str, kc: np.ndarray, fr: Outcome,
                      w: np.ndarray) -> tuple[Outcome, np.ndarray]:
    """:func:`_friction_solve`'s answer ``(fr, w)`` from ``x0``, or, when that failed, the friction solve
    again through a softer contact (:func:`_jam_settled`) when that converges."""
    last_w = [w]

    def solve_at(x: np.ndarray, k: np.ndarray) -> Outcome:
        out, last_w[0] = _friction_solve(s, x, motion, k)
        return out

    out = _jam_settled(s, x0, kc, fr, solve_at)
    if out is fr:
        out = _slid_to_its_stop(s, motion, kc, fr, solve_at)
    return (fr, w) if out is fr else (out, last_w[0])


#: Passes :func:`_slid_to_its_stop` tries, the most out of balance first (each try costs a contact-continuation
#: solve; only rigs that failed pay).
SLIDE_TRIES = 2


def _slid_to_its_stop(s: System, motion: str, kc: np.ndarray, failed: Outcome,
                      solve_at: Callable[[np.ndarray, np.ndarray], Outcome]) -> Outcome:
    """``failed`` (a friction solve that did not converge) tried again from where it stopped with a pass placed
    against the neighbour its friction pulls it toward; the answer when that converges, else ``failed``.

    A pulley or edge whose friction outweighs what holds it is drawn along its rope toward the next
    pass (a pulley climbing its rope to the anchor knot): on the way the imbalance along the rope
    stays about as large as the friction, and Newton stalls wherever the iteration left it.  The
    equilibrium is at the far end, jammed, or on the way back from there, so the solve starts at the
    stop (:func:`friction.pulled_passes`, :func:`friction.placed_against`) through the softened
    contact (:func:`_jam_settled`).  ``solve_at(x, kc)`` is the friction solve from ``x``.
    """
    if failed.converged or failed.runaway is not None:  # (a settled solve: nothing to try, as _jam_settled says)
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


def solve_system(s: System, x0: np.ndarray, motion: str, warm: bool = False,
                  ideal: bool = True) -> Solved | Result:
    """Equilibrium of ``s`` from ``x0``; a failed Result (mechanism) or the solved states.

    Cold: frictionless first (convex, robust from the drawn geometry), mechanism check, then
    friction by continuation.  Warm (``x0`` is a nearby solution): friction straight away, and
    the frictionless reference for the ideal MA from there (its iterations are not counted).
    ``ideal`` False: no frictionless reference is wanted (the solved ``ideal`` state is None
    when friction acts).
    """
    s.__dict__.pop("_last_tau", None)  # run tensions of an earlier solve are no start for this one
    kc = contact_stiffness(s) if s.contact_k is None else s.contact_k  # (made with the System's geometry)
    lonely = s.unattached
    if lonely is not None:
        pid = s.point_ids[lonely]
        return Result(status="mechanism", subject=pid,
                      message=f"point {point_name(s.rig, pid)} is not held: no rope is attached to it")
    frictional = motion != "hold" and s.has_friction
    if warm and frictional:
        fr, w = _friction_settled(s, x0, motion, kc, *_friction_solve(s, x0, motion, kc))
        if fr.runaway is not None or not fr.converged:
            return Solved(fr.state, fr.state, fr.iterations, False, fr.runaway, w)
        # held or not is a property of the structure: judged on the frictionless (symmetric) tangent,
        # which is also the first matrix of the frictionless re-solve for the ideal MA
        frictionless = reweighted(s, fr.state, None, kc)  # = evaluate(s, fr.state.x, None, kc)
        failed = mechanism_result(s, frictionless, kc, fr.iterations)
        if failed is not None:
            return failed
        if not ideal:
            return Solved(fr.state, None, fr.iterations, True, None, w)
        ref = newton(s, fr.state.x, None, kc, symmetric=True, state=frictionless)
        return Solved(fr.state, ref.state if ref.converged else fr.state, fr.iterations, True, None, w)
    # the frictionless state is reported only without friction or as the ideal of a load's MA;
    # otherwise it is just where the friction stage starts, and needs no last digits
    handover = frictional and not (ideal and s.load_at)
    target = HANDOVER_REL if handover else TARGET_REL
    out = _soft_start_newton(s, x0, kc, target)
    out = _jam_settled(s, x0, kc, out, lambda x, k: _soft_start_newton(s, x, k, target))
    if out.runaway is not None or not out.converged:
        return Solved(out.state, out.state, out.iterations, False, out.runaway, out.state.w)
    failed = mechanism_result(s, out.state, kc, out.iterations)
    if failed is not None:
        return failed
    if not frictional:
        return Solved(out.state, out.state, out.iterations, True, None, out.state.w)
    fr, w = _friction_settled(s, out.state.x, motion, kc, *_friction_solve(s, out.state.x, motion, kc, out.state))
    return Solved(fr.state, out.state if ideal else None, out.iterations + fr.iterations, fr.converged, fr.runaway, w)
