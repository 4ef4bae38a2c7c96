"""``ropewright solve`` of a sample loads only what the command uses (the cold-start budget, tests/bench).

Importing scipy.optimize (with scipy.special, fft and spatial) cost more than the whole first
solve; the haul planner, jsonschema (only a file the schema gate refuses needs it), Qt and the
sparse factorisation of big rigs are not needed either.  A fresh process solves a sample (whose
loads ask for a required force, so the pull really needed is searched) and lists its modules.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys

from tests.conftest import ROOT, SAMPLES

NOT_FOR_SOLVE = ("scipy.optimize", "scipy.special", "scipy.sparse.linalg", "scipy.sparse.csgraph", "jsonschema",
                 "solver.haul_plan", "solver.cli_haul", "PySide6", "sketchpad", "hypothesis")

_SCRIPT = """
import contextlib, io, json, sys
import solver.pull_needed as pn
from solver.cli import main
searches = []
root = pn.brent_root
pn.brent_root = lambda *a, **k: searches.append(1) or root(*a, **k)
out = io.StringIO()
with contextlib.redirect_stdout(out):
    code = main(["solve", sys.argv[1]])
print(json.dumps({"code": code, "text": out.getvalue(), "searches": len(searches), "modules": sorted(sys.modules)}))
"""


def _run(script: str) -> dict:
    """What a fresh Python process running ``script`` on the sample prints (one JSON object)."""
    sample = SAMPLES / "raft-3to1-redirect.rig.json"
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    done = subprocess.run([sys.executable, "-c", script, str(sample)], env=env, cwd=ROOT, capture_output=True,
                          text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def test_solving_a_sample_imports_nothing_the_command_does_not_use():
    seen = _run(_SCRIPT)
    assert seen["code"] == 0 and "pullers" in seen["text"]
    assert seen["searches"] >= 1  # the pull really needed was searched (solver.brent), not skipped
    loaded = [m for m in seen["modules"] if any(m == bad or m.startswith(bad + ".") for bad in NOT_FOR_SOLVE)]
    assert not loaded, loaded


_COLLECTOR = """
import contextlib, gc, io, json, sys
from solver.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    main(["solve", sys.argv[1]])  # called from Python: the caller's collector is left alone
    in_process = gc.isenabled()
    sys.argv = ["ropewright", "solve", sys.argv[1]]
    main()  # the console script: one solve, then the process ends
print(json.dumps({"in_process": in_process, "whole_process": gc.isenabled()}))
"""


def test_only_the_solve_command_as_a_whole_process_switches_the_collector_off():
    assert _run(_COLLECTOR) == {"in_process": True, "whole_process": False}
