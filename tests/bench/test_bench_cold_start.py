"""Speed of ``ropewright solve`` as a whole process, against importing numpy and scipy.sparse alone.

Goal: a fresh process that loads, solves, checks and prints a sample takes at most 2x a
process that only imports ``numpy`` and ``scipy.sparse`` (the floor any solve pays), on the
same machine.  The two run in turn and the ratio is taken pair by pair, so a machine whose
speed drifts does not move it.  The command must not pay for what it does not use (Qt,
jsonschema for a valid file, a first-solve warm-up).  The ratio is asserted only with timing
on; measure with
``python -m pytest tests/bench/test_bench_cold_start.py --benchmark-enable --benchmark-only -s``.
"""

from __future__ import annotations

import os
import pathlib
import statistics
import subprocess
import sys
import tempfile
import time

from tests.conftest import ROOT, SAMPLES

SAMPLE = SAMPLES / "raft-3to1-redirect.rig.json"
SOLVE = [sys.executable, "-m", "solver.cli", "solve", str(SAMPLE)]
FLOOR = [sys.executable, "-c", "import numpy, scipy.sparse"]


PYCACHE = pathlib.Path(tempfile.gettempdir()) / "ropewright-bench-pycache"


def _env() -> dict[str, str]:
    """Both commands run as an installed program runs: with Python's bytecode cache (pip compiles the
    installed numpy and scipy; our modules are compiled on the first run into a cache outside the
    repository), even where the calling shell turned bytecode writing off."""
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPYCACHEPREFIX"] = str(PYCACHE)
    return env


def _run_s(cmd: list[str]) -> float:
    t0 = time.perf_counter()
    done = subprocess.run(cmd, env=_env(), cwd=ROOT, capture_output=True, text=True, timeout=120)
    elapsed = time.perf_counter() - t0
    assert done.returncode == 0, done.stderr
    return elapsed


def test_bench_whole_process_solve_of_a_sample_within_twice_importing_numpy_and_scipy_sparse(benchmark):
    done = subprocess.run(SOLVE, env=_env(), cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert "Mechanical advantage" in done.stdout and "planning aid" in done.stdout.lower()
    benchmark.pedantic(_run_s, args=(SOLVE,), rounds=5, iterations=1)
    if not getattr(benchmark, "disabled", True):
        pairs = [(_run_s(SOLVE), _run_s(FLOOR)) for _ in range(7)]
        ratio = statistics.median(a / b for a, b in pairs)
        benchmark.extra_info.update(solve_s=round(statistics.median(a for a, _ in pairs), 3),
                                    imports_s=round(statistics.median(b for _, b in pairs), 3),
                                    ratio=round(ratio, 2))
        print(f"\nwhole-process solve vs numpy + scipy.sparse imports: {benchmark.extra_info}")
        assert ratio <= 2.0, benchmark.extra_info
