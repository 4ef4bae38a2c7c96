"""Speed of a rig in moving water (pytest-benchmark; correctness asserted, never time).

Goal (issue: moving water): a 30 m rope across a 2 m/s current with a tethered boat solves in
≤ 5 ms warm (a re-solve from the last answer, as a live edit does); a drag step of its boat (moved
2 cm, warm from the last step) within the 16 ms frame budget.  Measure with
``python -m pytest tests/bench/test_bench_water.py --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

from solver import memo
from solver.equilibrium import solve
from solver.model import Feature, Flow, Material, Pass, Point, Rig, Rigging, Rope, Site


def boat_across_the_current() -> Rig:
    """A 30 m rope tied bank to bank across a 2 m/s current, a boat tied at its middle (demo data)."""
    water = Feature(id="W", kind="water", polygon=((-60, -13), (60, -13), (60, 13), (-60, 13)), flow=Flow(2.0, 90.0))
    rope = Material(id="r11", kind="rope", mbs_N=30000.0, stretch=((1000.0, 0.012), (10000.0, 0.04)),
                    diameter_m=0.011)
    return Rig(points=(Point("A", "anchor", 0, 15), Point("C", "anchor", 0, -15),
                       Point("B", "point", 0, 0, wetted_area_m2=0.5, drag_shape="hull-side-on")),
               ropes=(Rope("R", "r11", (Pass("A"), Pass("B"), Pass("C")), rigged=Rigging(pretension_N=500.0)),),
               materials=(rope,), site=Site(features=(water,)))


def warm_solves(benchmark, rig: Rig):
    """Benchmark re-solves of ``rig`` from its own cold answer (a live edit's warm solve, on the live trail as the
    sketchpad makes it); the last Result."""
    first = solve(rig, trail=memo.LIVE_TRAIL)
    assert first.ok, first.message
    start = dict(first.points)
    return benchmark(lambda: solve(rig, start=start, trail=memo.LIVE_TRAIL))


def test_bench_boat_across_a_current_warm(benchmark):
    result = warm_solves(benchmark, boat_across_the_current())
    assert result.ok and result.points["B"][0] > 0  # swung downstream


def test_bench_boat_drag_step(benchmark):
    rig = boat_across_the_current()
    last = solve(rig, trail=memo.LIVE_TRAIL)
    steps = iter(range(10 ** 6))

    def step():
        k = next(steps)
        moved = rig.moved("C", 0.02 * (k % 50), -15.0)  # the far bank anchor dragged along the bank
        return solve(moved, start=dict(last.points), ideal=False, trail=memo.LIVE_TRAIL)

    result = benchmark(step)
    assert result.ok, result.message


def haul_line_across_the_current() -> Rig:
    """A haul line from the north bank across a 2 m/s current to a bank pulley and along the bank to a
    haul team (demo data): a wet piece of a run through a pulley, bowed while the rope slides."""
    from solver.model import Hardware, Settings

    water = Feature(id="W", kind="water", polygon=((-60, -16), (60, -16), (60, 16), (-60, 16)), flow=Flow(2.0, 90.0))
    rope = Material(id="r11", kind="rope", mbs_N=30000.0, stretch=((1000.0, 0.012), (10000.0, 0.04)),
                    diameter_m=0.011)
    pulley = Hardware(id="p", kind="pulley", efficiency=0.9, mbs_N=36000.0, size_m=0.1)
    return Rig(points=(Point("A", "anchor", 0, 15), Point("P", "anchor", 0, -15),
                       Point("H", "haul", 20, -18, force_N=2000.0)),
               ropes=(Rope("R", "r11", (Pass("A"), Pass("P", "pulley", "p"), Pass("H", "hauled"))),),
               materials=(rope,), hardware=(pulley,), site=Site(features=(water,)), settings=Settings(motion="haul"))


def test_bench_haul_line_through_a_pulley_warm(benchmark):
    result = warm_solves(benchmark, haul_line_across_the_current())
    assert result.ok and result.water.ropes[0].bowed
