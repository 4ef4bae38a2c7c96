"""``solve(..., ideal=False)`` (a drag step) skips only the ideal-MA re-solve; everything else is the same answer."""

from __future__ import annotations

import glob
from pathlib import Path

import pytest

from solver.equilibrium import solve
from solver.rigfile import load_rig

SAMPLES = sorted(glob.glob(str(Path(__file__).resolve().parents[2] / "samples" / "*.rig.json")))


def _same_numbers(a, b, rel: float) -> None:
    assert a.status == b.status == "ok"
    if b.ma_actual is None:  # nothing pulls (a held boat): no MA either way (solver.ma_input)
        assert a.ma_actual is None
    else:
        assert a.ma_actual == pytest.approx(b.ma_actual, rel=rel)
    assert [s.tension_N for s in a.segments] == pytest.approx([s.tension_N for s in b.segments], rel=rel)
    for pid, (x, y) in a.points.items():
        assert (x, y) == pytest.approx(b.points[pid], abs=1e-9)
    assert {k: v.force_N for k, v in a.anchors.items()} == pytest.approx({k: v.force_N for k, v in b.anchors.items()},
                                                                         rel=rel)


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: Path(p).name)
@pytest.mark.parametrize("motion", ["haul", "lower"])
def test_without_the_ideal_a_warm_solve_is_the_same_equilibrium(path, motion):
    rig = load_rig(path)
    full = solve(rig, motion=motion)
    assert full.ok, full.message
    start = dict(full.points)
    warm_full, warm_quick = solve(rig, start=start, motion=motion), solve(rig, start=start, motion=motion, ideal=False)
    # the friction stage is the same computation: identical numbers, only the ideal MA left out
    assert warm_quick.segments == warm_full.segments and warm_quick.points == warm_full.points
    assert warm_quick.ma_actual == warm_full.ma_actual
    if warm_full.ma_ideal != warm_full.ma_actual:  # friction acts on a load's system: the ideal is left out
        assert warm_quick.ma_ideal is None
    # cold: the frictionless stage may hand over earlier, so the same equilibrium to round-off
    _same_numbers(solve(rig, motion=motion, ideal=False), full, rel=1e-9)


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: Path(p).name)
def test_without_friction_the_ideal_is_the_actual_even_when_not_asked(path):
    rig = load_rig(path)
    held = solve(rig, motion="hold", ideal=False)
    assert held.ok, held.message
    assert held.ma_ideal == held.ma_actual


def test_the_raft_haul_leaves_out_its_ideal_mechanical_advantage_only_when_asked():
    rig = load_rig(next(p for p in SAMPLES if p.endswith("raft-3to1-redirect.rig.json")))
    full, quick = solve(rig), solve(rig, ideal=False)
    # pulleys with friction: the actual MA is below the frictionless one (T-method), which the drag leaves out
    assert full.ma_ideal is not None and full.ma_actual < full.ma_ideal
    assert quick.ma_ideal is None and quick.ma_actual == pytest.approx(full.ma_actual, rel=1e-9)
