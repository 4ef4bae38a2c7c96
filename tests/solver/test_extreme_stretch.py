"""Extreme stretch tables: refused or named in words, never numpy RuntimeWarnings on stderr.

A table rising 1e12 N over a strain of 1e-300 has an infinite slope: numpy printed "overflow
encountered in divide" (with source lines) thousands of times and the solve blamed "a part of
the rig that nothing holds".  Such a table is refused when the file is read, naming the
material; a valid but extreme one (1e15 N per unit strain; the format allows 1e-3 to 1e18) fails its solve naming the material.
"""

from __future__ import annotations

import json
import warnings

import pytest

from solver.analysis import analyse
from solver.errors import RigFileError
from solver.rigfile import loads_rig
from solver.stretch import StretchCurve
from tests.conftest import SAMPLES


def _raft_with(stretch) -> str:
    d = json.loads((SAMPLES / "raft-3to1-redirect.rig.json").read_text(encoding="utf-8"))
    d["materials"] = [{"id": "x", "kind": "rope", "mbs_N": 30000, "stretch": stretch, "label": "glass rope"}]
    for rope in d["ropes"]:
        rope["material"] = "x"
    return json.dumps(d)


def test_an_infinitely_steep_table_is_refused_on_reading_naming_the_material(capfd):
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # any RuntimeWarning fails the test
        with pytest.raises(RigFileError) as info:
            loads_rig(_raft_with([[1e12, 1e-300]]))
    assert info.value.where == "materials[0].stretch[0]" and 'material "x"' in info.value.message
    assert "stiffer than any rope" in info.value.message
    assert capfd.readouterr().err == ""


def test_a_valid_but_extreme_table_fails_its_solve_naming_the_material_without_warnings(capfd):
    rig = loads_rig(_raft_with([[1e12, 1e-3]]))  # 1e15 N per unit strain: valid, far stiffer than steel
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        result = analyse(rig)
    if not result.ok:  # settling it would be fine too; failing, it must say why
        assert '"x" (glass rope)' in result.message and "stretch table" in result.message, result.message
        assert "nothing holds" not in result.message
    assert capfd.readouterr().err == ""


def test_the_curve_itself_refuses_an_overflowing_table_in_words_without_warnings():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(ValueError, match="too steeply"):
            StretchCurve([(1e308, 1e-300)])
