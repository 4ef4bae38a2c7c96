"""The solver's analytic tangent K = dg/dx against scipy's finite differences at random geometries.

Reference: ``scipy.optimize.approx_fprime`` (an independent general-purpose library) on the
out-of-balance force g(x) the solver evaluates.  Piece weights (pulley and edge friction)
are held fixed, as inside one Newton solve (solver-notes.md).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse
from scipy.optimize import approx_fprime

from solver import friction
from solver.assembly import compile_rig, contact_stiffness, evaluate, tangent_values
from solver.model import Force, Hardware, Material, Pass, Point, Rig, Rigging, Rope, Settings

NONLINEAR = Material(id="kern", kind="rope", mbs_N=30e3,
                     stretch=((500.0, 0.015), (2000.0, 0.035), (8000.0, 0.07)))  # demo curve, invented


def make_rig(material: Material, motion: str) -> Rig:
    """Two free points, a tied multi-piece run over a pulley and a sliding pass, a hauled run, an edge."""
    pts = (Point("A", "anchor", 0.0, 10.0), Point("B", "anchor", 9.0, 11.0), Point("C", "anchor", 4.0, -3.0),
           Point("H", "haul", 12.0, 4.0, force_N=700.0), Point("G", "point", 3.0, 4.0),
           Point("K", "point", 7.0, 5.0), Point("E", "anchor", 10.0, 0.0))
    hw = (Hardware("pul", "pulley", efficiency=0.85, mbs_N=3e4),
          Hardware("edge", "edge", friction_coefficient=0.3, mbs_N=3e4))
    ropes = (
        Rope("main", material.id, (Pass("C"), Pass("G", "pulley", "pul"), Pass("A", "sliding"), Pass("K"),
                                   Pass("B")), Rigging(pretension_N=2500.0)),
        Rope("haul", material.id, (Pass("G"), Pass("K", "pulley", "pul"), Pass("E", "edge", "edge"),
                                   Pass("H", "hauled"))),
        Rope("tie", material.id, (Pass("C"), Pass("K")), Rigging(pretension_N=3000.0)),
    )
    return Rig(points=pts, ropes=ropes, forces=(Force("G", 400.0, 200.0),), materials=(material,), hardware=hw,
               settings=Settings(motion=motion))


def dense_tangent(s, st):
    n = s.n_dof
    return np.bincount(s.dense_lin, tangent_values(s, st, contact_stiffness(s)), minlength=n * n).reshape(n, n)


@pytest.mark.parametrize("motion", ["hold", "haul", "lower"])
@pytest.mark.parametrize("material", [Material(id="lin", kind="rope", mbs_N=3e4, stretch=((1000.0, 0.01),)),
                                      NONLINEAR], ids=["linear", "nonlinear"])
@pytest.mark.parametrize("seed", range(4))
def test_analytic_tangent_matches_finite_differences(seed, material, motion):
    s = compile_rig(make_rig(material, motion))
    rng = np.random.default_rng(seed)
    x = s.x_from(s.xy0) + rng.normal(scale=0.05, size=s.n_dof)
    kc = contact_stiffness(s)
    w = friction.weights(s, evaluate(s, x).u, motion)  # friction factors frozen at this geometry
    st = evaluate(s, x, w, kc)
    assert np.all(st.taut[~s.run_hauled]), "the check needs every tied run taut"
    K = dense_tangent(s, st)
    step = 1e-7
    K_fd = approx_fprime(x, lambda z: evaluate(s, z, w, kc).g, step)
    scale = np.abs(K).max()
    np.testing.assert_allclose(K, K_fd, atol=2e-5 * scale, rtol=0)
    if motion == "hold":  # frictionless: the Hessian of the convex potential, symmetric
        np.testing.assert_allclose(K, K.T, atol=1e-12 * scale)
        eig = np.linalg.eigvalsh(K)
        assert eig.min() > -1e-9 * scale


def test_frictionless_gradient_is_the_gradient_of_the_potential():
    # g = dPi/dx (solver-notes.md): checked with approx_fprime on the solver's energy.
    s = compile_rig(make_rig(NONLINEAR, "hold"))
    rng = np.random.default_rng(7)
    x = s.x_from(s.xy0) + rng.normal(scale=0.05, size=s.n_dof)
    g = evaluate(s, x).g
    g_fd = approx_fprime(x, lambda z: evaluate(s, z).energy, 1e-7)
    np.testing.assert_allclose(g, g_fd, atol=1e-5 * np.abs(g).max())


def test_sparse_assembly_equals_dense_assembly():
    s = compile_rig(make_rig(NONLINEAR, "haul"))
    x = s.x_from(s.xy0) + 0.1
    st = evaluate(s, x, friction.weights(s, evaluate(s, x).u, "haul"))
    vals = tangent_values(s, st)
    Ks = scipy.sparse.csc_matrix((np.bincount(s.csc_map, vals, minlength=len(s.csc_indices)), s.csc_indices,
                                  s.csc_indptr), shape=(s.n_dof, s.n_dof))
    np.testing.assert_allclose(Ks.toarray(), dense_tangent(s, st), rtol=0, atol=1e-12 * np.abs(vals).max())


@pytest.mark.parametrize("motion", ["hold", "haul"])
def test_exact_tangent_matches_finite_differences_with_a_two_blocked_piece(motion):
    # The friction stage's exact tangent keeps the negative geometric stiffness of a piece the
    # spacing contact pushes (N < 0); approx_fprime is the reference.  G is put 3 cm from A,
    # inside the pulley's 5 cm default spacing, so the piece G-A is pressed.
    s = compile_rig(make_rig(Material(id="lin", kind="rope", mbs_N=3e4, stretch=((1000.0, 0.01),)), motion))
    xy = s.xy0.copy()
    ia, ig = s.point_ids.index("A"), s.point_ids.index("G")
    xy[ig] = xy[ia] + [0.03 * 0.6, -0.03 * 0.8]
    x = s.x_from(xy)
    kc = contact_stiffness(s)
    w = friction.weights(s, evaluate(s, x).u, motion)
    st = evaluate(s, x, w, kc)
    assert np.any(st.N < 0), "the check needs a pushed piece"
    n = s.n_dof
    K = np.bincount(s.dense_lin, tangent_values(s, st, kc, exact=True), minlength=n * n).reshape(n, n)
    K_fd = approx_fprime(x, lambda z: evaluate(s, z, w, kc).g, 1e-9)
    np.testing.assert_allclose(K, K_fd, atol=2e-5 * np.abs(K).max(), rtol=0)
