"""A rig whose forces changed (a force slider, a typed force) reuses the compiled topology with its own forces.

``assembly.with_forces`` keeps the index arrays of a structure and rebuilds the applied-force
vector, the list of forces drawn on fixed points and the force scales.  The reference is a
fresh :func:`solver.assembly.compile_rig`: every System field bit for bit, and ``solve``
returning the same Result (by ``repr``, which writes every float exactly).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from solver import equilibrium, memo
from solver.assembly import compile_rig, compile_topology, same_structure, with_forces, with_geometry
from solver.compile import DRAWING_FIELDS
from solver.model import Force
from tests.bench.test_bench_solver import thirty_point_rig, vector_pull_rig
from tests.solver.test_recompile import RIGS, assert_same_system, fresh_solve, served


@pytest.fixture(autouse=True)
def _fresh_cache():
    memo.forget_all()
    yield
    memo.forget_all()


def _force_edits(rig):
    """Edits of a rig's forces only (the structure otherwise unchanged)."""
    forces = rig.forces
    free = next(p for p in rig.points if p.is_structural and not p.is_fixed)
    fixed = next(p for p in rig.points if p.is_structural and p.is_fixed)
    out = {
        "added": replace(rig, forces=forces + (Force(at=free.id, magnitude_N=123.0, direction_deg=200.0),)),
        "on a fixed point": replace(rig, forces=forces + (Force(at=fixed.id, magnitude_N=50.0, direction_deg=10.0),)),
    }
    if forces:
        f0 = forces[0]
        out["bigger"] = replace(rig, forces=(replace(f0, magnitude_N=f0.magnitude_N * 1.7 + 1.0),) + forces[1:])
        out["turned"] = replace(rig, forces=(replace(f0, direction_deg=f0.direction_deg + 33.0),) + forces[1:])
        out["removed"] = replace(rig, forces=forces[1:])
        out["zero"] = replace(rig, forces=(replace(f0, magnitude_N=0.0),) + forces[1:])
    return out


@pytest.mark.parametrize("name", sorted(RIGS))
def test_a_force_edit_builds_the_system_a_full_compile_builds(name):
    rig = RIGS[name]
    topo = compile_topology(rig)
    for label, edited in _force_edits(rig).items():
        assert same_structure(topo, edited, forces=False), label
        assert_same_system(with_geometry(with_forces(topo, edited), edited), compile_rig(edited))
        moved = edited.moved(rig.points[0].id, rig.points[0].x + 0.31, rig.points[0].y - 0.17)
        assert_same_system(with_geometry(with_forces(topo, moved), moved), compile_rig(moved))


@pytest.mark.parametrize("name", sorted(RIGS))
def test_a_force_edit_drawn_where_the_last_rig_was_shares_its_drawing_and_equals_a_full_compile(name):
    # a force slider: the coordinates bit for bit the last rig's, so the drawing's numbers are taken as they are
    rig = RIGS[name]
    topo = compile_topology(rig)
    last = with_geometry(topo, rig)
    for label, edited in _force_edits(rig).items():
        s = with_geometry(with_forces(topo, edited), edited, like=last)
        assert_same_system(s, compile_rig(edited))
        for field in DRAWING_FIELDS:
            assert getattr(s, field) is getattr(last, field), f"{label}: {field} built again"
            value = getattr(s, field)
            if isinstance(value, np.ndarray) and value.size:
                with pytest.raises(ValueError):  # shared between Systems, so nobody may write to it
                    value.reshape(-1)[0] = 1.0
        p0 = rig.points[0]
        for dx in (0.31, 1e-12):  # moved, even by a hair: built afresh from its own coordinates
            moved = edited.moved(p0.id, p0.x + dx, p0.y)
            s = with_geometry(with_forces(topo, moved), moved, like=last)
            assert s.xy0 is not last.xy0, label
            assert_same_system(s, compile_rig(moved))
        assert_same_system(with_geometry(topo, rig, like=last), compile_rig(rig))


def test_a_force_edit_is_served_from_the_cached_structure_and_solves_as_a_fresh_solve():
    rig = thirty_point_rig()
    base = equilibrium.solve(rig)
    assert base.ok, base.message
    for label, edited in _force_edits(rig).items():
        equilibrium.solve(rig)
        got, how = served(edited, start=dict(base.points))
        assert how == {"new forces": 1}, f"{label}: {how}"
        assert repr(got) == repr(fresh_solve(edited, start=dict(base.points))), label
        memo.forget_all()


def test_a_force_with_no_proper_size_is_refused_in_the_same_words():
    rig = thirty_point_rig()
    f0 = rig.forces[0]
    bad = replace(rig, forces=(replace(f0, magnitude_N=math.nan),) + rig.forces[1:])
    equilibrium.solve(rig)
    got = equilibrium.solve(bad)
    want = fresh_solve(bad)
    assert got.status == "invalid" and repr(got) == repr(want)


def test_a_force_on_a_point_that_is_gone_is_refused_in_the_same_words():
    rig = thirty_point_rig()
    bad = replace(rig, forces=rig.forces + (Force(at="nowhere", magnitude_N=10.0, direction_deg=0.0),))
    equilibrium.solve(rig)
    assert repr(equilibrium.solve(bad)) == repr(fresh_solve(bad))


@settings(max_examples=40, deadline=None)
@given(st.floats(5.0, 3000.0), st.floats(-180.0, 180.0))
def test_a_force_slider_on_a_vector_pull_solves_each_step_as_a_fresh_solve(magnitude, direction):
    # the sweep of tests/bench: each step a new rig differing only in its force
    rig = vector_pull_rig(200.0)
    first = equilibrium.solve(rig)
    f0 = rig.forces[0]
    step = replace(rig, forces=(replace(f0, magnitude_N=magnitude, direction_deg=direction),))
    start = {k: (float(v[0]), float(v[1])) for k, v in first.points.items()}
    got = equilibrium.solve(step, start=start)
    assert repr(got) == repr(fresh_solve(step, start=start))
    # and the solved hand is in balance: T (u1 + u2) + P = 0 (statics), when the rope holds it (a pull
    # along the line slides the ring into an anchor, two-blocked, where the hardware pushes back)
    if got.ok and not any(w.code == "two-blocked" for w in got.warnings):
        v = np.asarray(got.points["V"])
        u = [(np.asarray(got.points[a]) - v) / np.linalg.norm(np.asarray(got.points[a]) - v) for a in ("A1", "A2")]
        t = [s.tension_N for s in got.segments_of("line")]
        p = magnitude * np.array([math.cos(math.radians(direction)), math.sin(math.radians(direction))])
        assert np.linalg.norm(t[0] * u[0] + t[1] * u[1] + p) <= 1e-7 * max(magnitude, 1.0)
