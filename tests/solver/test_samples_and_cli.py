"""Every sample loads and solves, and the ``ropewright solve`` command prints it, with the right exit codes."""

import json
import subprocess
import sys

import pytest

from solver.cli import main
from tests.conftest import SAMPLES

SAMPLE_FILES = sorted(SAMPLES.glob("*.rig.json"))


def test_there_are_at_least_four_samples():
    assert len(SAMPLE_FILES) >= 4


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_every_sample_solves_ok(path):
    from solver.analysis import analyse
    from solver.rigfile import load_rig

    result = analyse(load_rig(path))
    assert result.status == "ok", result.message
    assert result.residual_N <= 1e-7 * max(1.0, max(s.tension_N for s in result.segments))


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_solve_command_prints_a_table_and_exits_0(path, capsys):
    assert main(["solve", str(path)]) == 0
    out = capsys.readouterr().out
    assert "Rope pieces" in out and "Mechanical advantage" in out
    assert "Planning aid only" in out


def test_solve_json_is_strict_json_with_the_contract_keys(capsys):
    assert main(["solve", str(SAMPLES / "raft-3to1-redirect.rig.json"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    for key in ("status", "iterations", "residual_N", "points", "segments", "anchors", "loads", "haul",
                "mechanical_advantage", "deflection_deg", "warnings"):
        assert key in data
    assert data["status"] == "ok"
    assert set(data["segments"][0]) >= {"rope", "index", "from", "to", "tension_N", "length_m", "strain", "utilization"}


def test_imperial_units_show_feet_and_pounds(capsys):
    assert main(["solve", str(SAMPLES / "vector-pull.rig.json"), "--units", "imperial"]) == 0
    out = capsys.readouterr().out
    assert " lbf" in out and " ft" in out


def test_imperial_units_reach_the_warnings_too(capsys):
    # the compound sample's alder is below 10:1, so it carries a margin warning with a force in it
    assert main(["solve", str(SAMPLES / "compound-2on3.rig.json"), "--units", "imperial"]) == 0
    warnings = capsys.readouterr().out.split("Warnings", 1)[1]
    assert " lbf" in warnings and " kN" not in warnings


def test_bad_file_exits_2_with_the_place_named(tmp_path, capsys):
    bad = tmp_path / "bad.rig.json"
    data = json.loads((SAMPLES / "vector-pull.rig.json").read_text())
    data["ropes"][0]["path"][1]["at"] = "G7"
    bad.write_text(json.dumps(data))
    assert main(["solve", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "G7" in err and "Traceback" not in err


def test_rig_that_cannot_hold_exits_3(tmp_path, capsys):
    # a free point on one rope with a sideways force and nothing else: it cannot be held
    rig = {"format": "ropewright-rig", "version": 1,
           "points": [{"id": "A1", "kind": "anchor", "x": 0, "y": 0},
                      {"id": "F1", "kind": "point", "x": 5, "y": 0},
                      {"id": "F2", "kind": "point", "x": 10, "y": 0}],
           "forces": [{"at": "F2", "magnitude_N": 500, "direction_deg": 90}],
           "ropes": [{"id": "r", "material": "kern-11", "path": [{"at": "A1"}, {"at": "F1"}]}]}
    path = tmp_path / "loose.rig.json"
    path.write_text(json.dumps(rig))
    assert main(["solve", str(path)]) == 3
    assert "F2" in capsys.readouterr().err


def test_solve_does_not_load_qt():
    code = ("import sys; from solver.cli import main; main(['solve', %r]); "
            "bad=[m for m in sys.modules if m.startswith(('PySide6','shiboken6'))]; print(bad); sys.exit(1 if bad else 0)"
            % str(SAMPLES / "vector-pull.rig.json"))
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
