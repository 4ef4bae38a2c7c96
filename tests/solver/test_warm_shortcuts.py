"""The drag-step shortcuts of the solver give bit for bit what the full computation gives.

A drag step moves one part of a rig; the solver then builds the tangent of that part alone
(``assembly.part_tangent``) instead of the whole matrix sliced to the part, re-evaluates the
frictionless state at the friction answer from that answer's geometry (``assembly.reweighted``)
and, in the run-tension iteration, reads the curve's law directly (``solver.laws.law``).  The
reference of each is the full computation it replaces, at random geometries, with friction,
softened ropes and closed spacing contacts; equality is ``np.array_equal`` (every bit).
"""

from __future__ import annotations

import glob
from dataclasses import fields, replace
from pathlib import Path

import numpy as np
import pytest

from solver import assembly, friction, laws
from solver.assembly import compile_rig, contact_stiffness, evaluate, part_tangent, reweighted, tangent_values
from solver.rigfile import load_rig
from solver.strategies import soft_factors
from solver.stretch import StretchCurve
from tests import rigs
from tests.bench.fifty_ropes import fifty_rope_rig
from tests.solver.test_jacobian import NONLINEAR, make_rig

SAMPLES = sorted(glob.glob(str(Path(__file__).resolve().parents[2] / "samples" / "*.rig.json")))


def _rigs():
    """(name, rig) of every sample, the 50-rope bench rig and the Jacobian test's rig (linear and nonlinear rope)."""
    out = [(Path(p).name, load_rig(p)) for p in SAMPLES]
    out.append(("fifty", fifty_rope_rig()))
    out.append(("jacobian-nonlinear", make_rig(NONLINEAR, "haul")))
    return out


def _full_dense(s, st, kc, exact):
    """The whole dense tangent, as the solver assembles it (pattern order, summed by bincount)."""
    n = s.n_dof
    return np.bincount(s.dense_lin, tangent_values(s, st, kc, exact), minlength=n * n).reshape(n, n)


def _closed_up(s, x):
    """``x`` with the free end of the first piece that can close up pushed to half its minimum spacing."""
    k = int(np.flatnonzero(s.contact_on)[0])
    a, b = s.a[k], s.b[k]
    xy = s.positions(x)
    moving, other = (b, a) if s.free[b] else (a, b)
    d = xy[moving] - xy[other]
    xy[moving] = xy[other] + d / np.linalg.norm(d) * 0.5 * s.s_min[k]
    return s.x_from(xy)


def _states(s, motion, rng):
    """States at random geometries near the drawing: frictionless and with the pass friction of ``motion``,
    with real and softened ropes, and one with a spacing contact closed."""
    x0 = s.x_from(s.xy0)
    kc = contact_stiffness(s)
    out = []
    can_close = bool(s.contact_on.any())  # a rig of bare knots only (a tethered boat) has no spacing contact
    for closed in (False, True) if can_close else (False,):
        x = x0 + rng.normal(scale=0.02 * s.size, size=s.n_dof)
        if closed:
            x = _closed_up(s, x)
        w = friction.weights(s, evaluate(s, x).u, motion)
        for soft in (None, soft_factors(s)):
            s.soft = soft
            try:
                out.append((evaluate(s, x, None, kc), soft))
                out.append((evaluate(s, x, w, kc), soft))
            finally:
                s.soft = None
    assert any(st.closed for st, _ in out) or not can_close, "the check needs a closed contact"
    return out, kc


@pytest.mark.parametrize("name,rig", _rigs(), ids=[n for n, _ in _rigs()])
@pytest.mark.parametrize("seed", range(3))
def test_a_parts_tangent_is_the_whole_tangents_block_bit_for_bit(name, rig, seed):
    s = compile_rig(rig)
    states, kc = _states(s, s.motion, np.random.default_rng(seed))
    for st, soft in states:
        s.soft = soft
        try:
            for exact in (False, True):
                K = _full_dense(s, st, kc, exact)
                covered = np.zeros(K.shape, dtype=bool)
                for part in range(s.n_comp):
                    dofs = np.flatnonzero(s.dof_comp == part)
                    block = part_tangent(s, st, kc, exact, part)
                    assert np.array_equal(block, K[np.ix_(dofs, dofs)]), (name, part, exact)
                    covered[np.ix_(dofs, dofs)] = True
                # the parts' blocks are the whole matrix: nothing couples two parts
                assert not K[~covered].any(), name
        finally:
            s.soft = None


@pytest.mark.parametrize("name,rig", _rigs(), ids=[n for n, _ in _rigs()])
def test_a_reweighted_state_is_the_evaluated_state_bit_for_bit(name, rig):
    s = compile_rig(rig)
    states, kc = _states(s, s.motion, np.random.default_rng(7))
    for st, soft in states:
        s.soft = soft
        try:
            for w in (None, friction.weights(s, st.u, s.motion)):
                fresh, again = evaluate(s, st.x, w, kc), reweighted(s, st, w, kc)
                for f in fields(fresh):
                    if f.compare:
                        a, b = getattr(fresh, f.name), getattr(again, f.name)
                        assert np.array_equal(a, b) and np.asarray(a).dtype == np.asarray(b).dtype, (name, f.name)
                assert fresh.energy == again.energy
        finally:
            s.soft = None


@pytest.mark.parametrize("method", ["strain", "dstrain", "tension"])
def test_a_materials_law_as_a_function_is_by_material(method):
    # one curve (the law itself), two curves (the jacobian rig with a second rope material), softened
    rng = np.random.default_rng(3)
    for rig in (fifty_rope_rig(), make_rig(NONLINEAR, "haul")):
        s = compile_rig(rig)
        for positive in (False, True):  # the positive-tension form is asked for tensions of 0 and above only
            values = rng.uniform(0.0 if positive else -100.0, 9000.0, size=s.n_pieces)
            for kappa in (None, rng.uniform(0.01, 1.0, size=s.n_pieces)):
                if positive and method == "tension":
                    continue
                got = laws.law(s, s.piece_mat, kappa, method, positive)(values)
                want = assembly.by_material(s, s.piece_mat, values, method, kappa)
                assert np.array_equal(np.broadcast_to(got, want.shape), want), (method, positive)


@pytest.mark.parametrize("method", ["strain", "dstrain"])
def test_a_curves_positive_tension_law_is_its_law_at_those_tensions(method):
    # linear (one straight piece) and the nonlinear demo curve; tensions from 0 (inclusive) to beyond the table
    rng = np.random.default_rng(5)
    tensions = np.concatenate(([0.0], rng.uniform(0.0, 1e4, size=200), [1e-300, 1e9]))
    for curve in (StretchCurve([(1000.0, 0.01)]), StretchCurve(NONLINEAR.stretch)):
        full = getattr(curve, method)(tensions)
        fast = np.broadcast_to(curve.of_positive(method)(tensions), tensions.shape)
        assert np.array_equal(fast, full) and fast.dtype == full.dtype, method


def test_a_drag_steps_part_tangents_and_topology_lists_are_those_of_a_fresh_compile():
    # a drag step's System comes from the kept topology (with_geometry), its part patterns from the last step;
    # reference: each moved rig compiled afresh and its tangent assembled whole
    rig = fifty_rope_rig()
    topo = assembly.compile_topology(rig)
    h = rig.point("H4")
    rng = np.random.default_rng(11)
    for i in range(4):
        moved = rig.moved("H4", h.x + 1.5 * np.sin(0.15 * i), h.y + 1.5 * np.cos(0.15 * i))
        s, fresh = assembly.with_geometry(topo, moved), compile_rig(moved)
        assert s.free_ids == fresh.free_ids == [fresh.point_ids[i] for i in np.flatnonzero(fresh.free)]
        assert np.array_equal(s.piece_ends, np.concatenate((fresh.a, fresh.b)))
        assert s.unattached is None and fresh.unattached is None
        x = s.x_from(s.xy0) + rng.normal(scale=0.01, size=s.n_dof)
        kc = contact_stiffness(s)
        st = evaluate(s, x, friction.weights(s, evaluate(s, x).u, "haul"), kc)
        K = _full_dense(fresh, evaluate(fresh, x, st.w, kc), kc, True)
        for part in range(s.n_comp):
            dofs = np.flatnonzero(fresh.dof_comp == part)
            assert np.array_equal(part_tangent(s, st, kc, True, part), K[np.ix_(dofs, dofs)]), part


def test_the_unattached_point_is_the_first_free_point_no_piece_reaches():
    # the rule of equilibrium's "no rope is attached" message, computed here from the pieces' ends
    rig = fifty_rope_rig()
    lonely = replace(rig, points=rig.points + (rigs.free("X", 3.0, 3.0), rigs.free("Y", 4.0, 3.0)))
    s = compile_rig(lonely)
    reached = set(s.a.tolist()) | set(s.b.tolist())
    first = next(i for i in range(len(s.point_ids)) if s.free[i] and i not in reached)
    assert s.point_ids[s.unattached] == s.point_ids[first] == "X"
