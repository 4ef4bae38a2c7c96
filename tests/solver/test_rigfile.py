"""The rig file (rig-format.md v1): exact round trips, unknown keys kept, errors that name the place, safe saving.

The expected values here come from the format contract itself (shared/design/rig-format.md)
and from Python's own json module; no number is computed by the code under test.
"""

from __future__ import annotations

import base64
import copy
import json
import math
import os
import pathlib
from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from solver import rigfile
from solver.errors import RigFileError
from solver.model import (
    Display, Feature, Force, Hardware, Material, Pass, Point, Rig, Rigging, Rope, Settings, Site, SiteImage,
)
from solver.rigfile import dumps_rig, load_rig, loads_rig, migrate, rig_from_dict, rig_to_dict, save_rig
from tests.conftest import SAMPLES

SAMPLE_FILES = sorted(SAMPLES.glob("*.rig.json"))
RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def _sample(path: pathlib.Path = RAFT) -> dict:
    return json.loads(path.read_text(encoding="utf-8"))


def _json_roundtrip(d: dict) -> dict:
    """What a dict becomes after being written to and read from a file."""
    return json.loads(json.dumps(d, allow_nan=False))


def _full_rig() -> Rig:
    """A hand-built rig that sets every optional field of rig-format.md to a non-default value (demo data)."""
    return Rig(
        points=(
            Point("A1", "anchor", 1.5, -2.25, label="oak", fixed=True, capacity_N=12000.0, anchor_type="tree"),
            Point("L1", "load", 0.1 + 0.2, 1 / 3, label="raft", fixed=False, required_N=2500.0, mass_kg=80.0),
            Point("H1", "haul", 10.0, 5.0, label="team", force_N=800.0, team=4, force_per_person_N=200.0),
            Point("G1", "point", 4.0, 1e-7, fixed=False),
            Point("P1", "person", 3.0, 3.0, label="spotter"),
        ),
        ropes=(
            Rope("r1", "m1", path=(Pass("L1"), Pass("G1", "sliding"), Pass("A1", "pulley", "h1"), Pass("H1", "hauled")),
                 rigged=Rigging(slack_m=0.25), label="main line"),
            Rope("r2", "m1", path=(Pass("A1", "tied", "h2"), Pass("G1", "edge", "e1"), Pass("L1")),
                 rigged=Rigging(pretension_N=500.0), label="tag line"),
        ),
        forces=(Force("G1", 400.0, 90.0, label="hand"),),
        materials=(Material("m1", "rope", 30000.0, ((100.0, 0.003), (1000.0, 0.02)), diameter_mm=11.0,
                            label="demo rope", source="demo data"),),
        hardware=(
            Hardware("h1", "pulley", efficiency=0.9, mbs_N=36000.0, label="demo pulley", source="demo", size_m=0.1),
            Hardware("h2", "carabiner", efficiency=0.5, mbs_N=25000.0),
            Hardware("e1", "edge", friction_coefficient=0.44, mbs_N=1e6),
        ),
        title="Demo: every field",
        notes="two lines\nünïcødé ✓",
        display=Display(length="ft", force="lbf"),
        view="elevation",
        settings=Settings(motion="lower", min_safety_factor=7.5),
        site=Site(
            image=SiteImage(file="img/site.png", origin=(1.0, 2.0), metres_per_pixel=0.02, rotation_deg=12.5,
                            opacity=0.5),
            features=(
                Feature("W1", "water", polygon=((0.0, 0.0), (1.0, 0.0), (1.0, 1.0)), label="river"),
                Feature("B1", "bank", line=((0.0, 0.0), (2.0, 2.0)), label="bank"),
                Feature("N1", "note", line=((3.0, 3.0),), label="eddy here"),
            ),
        ),
        extra={"x-team": {"name": "Alpha", "radio": 3}},
    )


# --- round trips -----------------------------------------------------------------------


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_sample_writes_back_the_same_json_it_was_read_from(path):
    original = _sample(path)
    rig = load_rig(path)
    assert rig_to_dict(rig, embed=False) == original


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_sample_load_save_load_gives_the_same_rig_plus_the_embedded_library_specs(path, tmp_path):
    from solver import materials

    rig = load_rig(path)
    out = tmp_path / path.name
    save_rig(rig, out)
    again = load_rig(out)
    used_m = list(dict.fromkeys(r.material for r in rig.ropes))
    used_h = list(dict.fromkeys(h for r in rig.ropes for p in r.path for h in (p.hardware, p.grab) if h))
    # rig-format.md: "saving embeds every spec the rig uses" (a capture's rope grab too)
    expected = replace(rig, materials=tuple(materials.LIBRARY_MATERIALS[i] for i in used_m),
                       hardware=tuple(materials.LIBRARY_HARDWARE[i] for i in used_h))
    assert again == expected
    saved = json.loads(out.read_text(encoding="utf-8"))
    assert {k: v for k, v in saved.items() if k not in ("materials", "hardware")} == _sample(path)
    assert [m["id"] for m in saved["materials"]] == used_m
    assert saved["materials"] == [materials.material_to_dict(materials.LIBRARY_MATERIALS[i]) for i in used_m]
    # a second cycle changes nothing at all
    out2 = tmp_path / ("2-" + path.name)
    save_rig(again, out2)
    assert load_rig(out2) == again
    assert out2.read_bytes() == out.read_bytes()


def test_hand_built_rig_with_every_optional_field_round_trips_exactly():
    rig = _full_rig()
    d1 = rig_to_dict(rig)
    again = rig_from_dict(_json_roundtrip(d1))
    assert again == rig
    assert rig_to_dict(again) == d1
    assert loads_rig(dumps_rig(again)) == rig


def test_hand_built_rig_writes_every_optional_field():
    d = rig_to_dict(_full_rig())
    assert set(d) == {"format", "version", "display", "view", "title", "notes", "settings", "site", "materials",
                      "hardware", "points", "forces", "ropes", "x-team"}
    assert set(d["points"][0]) == {"id", "kind", "x", "y", "label", "fixed", "capacity_N", "anchor_type"}
    assert set(d["points"][2]) == {"id", "kind", "x", "y", "label", "force_N", "team", "force_per_person_N"}
    assert d["ropes"][0]["rigged"] == {"slack_m": 0.25}
    assert d["ropes"][1]["rigged"] == {"pretension_N": 500.0}
    assert d["ropes"][0]["path"][0] == {"at": "L1"}  # "tied" is the default and was never said
    assert d["ropes"][1]["path"][0] == {"at": "A1", "hardware": "h2"}
    assert d["site"]["image"] == {"file": "img/site.png", "origin": [1.0, 2.0], "metres_per_pixel": 0.02,
                                  "rotation_deg": 12.5, "opacity": 0.5}
    assert d["hardware"][0]["size_m"] == 0.1 and d["materials"][0]["source"] == "demo data"


def test_embedded_image_data_round_trips():
    png = b"\x89PNG\r\n\x1a\n" + bytes(range(256))
    rig = replace(_full_rig(), site=Site(image=SiteImage(data_base64=base64.b64encode(png).decode("ascii"))))
    again = loads_rig(dumps_rig(rig))
    assert base64.b64decode(again.site.image.data_base64) == png
    assert again == rig


def test_a_minimal_file_gains_no_fields_on_save():
    minimal = {"format": "ropewright-rig", "version": 1, "points": [], "ropes": []}
    assert rig_to_dict(rig_from_dict(copy.deepcopy(minimal))) == minimal
    assert json.loads(dumps_rig(Rig())) == minimal


def test_defaults_are_not_written_for_a_rig_built_in_code():
    rig = Rig(points=(Point("A1", "anchor", 0.0, 0.0), Point("B1", "anchor", 1.0, 0.0)),
              ropes=(Rope("s", "webbing-25", path=(Pass("A1"), Pass("B1"))),))
    d = rig_to_dict(rig, embed=False)
    assert set(d) == {"format", "version", "points", "ropes"}
    assert d["points"][0] == {"id": "A1", "kind": "anchor", "x": 0.0, "y": 0.0}
    assert d["ropes"][0] == {"id": "s", "material": "webbing-25", "path": [{"at": "A1"}, {"at": "B1"}]}


def test_fields_written_at_their_default_value_stay_in_the_file():
    d = _sample()
    d["view"] = "plan"
    d["title"] = ""
    d["forces"] = []
    d["points"][0]["label"] = ""
    d["ropes"][0]["rigged"] = {"slack_m": 0}
    d["ropes"][0]["path"][0]["how"] = "tied"
    d["settings"] = {"motion": "haul"}
    d["site"]["features"][0]["label"] = ""
    assert rig_to_dict(rig_from_dict(copy.deepcopy(d)), embed=False) == d


def test_an_edited_rig_still_writes_back_the_untouched_fields_as_they_were():
    d = _sample()
    d["ropes"][0]["path"][0]["how"] = "tied"
    rig = rig_from_dict(copy.deepcopy(d)).moved("G1", -5.5, 15.0)
    out = rig_to_dict(rig, embed=False)
    assert out["ropes"][0]["path"][0] == {"at": "L1", "how": "tied"}
    assert out["points"][3] == {**d["points"][3], "x": -5.5, "y": 15.0}


@settings(max_examples=100, deadline=None)
@given(x=st.floats(-1e5, 1e5, allow_nan=False), y=st.floats(-1e5, 1e5, allow_nan=False),
       t=st.floats(1e-3, 1e9), e=st.floats(1e-9, 0.9))
def test_floats_come_back_bit_for_bit(x, y, t, e):
    rig = Rig(points=(Point("A1", "anchor", x, y),),
              materials=(Material("m", "rope", 1e9, ((t, e),)),))
    again = loads_rig(dumps_rig(rig))
    assert again.points[0].x.hex() == float(x).hex() and again.points[0].y.hex() == float(y).hex()
    assert again.materials[0].stretch == ((t, e),)


def test_a_byte_order_mark_is_accepted():
    text = RAFT.read_text(encoding="utf-8")
    assert loads_rig("\ufeff" + text) == loads_rig(text)
    assert loads_rig(b"\xef\xbb\xbf" + text.encode("utf-8")) == loads_rig(text)


# --- unknown keys ------------------------------------------------------------------------

UNKNOWN_KEY_PLACES = [
    ("points[2].colour", lambda d: d["points"][2], lambda r: r.points[2].extra),
    ("ropes[0].colour", lambda d: d["ropes"][0], lambda r: r.ropes[0].extra),
    ("ropes[0].path[1].colour", lambda d: d["ropes"][0]["path"][1], lambda r: r.ropes[0].path[1].extra),
    ("ropes[0].rigged.colour", lambda d: d["ropes"][0].setdefault("rigged", {}), lambda r: r.ropes[0].rigged.extra),
    ("site.features[0].colour", lambda d: d["site"]["features"][0], lambda r: r.site.features[0].extra),
    ("settings.colour", lambda d: d["settings"], lambda r: r.settings.extra),
    ("display.colour", lambda d: d["display"], lambda r: r.display.extra),
    ("site.colour", lambda d: d["site"], lambda r: r.site.extra),
]


@pytest.mark.parametrize("where,obj,extra", UNKNOWN_KEY_PLACES, ids=[p[0] for p in UNKNOWN_KEY_PLACES])
def test_unknown_key_inside_an_object_is_kept_and_written_back(where, obj, extra):
    d = _sample()
    obj(d)["colour"] = {"rgb": [255, 0, 0], "note": "field-marked"}
    rig = rig_from_dict(copy.deepcopy(d))
    assert extra(rig) == {"colour": {"rgb": [255, 0, 0], "note": "field-marked"}}
    assert rig_to_dict(rig, embed=False) == d
    assert loads_rig(dumps_rig(rig)) == loads_rig(dumps_rig(loads_rig(dumps_rig(rig))))


@pytest.mark.parametrize("where,obj,extra", UNKNOWN_KEY_PLACES, ids=[p[0] for p in UNKNOWN_KEY_PLACES])
def test_unknown_key_inside_an_object_is_an_error_in_strict_mode(where, obj, extra):
    d = _sample()
    obj(d)["colour"] = "red"
    with pytest.raises(RigFileError) as info:
        rig_from_dict(d, strict=True)
    assert info.value.where == where
    assert '"colour"' in info.value.message


def test_unknown_top_level_keys_are_kept_in_both_modes():
    d = _sample()
    d["x-planner"] = {"shift": "night", "list": [1, 2.5, None, True]}
    d["$schema"] = "rig-v1.schema.json"
    for strict in (False, True):
        rig = rig_from_dict(copy.deepcopy(d), strict=strict)
        assert rig.extra == {"x-planner": d["x-planner"], "$schema": "rig-v1.schema.json"}
        assert rig_to_dict(rig, embed=False) == d


# --- errors name the place -----------------------------------------------------------------


def _set(*path_and_value):
    *path, value = path_and_value

    def mutate(d):
        node = d
        for key in path[:-1]:
            node = node[key]
        node[path[-1]] = value

    return mutate


def _delete(*path):
    def mutate(d):
        node = d
        for key in path[:-1]:
            node = node[key]
        del node[path[-1]]

    return mutate


# (mutation of the raft sample, expected where, words the message must contain)
BAD_CASES = [
    (_set("points", 4, "x", "12,5"), "points[4].x", ['must be a number, got "12,5"', "12.5"]),
    (_set("points", 4, "x", None), "points[4].x", ["must be a number", "null"]),
    (_delete("points", 4, "x"), "points[4].x", ["missing"]),
    (_set("points", 1, "kind", "anker"), "points[1].kind", ['"anker"', '"anchor"']),
    (_set("points", 1, "id", "L1"), "points[1].id", ['"L1"', "twice"]),
    (_set("points", 1, "id", ""), "points[1].id", ["empty"]),
    (_set("points", 1, "capacity_N", -5), "points[1].capacity_N", ["more than 0", "-5"]),
    (_set("points", 4, "team", 2.5), "points[4].team", ["whole number"]),
    (_set("points", 0, "x", 2e7), "points[0].x", ["km"]),
    (_set("points", 1, "fixed", "yes"), "points[1].fixed", ["true or false"]),
    (_set("ropes", 0, "path", 3, "at", "G7"), "ropes[0].path[3]", ['point "G7" does not exist']),
    (_set("ropes", 0, "path", [{"at": "L1"}]), "ropes[0].path", ["at least 2 passes"]),
    (_set("ropes", 0, "path", 0, "how", "pulley"), "ropes[0].path[0].how", ["start tied"]),
    (_set("ropes", 0, "path", 2, "how", "hauled"), "ropes[0].path[2].how", ["only the last"]),
    (_set("ropes", 0, "path", 5, "how", "edge"), "ropes[0].path[5].how", ["end tied or hauled"]),
    (_set("ropes", 0, "path", 2, "how", "knotted"), "ropes[0].path[2].how", ['"knotted"', '"pulley"']),
    (_delete("ropes", 0, "path", 1, "hardware"), "ropes[0].path[1].hardware", ["pulley pass", "hardware"]),
    (_set("ropes", 0, "path", 1, "hardware", "pulley-xl"), "ropes[0].path[1].hardware", ['"pulley-xl"']),
    (_set("ropes", 0, "path", 1, "hardware", "edge-rock"), "ropes[0].path[1].hardware", ["edge"]),
    (_set("ropes", 0, "path", 2, "at", "A2"), "ropes[0].path[2]", ['"A2"', "twice in a row"]),
    (_set("ropes", 0, "path", 2, "at", "P1"), "ropes[0].path[2]", ["person"]),
    (_set("ropes", 0, "material", "kern-13"), "ropes[0].material", ['"kern-13"']),
    (_delete("ropes", 0, "material"), "ropes[0].material", ["missing"]),
    (_set("ropes", 0, "rigged", {"slack_m": 0.5, "pretension_N": 300}), "ropes[0].rigged", ["not both"]),
    (_set("ropes", 0, "rigged", {"slack_m": -0.5}), "ropes[0].rigged.slack_m", ["at least 0"]),
    (_set("ropes", 0, "rigged", {"pretension_N": 0}), "ropes[0].rigged.pretension_N", ["more than 0"]),
    (_set("view", "side"), "view", ['"plan"', '"elevation"']),
    (_set("settings", "motion", "pull"), "settings.motion", ['"haul"', '"hold"', '"lower"']),
    (_set("settings", "min_safety_factor", 0), "settings.min_safety_factor", ["more than 0"]),
    (_set("display", "force", "kgf"), "display.force", ['"kN"', '"lbf"']),
    (_set("display", "length", "yd"), "display.length", ['"ft"']),
    (_set("forces", [{"at": "Q9", "magnitude_N": 10, "direction_deg": 0}]), "forces[0].at", ['"Q9"']),
    (_set("forces", [{"at": "G1", "magnitude_N": 10}]), "forces[0].direction_deg", ["missing"]),
    (_set("materials", [{"id": "m", "kind": "rope", "mbs_N": 20000, "stretch": [[0, 0], [100, 0.01]]}]),
     "materials[0].stretch[0]", ["(0"]),
    (_set("materials", [{"id": "m", "kind": "rope", "mbs_N": 20000, "stretch": [[200, 0.01], [100, 0.02]]}]),
     "materials[0].stretch[1]", ["rise"]),
    (_set("materials", [{"id": "m", "kind": "rope", "mbs_N": 20000, "stretch": [[100, 0.02], [200, 0.01]]}]),
     "materials[0].stretch[1]", ["rise"]),
    (_set("materials", [{"id": "m", "kind": "rope", "mbs_N": 0, "stretch": [[100, 0.01]]}]),
     "materials[0].mbs_N", ["more than 0"]),
    (_set("materials", [{"id": "m", "kind": "rope", "mbs_N": 1e4, "stretch": [[100]]}]),
     "materials[0].stretch[0]", ["pair"]),
    (_set("hardware", [{"id": "h", "kind": "pulley", "efficiency": 1.2}]), "hardware[0].efficiency", ["at most 1"]),
    (_set("hardware", [{"id": "h", "kind": "pulley", "efficiency": 0}]), "hardware[0].efficiency", ["more than 0"]),
    (_set("hardware", [{"id": "h", "kind": "pulley"}]), "hardware[0].efficiency", ["efficiency"]),
    (_set("hardware", [{"id": "h", "kind": "edge", "friction_coefficient": 0.4, "mbs_N": -1}]),
     "hardware[0].mbs_N", ["more than 0"]),
    (_set("site", "features", 0, "kind", "lake"), "site.features[0].kind", ['"water"']),
    (_set("site", "features", 0, "polygon", [[0, 0], [1, 1]]), "site.features[0].polygon", ["at least 3"]),
    (_set("site", "features", 1, "id", "W1"), "site.features[1].id", ["twice"]),
    (_set("site", "image", {"data_base64": "not base64!"}), "site.image.data_base64", ["base64"]),
    (_set("site", "image", {"file": "a.png", "data_base64": "AAAA"}), "site.image", ["not both"]),
    (_set("site", "image", {"file": "a.png", "metres_per_pixel": -1}), "site.image.metres_per_pixel",
     ["more than 0"]),
    (_set("site", "image", {"file": "a.png", "origin": [1]}), "site.image.origin", ["pair"]),
    (_set("points", {}), "points", ["must be a list"]),
    (_delete("points"), "points", ["missing"]),
    (_set("title", 5), "title", ["text"]),
]


@pytest.mark.parametrize("mutate,where,words", BAD_CASES, ids=[c[1] + "-" + str(i) for i, c in enumerate(BAD_CASES)])
def test_bad_field_is_refused_with_its_place_and_a_readable_reason(mutate, where, words):
    d = _sample()
    mutate(d)
    with pytest.raises(RigFileError) as info:
        loads_rig(json.dumps(d))
    err = info.value
    assert err.where == where, str(err)
    for word in words:
        assert word in err.message, str(err)
    # never jsonschema's own wording, never a Python repr
    for raw in ("is not of type", "is a required property", "is not one of", "Traceback", "None", "['", "{'"):
        assert raw not in err.message, str(err)


def test_the_first_error_counts_the_others():
    d = _sample()
    d["points"][0]["x"] = "a"
    d["points"][1]["y"] = "b"
    with pytest.raises(RigFileError, match="1 more problem"):
        rig_from_dict(d)


@pytest.mark.parametrize("text,where,words", [
    ('{\n  "format": "ropewright-rig",\n  "version": 1\n  "points": []\n}', "line 4, column 3", ["comma"]),
    ('{\n  "format": "ropewright-rig",\n  "version": 1,\n}', "line 4, column 1", ["double quotes"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [1,2,]}', "line 1, column 59", ["value"]),
    ('{"format": "ropewright-rig", "version": 1, "title": "open', "line 1, column 53", ["not closed"]),
    ('{"format": "ropewright-rig"} extra', "line 1, column 30", ["after the end"]),
    ("", "line 1, column 1", ["empty"]),
    ("   \n ", "line 1, column 1", ["empty"]),
])
def test_broken_json_names_line_and_column(text, where, words):
    with pytest.raises(RigFileError) as info:
        loads_rig(text)
    assert info.value.where == where
    assert "not valid JSON" in info.value.message or "empty" in info.value.message
    for word in words:
        assert word in info.value.message


def test_a_file_that_is_not_utf8_is_refused_clearly():
    data = RAFT.read_text(encoding="utf-8").replace("pinned raft", "radeau coincé").encode("latin-1")
    with pytest.raises(RigFileError) as info:
        loads_rig(data)
    assert "not UTF-8" in info.value.message
    assert info.value.where.startswith("line ")


@pytest.mark.parametrize("text,where,words", [
    ("[]", "(top level)", ["one JSON object", "a list"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [{"id": "A", "kind": "anchor", "x": 1, "x": 2, "y": 0}],'
     ' "ropes": []}', "points[0].x", ["twice"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [], "ropes": [], "ropes": []}', "ropes", ["twice"]),
    ('"rig"', "(top level)", ["one JSON object"]),
    ('{"version": 1, "points": [], "ropes": []}', "format", ["ropewright-rig"]),
    ('{"format": "geojson", "version": 1}', "format", ["not a Ropewright rig file", '"geojson"']),
    ('{"format": "ropewright-rig", "points": [], "ropes": []}', "version", ["missing"]),
    ('{"format": "ropewright-rig", "version": 2, "points": [], "ropes": []}', "version", ["newer Ropewright"]),
    ('{"format": "ropewright-rig", "version": 17}', "version", ["newer Ropewright", "17"]),
    ('{"format": "ropewright-rig", "version": "1"}', "version", ["whole number"]),
    ('{"format": "ropewright-rig", "version": 0}', "version", ["no rig format version 0"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [{"id": "A", "kind": "anchor", "x": NaN, "y": 0}],'
     ' "ropes": []}', "points[0].x", ["finite", "NaN"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [], "ropes": [], "x-k": -Infinity}', "x-k", ["finite"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [{"id": "A", "kind": "anchor", "x": 1e999, "y": 0}],'
     ' "ropes": []}', "points[0].x", ["finite"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [], "ropes": [], "n": ' + "9" * 400 + "}", "n",
     ["too large"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [], "ropes": [], "n": ' + "9" * 5000 + "}", "(file)",
     ["cannot be read"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [], "ropes": [], "t": "\\ud800"}', "t", ["escape"]),
    ('{"format": "ropewright-rig", "version": 1, "points": [], "ropes": [], "deep": ' + "[" * 100000
     + "]" * 100000 + "}", "(file)", ["nested too deeply"]),
])
def test_whole_file_problems_are_named(text, where, words):
    with pytest.raises(RigFileError) as info:
        loads_rig(text)
    assert info.value.where == where, str(info.value)
    for word in words:
        assert word in info.value.message, str(info.value)


def test_missing_file_is_a_rig_file_error_naming_the_file(tmp_path):
    path = tmp_path / "nowhere.rig.json"
    with pytest.raises(RigFileError) as info:
        load_rig(path)
    assert info.value.where == str(path) and "no such file" in info.value.message


def test_load_errors_carry_the_file_path(tmp_path):
    path = tmp_path / "bad.rig.json"
    path.write_text('{"format": "ropewright-rig", "version": 1, "points": 3, "ropes": []}', encoding="utf-8")
    with pytest.raises(RigFileError) as info:
        load_rig(path)
    assert info.value.where == "points" and info.value.path == str(path)


# --- version migration -----------------------------------------------------------------------


def test_migrate_leaves_a_version_1_file_as_it_is():
    d = _sample()
    assert migrate(copy.deepcopy(d)) == d


def test_migrate_applies_each_step_up_to_the_current_version(monkeypatch):
    # a future v2 that renamed "notes" to "remarks": the hook must carry an old file forward
    def one_to_two(d):
        d = dict(d)
        d["remarks"] = d.pop("notes", "")
        d["version"] = 2
        return d

    monkeypatch.setattr(rigfile, "VERSION", 2)
    monkeypatch.setitem(rigfile._MIGRATIONS, 1, one_to_two)
    out = migrate(_sample())
    assert out["version"] == 2 and out["remarks"].startswith("Invented demo site") and "notes" not in out


# --- safety: paths, size -----------------------------------------------------------------------


@pytest.mark.parametrize("name", [
    "../site.png", "img/../../site.png", "..\\site.png", "/etc/passwd", "C:\\Users\\x\\site.png", "C:site.png",
    "\\\\server\\share\\site.png", "img/..",
])
def test_image_file_outside_the_rig_folder_is_refused(name, tmp_path):
    d = _sample()
    d["site"]["image"] = {"file": name}
    path = tmp_path / "rig.rig.json"
    path.write_text(json.dumps(d), encoding="utf-8")
    for load in (lambda: loads_rig(json.dumps(d)), lambda: load_rig(path)):
        with pytest.raises(RigFileError) as info:
            load()
        assert info.value.where == "site.image.file"
        assert "folder" in info.value.message


@pytest.mark.skipif(not hasattr(os, "symlink"), reason="needs symbolic links")
def test_image_file_reached_through_a_link_out_of_the_folder_is_refused(tmp_path):
    outside = tmp_path / "outside"
    outside.mkdir()
    (outside / "secret.png").write_bytes(b"x")
    rigdir = tmp_path / "rigs"
    rigdir.mkdir()
    os.symlink(outside, rigdir / "link")
    d = _sample()
    d["site"]["image"] = {"file": "link/secret.png"}
    (rigdir / "r.rig.json").write_text(json.dumps(d), encoding="utf-8")
    with pytest.raises(RigFileError) as info:
        load_rig(rigdir / "r.rig.json")
    assert info.value.where == "site.image.file"


@pytest.mark.parametrize("name", ["site.png", "img/site.png", "./img/site.png", "img\\site.png"])
def test_image_file_inside_the_rig_folder_is_accepted(name, tmp_path):
    d = _sample()
    d["site"]["image"] = {"file": name, "metres_per_pixel": 0.05}
    path = tmp_path / "rig.rig.json"
    path.write_text(json.dumps(d), encoding="utf-8")
    assert load_rig(path).site.image.file == name


def test_a_file_over_the_size_cap_is_refused_before_reading(tmp_path):
    path = tmp_path / "huge.rig.json"
    with open(path, "wb") as fh:
        fh.write(b"{")
        fh.seek(rigfile.MAX_FILE_BYTES + 10)
        fh.write(b"}")
    with pytest.raises(RigFileError) as info:
        load_rig(path)
    assert info.value.where == "(file)"
    assert "20 MB" in info.value.message


def test_text_over_the_size_cap_is_refused(monkeypatch):
    text = RAFT.read_text(encoding="utf-8")
    monkeypatch.setattr(rigfile, "MAX_FILE_BYTES", len(text.encode("utf-8")) - 1)
    with pytest.raises(RigFileError, match="at most"):
        loads_rig(text.encode("utf-8"))
    with pytest.raises(RigFileError, match="at most"):
        loads_rig(text * 5)


def test_saving_refuses_a_rig_bigger_than_the_cap_and_keeps_the_old_file(tmp_path, monkeypatch):
    path = tmp_path / "r.rig.json"
    save_rig(load_rig(RAFT), path)
    before = path.read_bytes()
    big = replace(load_rig(RAFT), notes="x" * 5000)
    monkeypatch.setattr(rigfile, "MAX_FILE_BYTES", len(before) + 100)
    with pytest.raises(RigFileError, match="would be"):
        save_rig(big, path)
    assert path.read_bytes() == before


# --- saving --------------------------------------------------------------------------------------


def _leftovers(folder: pathlib.Path, keep: str) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name != keep)


@pytest.mark.parametrize("failing", ["replace", "fsync", "write"])
def test_a_failed_save_leaves_the_old_file_intact_and_no_temp_file(failing, tmp_path, monkeypatch):
    path = tmp_path / "plan.rig.json"
    path.write_text(RAFT.read_text(encoding="utf-8"), encoding="utf-8")
    before = path.read_bytes()
    rig = load_rig(path).moved("G1", 0.0, 14.0)

    def boom(*args, **kwargs):
        raise OSError(28, "No space left on device")

    if failing == "replace":
        monkeypatch.setattr(rigfile.os, "replace", boom)
    elif failing == "fsync":
        monkeypatch.setattr(rigfile.os, "fsync", boom)
    else:
        real_fdopen = os.fdopen

        class Broken:
            def __init__(self, fh):
                self.fh = fh

            def __enter__(self):
                return self

            def __exit__(self, *exc):
                self.fh.close()

            def write(self, data):
                self.fh.write(data[: len(data) // 2])
                boom()

        monkeypatch.setattr(rigfile.os, "fdopen", lambda fd, mode: Broken(real_fdopen(fd, mode)))
    with pytest.raises(RigFileError) as info:
        save_rig(rig, path)
    assert "No space left" in info.value.message and info.value.where == str(path)
    assert path.read_bytes() == before
    assert _leftovers(tmp_path, path.name) == []


def test_save_replaces_the_file_and_keeps_its_permissions(tmp_path):
    path = tmp_path / "plan.rig.json"
    path.write_text("old", encoding="utf-8")
    os.chmod(path, 0o640)
    rig = load_rig(RAFT)
    save_rig(rig, path)
    assert load_rig(path) == rigfile.embed_specs(rig)
    assert os.stat(path).st_mode & 0o777 == 0o640
    assert _leftovers(tmp_path, path.name) == []
    assert path.read_text(encoding="utf-8").endswith("}\n")


def test_save_refuses_a_rig_that_would_not_load_back_and_keeps_the_old_file(tmp_path):
    path = tmp_path / "plan.rig.json"
    save_rig(load_rig(RAFT), path)
    before = path.read_bytes()
    rig = load_rig(RAFT)
    broken = rig.with_rope(replace(rig.ropes[0], path=rig.ropes[0].path[:2] + (Pass("Z9"),)))
    with pytest.raises(RigFileError) as info:
        save_rig(broken, path)
    assert info.value.where == "ropes[0].path[2]" and '"Z9"' in info.value.message
    assert path.read_bytes() == before


def test_save_refuses_an_image_path_outside_the_folder(tmp_path):
    rig = replace(load_rig(RAFT), site=Site(image=SiteImage(file="../elsewhere.png")))
    with pytest.raises(RigFileError) as info:
        save_rig(rig, tmp_path / "r.rig.json")
    assert info.value.where == "site.image.file"
    assert not (tmp_path / "r.rig.json").exists()


def test_save_into_a_missing_folder_is_a_rig_file_error(tmp_path):
    with pytest.raises(RigFileError, match="could not be saved"):
        save_rig(load_rig(RAFT), tmp_path / "no" / "such" / "r.rig.json")


def test_a_rig_holding_nan_cannot_be_written():
    rig = Rig(points=(Point("A1", "anchor", math.nan, 0.0),))
    with pytest.raises(RigFileError, match="not finite"):
        dumps_rig(rig)


def test_saving_embeds_the_library_specs_the_rig_uses_and_only_those():
    from solver import materials

    rig = Rig(points=(Point("A1", "anchor", 0.0, 0.0), Point("G1", "point", 1.0, 0.0), Point("H1", "haul", 2.0, 0.0)),
              ropes=(Rope("r", "kern-11", path=(Pass("A1"), Pass("G1", "pulley", "pulley-small"),
                                                Pass("H1", "hauled"))),),
              hardware=(Hardware("spare", "ring", efficiency=0.7),))
    d = json.loads(dumps_rig(rig))
    assert [m["id"] for m in d["materials"]] == ["kern-11"]
    assert [h["id"] for h in d["hardware"]] == ["spare", "pulley-small"]
    again = loads_rig(json.dumps(d))
    assert again.embedded_material("kern-11") == materials.LIBRARY_MATERIALS["kern-11"]
    assert again.embedded_hardware("pulley-small") == materials.LIBRARY_HARDWARE["pulley-small"]
    assert json.loads(dumps_rig(rig, embed=False)).keys() == {"format", "version", "hardware", "points", "ropes"}


def test_an_embedded_spec_wins_over_the_library_and_is_not_replaced():
    mine = Material("kern-11", "rope", 25000.0, ((500.0, 0.02),), label="our own old rope")
    rig = Rig(points=(Point("A1", "anchor", 0.0, 0.0), Point("B1", "anchor", 1.0, 0.0)),
              ropes=(Rope("r", "kern-11", path=(Pass("A1"), Pass("B1"))),), materials=(mine,))
    assert loads_rig(dumps_rig(rig)).materials == (mine,)


def test_every_library_spec_survives_a_file_round_trip():
    from solver import materials

    rig = Rig(materials=tuple(materials.LIBRARY_MATERIALS.values()),
              hardware=tuple(materials.LIBRARY_HARDWARE.values()))
    assert loads_rig(dumps_rig(rig)) == rig


def test_the_schema_ships_in_the_package_and_is_draft_2020_12():
    import jsonschema

    schema = rigfile.schema()
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    jsonschema.Draft202012Validator.check_schema(schema)
    for path in SAMPLE_FILES:
        assert list(jsonschema.Draft202012Validator(schema).iter_errors(_sample(path))) == []


def test_strict_mode_accepts_the_extra_properties_of_embedded_library_specs():
    # the built-in webbing carries width_mm, a property rig-format.md does not list
    rig = Rig(points=(Point("A1", "anchor", 0.0, 0.0), Point("B1", "anchor", 1.0, 0.0)),
              ropes=(Rope("s", "webbing-25", path=(Pass("A1"), Pass("B1"))),))
    again = loads_rig(dumps_rig(rig), strict=True)
    assert again.materials[0].id == "webbing-25"
    d = _sample()
    d["materials"] = [{"id": "m", "kind": "rope", "mbs_N": 1e4, "stretch": [[100, 0.01]], "batch": "2024-07"}]
    assert rig_from_dict(d, strict=True).materials[0].extra == {"batch": "2024-07"}
