"""The engine (``solver``) never pulls in Qt: the command line, tests and any service use it headless.

Each check runs in a fresh interpreter, so modules the test session already
imported (pytest-qt loads PySide6) cannot hide or fake the answer.
"""

from __future__ import annotations

import json
import pkgutil
import subprocess
import sys

import pytest

import solver
from tests.conftest import ROOT

#: Modules every part of the app relies on; they must exist and import cleanly.
REQUIRED = ("solver", "solver.errors", "solver.model", "solver.result", "solver.rigfile", "solver.cli")

_PROBE = r"""
import importlib, json, sys
required, optional = json.loads(sys.argv[1]), json.loads(sys.argv[2])
failed = {}
for name in required:
    importlib.import_module(name)
for name in optional:
    try:
        importlib.import_module(name)
    except Exception as exc:  # another module still being written; its Qt imports still count
        failed[name] = repr(exc)
qt = sorted(m for m in sys.modules if m.split(".")[0] in ("PySide6", "shiboken6", "PyQt5", "PyQt6", "PySide2"))
print(json.dumps({"qt": qt, "failed": failed}))
"""


def _probe(required: list[str], optional: list[str], prelude: str = "") -> dict:
    code = prelude + _PROBE
    proc = subprocess.run(
        [sys.executable, "-c", code, json.dumps(required), json.dumps(optional)],
        capture_output=True, text=True, cwd=ROOT, timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout.strip().splitlines()[-1])


def _all_solver_modules() -> list[str]:
    return sorted(f"solver.{m.name}" for m in pkgutil.iter_modules(solver.__path__))


@pytest.fixture(scope="module")
def engine_probe() -> dict:
    """One fresh interpreter importing every solver module (the core ones must import without error)."""
    core = [n for n in ("solver.equilibrium", "solver.checks") if n in _all_solver_modules()]
    optional = [m for m in _all_solver_modules() if m not in REQUIRED and m not in core]
    return _probe(list(REQUIRED) + core, optional)


def test_importing_the_engine_and_every_solver_module_loads_no_qt(engine_probe):
    assert "solver.rigfile" in _all_solver_modules()
    assert engine_probe["qt"] == [], f"Qt modules loaded by solver: {engine_probe['qt']}"


def test_every_solver_module_imports_without_error(engine_probe):
    assert engine_probe["failed"] == {}


def test_the_probe_does_see_qt_when_something_imports_it():
    # the check above could not fail if the probe were blind; show it is not
    out = _probe(list(REQUIRED), [], prelude="import PySide6.QtCore\n")
    assert "PySide6.QtCore" in out["qt"]
