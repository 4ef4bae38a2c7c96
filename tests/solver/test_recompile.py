"""A moved copy of a rig reuses the compiled topology, and solves to exactly what a full compile gives.

While a point is dragged every step is a new Rig that differs only in coordinates;
``solver.equilibrium`` then rebuilds only the geometry of the System
(``assembly.with_geometry``) instead of compiling the rig again.  The reference here is
a fresh :func:`solver.assembly.compile_rig` of the same rig: every System field must be
bit-identical (``np.array_equal`` and the same dtype), and ``solve`` must return the same
Result (compared by ``repr``, which writes every float exactly).  A change of structure
must never be served from the topology of another rig.
"""

from __future__ import annotations

import glob
import math
from dataclasses import fields, replace
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from solver import equilibrium, memo
from solver.assembly import GEOMETRY_FIELDS, System, compile_rig, compile_topology, same_structure, with_geometry
from solver.errors import RigModelError
from solver.model import Point, Rig
from solver.result import Result
from solver.rigfile import load_rig
from tests import rigs
from solver.water import dry_site
from tests.bench.fifty_ropes import fifty_rope_rig
from tests.bench.test_bench_solver import thirty_point_rig

SAMPLES = sorted(glob.glob(str(Path(__file__).resolve().parents[2] / "samples" / "*.rig.json")))


def elevation_edge_rig() -> Rig:
    """Elevation view: a free 80 kg load on a rope over a rock edge and a slack back-tie (demo data)."""
    pts = [rigs.anchor("A", 0.0, 10.0), rigs.anchor("E", 5.0, 10.0), rigs.free("W", 8.0, 5.0, mass_kg=80.0),
           rigs.anchor("B", 12.0, 9.0), Point(id="P1", kind="person", x=3.0, y=2.0)]
    ropes = [rigs.rope("main", ["A", ("E", "edge", "edge"), "W"]), rigs.rope("tie", ["W", "B"], slack_m=0.2)]
    rig = rigs.make_rig(pts, ropes, hardware=[rigs.edge("edge", 0.3)], motion="hold")
    return replace(rig, view="elevation")


def _all_rigs() -> dict[str, Rig]:
    # the samples as dry sites: a rig in moving water goes through solver.water, which re-reads the drag each
    # round (its own warm/cold equality is tested in tests/checks/test_water.py)
    out = {Path(f).name: dry_site(load_rig(f)) for f in SAMPLES}
    out["fifty-ropes"] = fifty_rope_rig()
    out["thirty-points"] = thirty_point_rig()
    out["elevation-edge"] = elevation_edge_rig()
    return out


RIGS = _all_rigs()


@pytest.fixture(autouse=True)
def _fresh_cache():
    memo.forget_all()
    yield
    memo.forget_all()


def assert_same_system(got: System, want: System) -> None:
    """Every field equal: arrays bit for bit with the same dtype and shape, everything else by ==."""
    for f in fields(System):
        a, b = getattr(got, f.name), getattr(want, f.name)
        if isinstance(b, np.ndarray):
            assert isinstance(a, np.ndarray) and a.dtype == b.dtype and a.shape == b.shape, f.name
            assert np.array_equal(a, b), f.name
        elif f.name == "curves":
            assert len(a) == len(b), f.name
            for c, d in zip(a, b):
                assert c is d or all(np.array_equal(x, y) for x, y in zip(c.knots, d.knots)), f.name
        else:
            assert a == b, f.name


def fresh_solve(rig: Rig, **kw):
    """``solve`` with nothing remembered (``memo.forget_all``), i.e. after a full compile."""
    memo.forget_all()
    try:
        return equilibrium.solve(rig, **kw)
    finally:
        memo.forget_all()


def served(rig: Rig, **kw):
    """``solve(rig)`` and how it got its System: the solver's public counts (``memo.stats()["systems"]``) that
    this call raised, e.g. {"same structure": 1} for a drag step built on kept index arrays."""
    before = memo.stats()["systems"]
    res = equilibrium.solve(rig, **kw)
    after = memo.stats()["systems"]
    return res, {k: n - before.get(k, 0) for k, n in after.items() if n != before.get(k, 0)}


def structural_ids(rig: Rig) -> list[str]:
    return [p.id for p in rig.points if p.is_structural]


def moved_copies(rig: Rig) -> list[Rig]:
    """Each point of the rig in turn moved by a small odd offset (every point, fixed or free)."""
    return [rig.moved(p.id, p.x + 0.37, p.y - 0.21) for p in rig.points]


def warm(result) -> dict:
    return {k: (float(v[0]), float(v[1])) for k, v in result.points.items()}


# --- the geometry update equals a full compile -----------------------------------------


@pytest.mark.parametrize("name", sorted(RIGS))
def test_every_moved_point_rebuilds_a_system_equal_to_a_full_compile(name):
    rig = RIGS[name]
    topo = compile_topology(rig)
    assert_same_system(with_geometry(topo, rig), compile_rig(rig))
    for moved in moved_copies(rig):
        assert same_structure(topo, moved)
        assert_same_system(with_geometry(topo, moved), compile_rig(moved))


@pytest.mark.parametrize("name", sorted(RIGS))
def test_solving_a_moved_copy_after_the_original_gives_the_result_of_a_fresh_solve(name):
    rig = RIGS[name]
    base = fresh_solve(rig)
    ids = structural_ids(rig)
    for pid in ids[:: max(1, len(ids) // 6)]:  # a spread of points, fixed and free
        p = rig.point(pid)
        moved = rig.moved(pid, p.x - 0.29, p.y + 0.43)
        for start in (None, warm(base)) if base.ok else (None,):  # cold, and warm-started as a drag step is
            want = fresh_solve(moved, start=start)
            _, how = served(rig)  # the original is compiled and remembered ...
            assert how == {"compiled": 1}, how
            got, how = served(moved, start=start)  # ... and the moved copy is solved on its index arrays
            assert how == {"same structure": 1}, "the moved copy was compiled from scratch"
            assert repr(got) == repr(want)
            memo.forget_all()


def test_a_drag_of_successive_moved_copies_solves_each_step_as_a_fresh_solve_would():
    rig = fifty_rope_rig()
    first = equilibrium.solve(rig)
    assert first.ok, first.message
    start, current, steps = warm(first), rig, []
    for k in range(6):
        g = current.point("G4")
        current = current.moved("G4", g.x + 0.05, g.y - 0.04)  # each step moved from the last, as a drag does
        res, how = served(current, start=start)
        assert how == {"same structure": 1}, how
        steps.append((current, dict(start), res))
        start = warm(res)
    for moved, begin, res in steps:
        assert repr(fresh_solve(moved, start=begin)) == repr(res)


def test_the_rebuilt_system_carries_no_state_the_solver_left_on_an_earlier_one():
    from solver.strategies import solve_system

    rig = fifty_rope_rig()
    topo = compile_topology(rig)
    old = with_geometry(topo, rig)
    assert not isinstance(solve_system(old, old.x_from(old.xy0), "haul"), Result)  # the solver ran on that System
    assert "_run_tension_fixed" in old.__dict__  # ... and cached its constants on it
    old.soft = np.full(old.n_runs, 0.5)  # as if a soft start had been left in force
    moved = rig.moved("G2", 59.0, 14.2)
    new = with_geometry(topo, moved)
    assert new is not old and new.soft is None
    assert set(new.__dict__) == {f.name for f in fields(System)}
    assert new.rig is moved and new.points[structural_ids(moved).index("G2")] is moved.point("G2")
    for name in GEOMETRY_FIELDS:
        value = getattr(new, name)
        if isinstance(value, np.ndarray):
            assert not np.shares_memory(value, getattr(old, name)), name
    old.soft = None


def test_arrays_shared_between_systems_of_one_topology_cannot_be_written():
    rig = RIGS["thirty-points"]
    topo = compile_topology(rig)
    s = with_geometry(topo, rig.moved("G", 5.6, 3.4))
    for name in ("a", "b", "F", "run_P", "pass_eta", "piece_dofs", "comp_force_scale"):
        with pytest.raises(ValueError):
            getattr(s, name)[...] = 0


def test_a_moved_person_marker_keeps_the_structure():
    rig = RIGS["elevation-edge"]
    topo = compile_topology(rig)
    moved = rig.moved("P1", 4.0, 1.0)
    assert same_structure(topo, moved)
    assert_same_system(with_geometry(topo, moved), compile_rig(moved))


# --- moves that make the rig invalid ---------------------------------------------------


def _error(fn):
    try:
        fn()
    except RigModelError as exc:
        return (exc.message, exc.where, exc.subject)
    return None


@pytest.mark.parametrize("name, pid, onto", [
    ("fifty-ropes", "G3", "M3"),  # the grab onto the master point: the main line has a piece of no length
    ("thirty-points", "G", "AZ"),
    ("elevation-edge", "W", "E"),
])
def test_a_point_moved_onto_its_neighbour_gives_the_same_invalid_result_as_before(name, pid, onto):
    rig = RIGS[name]
    equilibrium.solve(rig)
    target = rig.point(onto)
    moved = rig.moved(pid, target.x, target.y)
    want = _error(lambda: compile_rig(moved))
    assert want is not None and "same spot" in want[0]
    assert _error(lambda: with_geometry(compile_topology(rig), moved)) == want
    got = equilibrium.solve(moved)
    assert got.status == "invalid" and (got.message, got.subject) == (want[0], want[2])
    assert repr(got) == repr(fresh_solve(moved))
    # and the next valid step is solved from the topology again
    back = rig.moved(pid, target.x + 0.5, target.y + 0.5)
    assert repr(equilibrium.solve(back)) == repr(fresh_solve(back))


def test_a_point_moved_to_no_position_gives_the_same_invalid_result_as_before():
    rig = RIGS["thirty-points"]
    equilibrium.solve(rig)
    moved = rig.moved("n1_1", math.nan, 2.0)
    want = _error(lambda: compile_rig(moved))
    assert want is not None and want[2] == "n1_1"
    got = equilibrium.solve(moved)
    assert got.status == "invalid" and (got.message, got.subject) == (want[0], want[2])


def test_a_negative_slack_run_shortened_to_no_length_gives_the_same_invalid_result_as_before():
    # the tie W-B is drawn 4.12 m long with 3.5 m taken in: moving B to 0.3 m from W leaves no rope
    rig = rigs.make_rig([rigs.anchor("A", 0, 10), rigs.free("W", 8, 5), rigs.anchor("B", 12, 4)],
                        [rigs.rope("main", ["A", "W"]), rigs.rope("tie", ["W", "B"], slack_m=-3.5)], motion="hold")
    assert equilibrium.solve(rig).status != "invalid"
    moved = rig.moved("B", 8.3, 5.0)
    want = _error(lambda: compile_rig(moved))
    assert want is not None and "no length" in want[0]
    assert _error(lambda: with_geometry(compile_topology(rig), moved)) == want
    got = equilibrium.solve(moved)
    assert got.status == "invalid" and (got.message, got.subject) == (want[0], want[2])


# --- a change of structure is never served from the cache ------------------------------


def _structure_changes(rig: Rig) -> dict[str, tuple[Rig, str | None]]:
    """Edits of the 30-point rig that change what compile_rig reads besides coordinates."""
    z = rig.rope("z")
    new_path = list(z.path)
    new_path[2] = replace(new_path[2], how="sliding", hardware=None)
    lin = rig.embedded_material("lin")
    stiffer = replace(lin, stretch=((lin.stretch[0][0] * 2.0, lin.stretch[0][1]),))
    hz = rig.point("HZ")
    n11 = rig.point("n1_1")
    return {
        "rope added": (rig.with_rope(rigs.rope("extra", ["AX", "n1_1"], pretension_N=300.0)), None),
        "pass changed": (rig.with_rope(replace(z, path=tuple(new_path))), None),
        "point made fixed": (rig.with_point(replace(n11, fixed=True)), None),
        "point made free": (rig.with_point(replace(rig.point("AX"), fixed=False)), None),
        "motion changed": (rig, "lower"),
        "motion setting changed": (replace(rig, settings=replace(rig.settings, motion="hold")), None),
        "material edited": (replace(rig, materials=tuple(stiffer if m.id == "lin" else m for m in rig.materials)), None),
        "pulley edited": (replace(rig, hardware=(rigs.pulley("pul", 0.8),)), None),
        "force edited": (replace(rig, forces=(replace(rig.forces[0], magnitude_N=99.0),) + rig.forces[1:]), None),
        "haul force edited": (rig.with_point(replace(hz, force_N=350.0)), None),
        "pretension edited": (rig.with_rope(replace(rig.rope("guy"), rigged=replace(rig.rope("guy").rigged,
                                                                                     pretension_N=450.0))), None),
        "view changed": (replace(rig, view="elevation"), None),
        "mass added in elevation": (replace(rig.with_point(replace(n11, mass_kg=5.0)), view="elevation"), None),
        "point kind changed": (rig.with_point(replace(n11, kind="load", fixed=False)), None),
    }


@pytest.mark.parametrize("change", sorted(_structure_changes(thirty_point_rig())))
def test_a_change_of_structure_is_compiled_afresh(change):
    rig = RIGS["thirty-points"]
    changed, motion = _structure_changes(rig)[change]
    equilibrium.solve(rig)
    topo = compile_topology(rig)
    assert not same_structure(topo, changed, motion)
    moved = changed.moved("G", 5.6, 3.4)  # moved as well: still not the cached structure
    assert not same_structure(topo, moved, motion)
    got, how = served(moved, motion=motion)
    assert how in ({"compiled": 1}, {"new forces": 1}), how  # never the kept arrays as they were
    assert repr(got) == repr(fresh_solve(moved, motion=motion))


def test_a_weighted_rig_turned_from_elevation_to_plan_is_compiled_afresh():
    rig = RIGS["elevation-edge"]
    assert equilibrium.solve(rig).ok
    plan = replace(rig.moved("W", 8.1, 5.0), view="plan")  # the 80 kg no longer weighs on W
    got = equilibrium.solve(plan)
    assert repr(got) == repr(fresh_solve(plan))
    assert not compile_topology(plan).template.F.any() and compile_topology(rig).template.F.any()


def test_a_structure_compiled_for_one_motion_is_reused_for_that_motion_only():
    rig = RIGS["thirty-points"]
    equilibrium.solve(rig, motion="hold")
    topo = compile_topology(rig, "hold")
    moved = rig.moved("G", 5.6, 3.4)
    assert same_structure(topo, moved, "hold") and not same_structure(topo, moved, None)  # the file says haul
    got, how = served(moved)
    assert how == {"compiled": 1}, how
    assert served(moved.moved("G", 5.7, 3.4), motion="hold")[1] == {"same structure": 1}  # hold's still kept
    assert repr(got) == repr(fresh_solve(moved))


# --- random moves ----------------------------------------------------------------------

NAMES = sorted(RIGS)


@st.composite
def random_moves(draw):
    """A rig, then 1-3 points moved: by a small step, far away, or exactly onto another point."""
    rig = RIGS[draw(st.sampled_from(NAMES))]
    ids = [p.id for p in rig.points]
    moved = rig
    for _ in range(draw(st.integers(1, 3))):
        p = moved.point(draw(st.sampled_from(ids)))
        how = draw(st.sampled_from(["step", "far", "onto"]))
        if how == "onto":
            q = moved.point(draw(st.sampled_from(ids)))
            x, y = q.x, q.y
        else:
            span = 0.5 if how == "step" else 40.0
            x = p.x + draw(st.floats(-span, span, allow_nan=False))
            y = p.y + draw(st.floats(-span, span, allow_nan=False))
        moved = moved.moved(p.id, x, y)
    return rig, moved


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_moves())
def test_random_moves_rebuild_the_system_of_a_full_compile_or_name_the_same_problem(case):
    rig, moved = case
    topo = compile_topology(rig)
    assert same_structure(topo, moved)
    want = _error(lambda: compile_rig(moved))
    if want is not None:
        assert _error(lambda: with_geometry(topo, moved)) == want
    else:
        assert_same_system(with_geometry(topo, moved), compile_rig(moved))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_moves())
def test_random_moves_solve_to_the_result_of_a_fresh_solve(case):
    rig, moved = case
    want = fresh_solve(moved)
    equilibrium.solve(rig)
    got, how = served(moved)
    if got.status != "invalid":
        assert how == {"same structure": 1}, how
    assert repr(got) == repr(want)


def test_the_cache_stays_small():
    rig = RIGS["thirty-points"]
    for k in range(10):
        equilibrium.solve(rig.moved("G", 5.5 + 0.01 * k, 3.5))
    for kept, limit in memo.stats()["sizes"].values():
        assert 0 < kept <= limit
