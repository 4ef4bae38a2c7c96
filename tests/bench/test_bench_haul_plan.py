"""Speed of the haul plan (pytest-benchmark; correctness asserted, never time).

Goal (issue "Haul it stroke by stroke", median on the 2-core CI machine): a kit 3:1 with a
progress capture hauled 6 m in 3 m strokes, reported at 100 steps per stroke, <= 0.5 s.
Measure with ``python -m pytest tests/bench/test_bench_haul_plan.py --benchmark-enable``.
"""

from __future__ import annotations

import pytest

from solver.haul_plan import plan_haul
from solver.model import Point, Rig
from solver.templates import place_template


def kit_three_to_one() -> Rig:
    """A 3:1 from the kit on a 20 m load-anchor line, a 2 kN stuck load, library rope and pulleys."""
    base = Rig(points=(Point("L", "load", 0, 0, required_N=2000.0), Point("A", "anchor", 0, 20)))
    return place_template(base, "3:1", load_id="L", anchor_id="A", team=4)


def test_bench_three_to_one_hauled_six_metres_in_three_metre_strokes(benchmark):
    rig = kit_three_to_one()
    plan = benchmark(plan_haul, rig, 6.0, 3.0, steps=100)
    assert plan.ok, plan.message
    assert plan.load_travel_m == pytest.approx(6.0, abs=1e-6)
    assert plan.resets == len(plan.strokes) - 1
