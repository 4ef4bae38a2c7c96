"""Rig files with moving water: the fields, their errors in words, and a round trip (rig-format.md additions)."""

from __future__ import annotations

import copy
import json

import pytest

from solver.errors import RigFileError, RigModelError
from solver.rigfile import dumps_rig, loads_rig, rig_from_dict

BASE = {
    "format": "ropewright-rig", "version": 1,
    "site": {"features": [{"id": "W", "kind": "water", "label": "main current",
                           "polygon": [[-20, -5], [20, -5], [20, 5], [-20, 5]],
                           "flow": {"speed_m_s": 2.0, "bearing_deg": 90}}]},
    "materials": [{"id": "m", "kind": "rope", "mbs_N": 30000, "stretch": [[1000, 0.01]], "diameter_m": 0.011}],
    "points": [{"id": "A", "kind": "anchor", "x": 0, "y": 8},
               {"id": "B", "kind": "load", "fixed": False, "x": 0, "y": 0, "wetted_area_m2": 0.5,
                "drag_shape": "raft-broadside"}],
    "ropes": [{"id": "R", "material": "m", "path": [{"at": "A"}, {"at": "B"}]}],
}


def test_round_trip_keeps_flow_area_shape_and_diameter():
    rig = rig_from_dict(copy.deepcopy(BASE), strict=True)
    assert rig.site.features[0].flow.speed_m_s == 2.0 and rig.site.features[0].flow.bearing_deg == 90
    assert rig.point("B").wetted_area_m2 == 0.5 and rig.point("B").drag_shape == "raft-broadside"
    assert rig.materials[0].diameter == pytest.approx(0.011)
    again = json.loads(dumps_rig(rig))
    assert again["site"]["features"][0]["flow"] == {"speed_m_s": 2.0, "bearing_deg": 90.0}
    assert again["points"][1]["wetted_area_m2"] == 0.5
    assert loads_rig(dumps_rig(rig)) == rig


def test_diameter_mm_and_diameter_m_are_one_diameter():
    d = copy.deepcopy(BASE)
    d["materials"][0] = {**d["materials"][0], "diameter_mm": 11.0}
    assert rig_from_dict(d).materials[0].diameter == pytest.approx(0.011)
    d["materials"][0]["diameter_mm"] = 12.5
    with pytest.raises(RigFileError) as err:
        rig_from_dict(d)
    assert "disagree" in str(err.value) and "materials[0].diameter_m" in str(err.value)
    del d["materials"][0]["diameter_m"]
    assert rig_from_dict(d).materials[0].diameter == pytest.approx(0.0125)  # the library's spelling


@pytest.mark.parametrize("change, where, words", [
    (lambda d: d["site"]["features"][0]["flow"].update(speed_m_s=-1.0), "site.features[0].flow.speed_m_s",
     "zero or more"),
    (lambda d: d["site"]["features"][0].update(kind="boulder"), "site.features[0].flow", "not a water area"),
    (lambda d: d["points"][1].pop("drag_shape"), "points[1].drag_shape", "no shape"),
    (lambda d: d["points"][1].update(drag_shape="bathtub"), "points[1].drag_shape", "unknown shape"),
    (lambda d: d["points"][1].update(wetted_area_m2=-0.2), "points[1].wetted_area_m2", "zero or more"),
])
def test_bad_water_fields_are_named(change, where, words):
    d = copy.deepcopy(BASE)
    change(d)
    with pytest.raises(RigFileError) as err:
        rig_from_dict(d)
    assert where in str(err.value) and words in str(err.value)


def test_a_line_feature_cannot_carry_a_flow():
    d = copy.deepcopy(BASE)
    d["site"]["features"][0] = {"id": "W", "kind": "water", "line": [[0, 0], [5, 0]], "flow": {"speed_m_s": 1,
                                                                                          "bearing_deg": 0}}
    with pytest.raises(RigFileError, match="polygon"):
        rig_from_dict(d)


def test_stuck_load_gets_its_required_force_from_the_current_when_asked():
    from solver.water_loads import required_from_current

    d = copy.deepcopy(BASE)
    d["points"][1].pop("fixed")
    rig = rig_from_dict(d)
    assert rig.point("B").required_N is None  # not until asked
    asked = required_from_current(rig, "B")
    # drag equation, Matthews: open half-cylinder C_d 2.30; rho 1000 kg/m^3; v 2 m/s; A 0.5 m^2
    assert asked.point("B").required_N == pytest.approx(0.5 * 1000 * 2.30 * 0.5 * 2.0 ** 2)
    assert asked.point("B").extra["load_estimate"]["speed_m_s"] == pytest.approx(2.0)
    with pytest.raises(RigModelError, match="not in moving water"):
        required_from_current(rig.moved("B", 0, 30), "B")


def test_solve_table_names_currents_river_sides_and_wet_ropes():
    # the CLI table carries the same moving-water rows as the report, in the rig's units
    from pathlib import Path

    from solver.analysis import analyse
    from solver.cli_solve import format_result
    from solver.rigfile import load_rig

    rig = load_rig(Path(__file__).resolve().parents[2] / "samples" / "tethered-boat-eddy.rig.json")
    text = format_result(rig, analyse(rig), "ft", "lbf")
    assert "Moving water (river left / right facing downstream)" in text
    assert "4.9 mph toward 090° (E)" in text  # 2.2 m/s / 0.44704 (NIST SP 811)
    assert "river left" in text and "river right" in text and "river-right tether" in text
