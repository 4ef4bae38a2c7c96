"""Speed of the failure scan of the raft sample: every component let go, solved and its zone built.

Goal (issue): at most 0.5 s warm, i.e. with the intact solution known, as the app runs it once a
drag pauses.  Correctness is asserted, never time; measure with
``python -m pytest tests/bench/test_bench_failures.py --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

from solver.equilibrium import solve
from solver.failure_warnings import plan_zones
from solver.failures import scan
from solver.rigfile import load_rig
from tests.conftest import SAMPLES


def _scan_with_zones(rig, intact):
    s = scan(rig, intact)
    return s, plan_zones(s)


def test_scan_the_raft_sample_warm(benchmark):
    rig = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    intact = solve(rig)
    assert intact.ok, intact.message
    s, zones = benchmark.pedantic(_scan_with_zones, args=(rig, intact), rounds=10, iterations=1, warmup_rounds=1)
    assert s.ok and len(s.failures) == 11
    assert all(not f.zone.is_empty for f in s.failures)
    assert {z.kind for z in zones} == {"failure", "recoil"}
