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

The solver reads top-down: :mod:`solver.compile` (Rig -> System) -> :mod:`solver.evaluate`
(state, forces; :mod:`solver.runs` run tensions, :mod:`solver.tangent`) -> :mod:`solver.newton`
(the iteration) -> :mod:`solver.strategies` (hard rigs) -> :mod:`solver.records` (the Result).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import replace

import numpy as np

from solver import memo
from solver.blas_threads import solving_on_one_blas_thread
from solver.compile import DIFFERENT, NEW_FORCES, SAME, compile_topology, structure_match, with_forces, with_geometry
from solver.errors import RigModelError
from solver.model import Rig
from solver.outcome import Solved
from solver.records import build_result, contact_failed, contact_off, runaway_result
from solver.result import HoldRange, Result
from solver.run_lengths import with_unstretched
from solver.stability import stable
from solver.strategies import solve_system
from solver.system import System
from solver.water import dry_site, in_water, solve_in_water, without_current


def _compiled(rig: Rig, motion: str | None) -> System:
    """The System of ``rig``, from this thread's last solves when it can (:data:`solver.memo.COMPILED`).

    A Rig is immutable, so the same object always compiles to the same arrays: re-solving a rig
    skips the compile; a moved copy of a recent rig (a drag step) only rebuilds the geometry.
    """
    recent = memo.COMPILED.entries()
    for r, m, s, _ in recent:
        if r is rig and m == motion:
            memo.SYSTEM_SOURCES.add("same rig")
            return s
    match, topo, like = DIFFERENT, None, None
    for _, _, s, kept in recent:  # the same structure first; else the same but for the forces (a force slider)
        level = structure_match(kept, rig, motion)
        if level > match:
            match, topo, like = level, kept, s
            if level == SAME:
                break
    if match == SAME:
        source = "same structure"
    elif match == NEW_FORCES:
        topo, source = with_forces(topo, rig), "new forces"  # the same index arrays, new forces
    else:
        topo, source = compile_topology(rig, motion), "compiled"  # = compile_rig, keeping the topology
    s = with_geometry(topo, rig, like)  # a rig drawn where the last one was keeps its drawing's numbers
    memo.COMPILED.add((rig, motion, s, topo))
    memo.SYSTEM_SOURCES.add(source)
    return s


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



@solving_on_one_blas_thread  # small dense problems: one BLAS thread (solver/blas_threads.py)
def solve(rig: Rig, *, start=None, motion: str | None = None, ideal: bool = True,
          unstretched_m: Mapping[str, float] | None = None, trail: memo.Trail | None = None) -> Result:
    """Solve ``rig`` for static equilibrium; ``start`` = {point_id: (x, y)} warm start, metres.

    The answer depends on the arguments alone, never on what was solved before.  ``trail``
    (:class:`solver.memo.Trail`: the live drag's, one search's) is the one exception, made explicit:
    a rig in moving water warm-started from ``start`` also starts its outer rounds from what the
    trail kept of the same sequence's last steps (the same equilibrium to the solve's tolerance,
    not to the bit), and keeps this answer on it.

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
            return solve_in_water(rig, solve, start=start, motion=motion, ideal=ideal, trail=trail)
        return without_current(solve(dry_site(rig), start=start, motion=motion, ideal=ideal,
                                     unstretched_m=unstretched_m))
    try:
        s = _compiled(rig, motion)
        if unstretched_m:
            s = with_unstretched(s, unstretched_m)
        s.order_ref = None  # each solve starts from the drawing's pass order, never a former solve's (solver.pass_order)
    except RigModelError as exc:
        return Result(status="invalid", message=exc.message, subject=exc.subject or exc.where)
    motion = s.motion
    sol = solve_system(s, _start_x(s, start), motion, warm=bool(start), ideal=ideal)
    if start and len(contact_off(s, sol)):  # last guard: a warm start that ends so is solved again cold
        sol = solve_system(s, _start_x(s, None), motion, ideal=ideal)
    # a jammed pair balanced on the wrong side of its pulley is left for the stable side (solver.stability)
    sol = stable(s, sol, lambda x: solve_system(s, x, motion, ideal=ideal), lambda o: contact_off(s, o))
    if len(bad := contact_off(s, sol)):
        return contact_failed(s, sol, int(bad[0]))
    if isinstance(sol, Result):
        return sol
    if sol.runaway is not None:
        return runaway_result(s, sol)
    result = build_result(s, sol, motion)
    if motion == "hold" and result.ok and s.has_friction:
        result = _with_hold_ranges(s, result, sol)
    return result


def _with_hold_ranges(s: System, held: Result, sol: Solved) -> Result:
    """Hold: static friction allows every pass between eta and 1/eta (edges e^(-+mu phi)); report extremes."""
    extremes: list[Result] = []
    for m in ("haul", "lower"):
        sub = solve_system(s, sol.state.x, m)
        if isinstance(sub, Result) or not sub.converged or sub.runaway is not None:
            return held
        extremes.append(build_result(s, sub, m))
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
