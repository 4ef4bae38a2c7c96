"""The built-in library's contents, the rig look-ups and the library file reader/writer."""

from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from solver import materials as mat
from solver.errors import RigFileError, RigModelError
from solver.materials import (
    LIBRARY_HARDWARE,
    LIBRARY_MATERIALS,
    hardware_for,
    library_as_json,
    library_from_json,
    material_for,
    used_hardware_ids,
    used_material_ids,
    used_specs,
    with_embedded_specs,
)
from solver.model import Hardware, Material, Pass, Point, Rig, Rope

# Ids fixed by the team brief (shared contract with rig files and other modules).
BRIEF_MATERIALS = {"kern-11", "kern-12.5", "throwline-pp-8", "dynamic-10.5", "cord-8", "webbing-25", "sling-hmpe"}
BRIEF_HARDWARE = {
    "pulley-large", "pulley-small", "pulley-bushing", "carabiner", "ring",
    "edge-rock", "edge-concrete", "edge-timber", "edge-steel",
    "prusik-3-wrap", "cam-grab",  # rope grabs (issue 15: weak links)
}


def _rig(ropes: tuple[Rope, ...], materials: tuple[Material, ...] = (), hardware: tuple[Hardware, ...] = ()) -> Rig:
    points = tuple(Point(pid, "anchor", float(i), 0.0) for i, pid in enumerate(["A", "B", "C", "D"]))
    return Rig(points=points, ropes=ropes, materials=materials, hardware=hardware)


def _library_text(materials: list[dict] | None = None, hardware: list[dict] | None = None, **top) -> str:
    doc = {"format": "ropewright-library", "version": 1, "materials": materials or [], "hardware": hardware or []}
    doc.update(top)
    return json.dumps(doc)


GOOD_MATERIAL = {"id": "team-rope", "kind": "rope", "mbs_N": 25000, "stretch": [[500, 0.01], [3000, 0.04]]}
GOOD_PULLEY = {"id": "team-pulley", "kind": "pulley", "efficiency": 0.9, "mbs_N": 30000}


# --- contents ----------------------------------------------------------------------------


def test_library_holds_exactly_the_ids_the_brief_fixes():
    assert set(LIBRARY_MATERIALS) == BRIEF_MATERIALS
    assert set(LIBRARY_HARDWARE) == BRIEF_HARDWARE


def test_library_keys_match_each_specs_own_id():
    assert all(k == m.id for k, m in LIBRARY_MATERIALS.items())
    assert all(k == h.id for k, h in LIBRARY_HARDWARE.items())


@pytest.mark.parametrize("mid", sorted(BRIEF_MATERIALS))
def test_every_stretch_table_starts_after_zero_and_rises_in_both_columns(mid):
    # rig-format.md: "stretch points are increasing in both columns, start after (0, 0)"
    table = np.asarray(LIBRARY_MATERIALS[mid].stretch, dtype=float)
    assert table.ndim == 2 and table.shape[1] == 2 and len(table) >= 4, "a nonlinear curve needs several points"
    assert table[0, 0] > 0 and table[0, 1] > 0
    assert np.all(np.diff(table[:, 0]) > 0), f"{mid}: tensions not increasing: {table[:, 0]}"
    assert np.all(np.diff(table[:, 1]) > 0), f"{mid}: strains not increasing: {table[:, 1]}"


@pytest.mark.parametrize("mid", sorted(BRIEF_MATERIALS))
def test_every_stretch_table_reaches_about_the_mbs(mid):
    # Brief: tables extend well past working loads up to about MBS, so the solver
    # never extrapolates at loads a check could care about.
    m = LIBRARY_MATERIALS[mid]
    assert m.stretch[-1][0] >= 0.95 * m.mbs_N, (m.stretch[-1][0], m.mbs_N)


@pytest.mark.parametrize("mid", sorted(BRIEF_MATERIALS))
def test_every_material_has_kind_strength_label_and_a_source(mid):
    m = LIBRARY_MATERIALS[mid]
    assert m.kind in ("rope", "sling", "cord")
    assert m.mbs_N > 0 and m.label and "from memory" in m.source


@pytest.mark.parametrize("hid", sorted(BRIEF_HARDWARE))
def test_every_hardware_has_its_friction_value_label_and_a_source(hid):
    h = LIBRARY_HARDWARE[hid]
    assert h.label and h.source
    if h.kind == "edge":
        assert h.friction_coefficient is not None and h.efficiency is None
        assert "Delaney" in h.source or "no source" in h.source
    elif h.kind == "grab":
        # a grab holds by friction up to its slip force (a designed slip point): slip below its MBS
        assert h.slip_N is not None and 0 < h.slip_N < h.mbs_N
        assert "from memory" in h.source or "common practice" in h.source
    else:
        assert h.efficiency is not None and 0 < h.efficiency <= 1
        assert h.mbs_N is not None and h.mbs_N > 0
        # Closest approach for two-blocking: a few centimetres to a decimetre (from memory).
        assert h.size_m is not None and 0.02 <= h.size_m <= 0.15


def test_no_spec_is_named_after_a_maker():
    # Originality rule of the brief: labels and sources describe the gear, never a brand.
    # The check is that every label is built from generic words only.
    generic = set(
        "mm low-stretch kernmantle (en 1891 type a) (nfpa general use) floating polypropylene throw line "
        "dynamic climbing rope nylon accessory cord tubular webbing hmpe sewn sling large ball-bearing "
        "rescue pulley small plain-bushing locking carabiner used as a redirect sliding ring (or a hand on "
        "the rope) rock edge concrete timber steel or tube "
        "3-wrap prusik (8 cord loop) toothless cam grab".split()  # prusik: the trade's generic friction hitch
    )
    for spec in list(LIBRARY_MATERIALS.values()) + list(LIBRARY_HARDWARE.values()):
        words = [w for w in spec.label.lower().split() if not w.replace(".", "").isdigit()]
        assert set(words) <= generic, (spec.id, set(words) - generic)


# --- look-ups for a rig ------------------------------------------------------------------------


def test_material_for_prefers_the_spec_embedded_in_the_rig():
    own = replace(LIBRARY_MATERIALS["kern-11"], mbs_N=12345.0, label="our old 11 mm")
    rig = _rig((Rope("r1", "kern-11", (Pass("A"), Pass("B"))),), materials=(own,))
    assert material_for(rig, "kern-11") is own
    assert material_for(rig, "cord-8") is LIBRARY_MATERIALS["cord-8"]


def test_hardware_for_prefers_the_spec_embedded_in_the_rig():
    own = Hardware("pulley-large", "pulley", efficiency=0.8, mbs_N=20000.0)
    rig = _rig((), hardware=(own,))
    assert hardware_for(rig, "pulley-large") is own
    assert hardware_for(rig, "edge-steel") is LIBRARY_HARDWARE["edge-steel"]


def test_unknown_material_is_a_model_error_naming_the_id():
    with pytest.raises(RigModelError) as err:
        material_for(_rig(()), "kern-9")
    assert err.value.subject == "kern-9"
    assert str(err.value) == 'material "kern-9" is not in the rig or the built-in library'


def test_unknown_hardware_is_a_model_error_naming_the_id():
    with pytest.raises(RigModelError) as err:
        hardware_for(_rig(()), "pulley-huge")
    assert err.value.subject == "pulley-huge"
    assert "pulley-huge" in str(err.value) and "built-in library" in str(err.value)


def test_used_ids_come_once_each_in_order_of_first_use():
    ropes = (
        Rope("r1", "webbing-25", (Pass("A"), Pass("B", "pulley", "pulley-small"), Pass("C"))),
        Rope("r2", "kern-11", (Pass("A"), Pass("B", "edge", "edge-rock"), Pass("C", "sliding"), Pass("D", "hauled"))),
        Rope("r3", "webbing-25", (Pass("C"), Pass("B", "pulley", "pulley-small"), Pass("D"))),
    )
    rig = _rig(ropes)
    assert used_material_ids(rig) == ("webbing-25", "kern-11")
    assert used_hardware_ids(rig) == ("pulley-small", "edge-rock")
    assert used_material_ids(_rig(())) == () and used_hardware_ids(_rig(())) == ()


def test_with_embedded_specs_embeds_library_specs_and_keeps_the_rigs_own():
    own = Hardware("pulley-small", "pulley", efficiency=0.7, mbs_N=15000.0)
    ropes = (Rope("r1", "kern-11", (Pass("A"), Pass("B", "pulley", "pulley-small"), Pass("C", "pulley", "carabiner"), Pass("D"))),)
    rig = with_embedded_specs(_rig(ropes, hardware=(own,)))
    assert rig.materials == (LIBRARY_MATERIALS["kern-11"],)
    assert rig.hardware == (own, LIBRARY_HARDWARE["carabiner"])
    assert with_embedded_specs(rig) == rig  # idempotent


def test_used_specs_names_an_unknown_id_a_rope_uses():
    rig = _rig((Rope("r1", "kern-11", (Pass("A"), Pass("B", "pulley", "my-pulley"), Pass("C"))),))
    with pytest.raises(RigModelError) as err:
        used_specs(rig)
    assert err.value.subject == "my-pulley"


# --- library files -------------------------------------------------------------------------


def test_built_in_library_round_trips_through_json():
    materials, hardware = library_from_json(library_as_json())
    assert materials == LIBRARY_MATERIALS and hardware == LIBRARY_HARDWARE
    assert list(materials) == list(LIBRARY_MATERIALS)  # order kept


def test_a_team_library_with_its_own_specs_loads():
    materials, hardware = library_from_json(_library_text([GOOD_MATERIAL], [GOOD_PULLEY]))
    assert materials["team-rope"].stretch == ((500.0, 0.01), (3000.0, 0.04))
    assert hardware["team-pulley"].efficiency == 0.9


def test_unknown_fields_are_kept_unless_strict():
    text = _library_text([dict(GOOD_MATERIAL, colour="red")])
    materials, _ = library_from_json(text)
    assert materials["team-rope"].extra == {"colour": "red"}
    assert json.loads(library_as_json(materials, {}))["materials"][0]["colour"] == "red"
    with pytest.raises(RigFileError) as err:
        library_from_json(text, strict=True)
    assert err.value.where == "materials[0].colour"


@pytest.mark.parametrize(
    ("text", "where", "words"),
    [
        ("{not json", "line 1, column 2", "broken JSON"),
        ("[1, 2]", "", "one JSON object"),
        (json.dumps({"format": "ropewright-rig", "version": 1}), "format", "rig file"),
        (json.dumps({"format": "something-else", "version": 1}), "format", "not a Ropewright library"),
        (_library_text(version=2), "version", "newer"),
        (_library_text(version="1"), "version", "whole number"),
        (json.dumps({"format": "ropewright-library", "version": 1, "materials": {}}), "materials", "list"),
        (_library_text(["kern-11"]), "materials[0]", "JSON object"),
        (_library_text([dict(GOOD_MATERIAL, id="")]), "materials[0].id", "no id"),
        (_library_text([dict(GOOD_MATERIAL, kind="chain")]), "materials[0].kind", "rope, sling, cord"),
        (_library_text([{k: v for k, v in GOOD_MATERIAL.items() if k != "mbs_N"}]), "materials[0].mbs_N", "no mbs_N"),
        (_library_text([dict(GOOD_MATERIAL, mbs_N=True)]), "materials[0].mbs_N", "must be a number"),
        (_library_text([dict(GOOD_MATERIAL, mbs_N=-5)]), "materials[0].mbs_N", "above 0 N"),
        (_library_text([dict(GOOD_MATERIAL, stretch=[])]), "materials[0].stretch", "stretch table"),
        (_library_text([dict(GOOD_MATERIAL, stretch=[[500, 0.01], [3000]])]), "materials[0].stretch[1]", "[tension_N, strain]"),
        (_library_text([dict(GOOD_MATERIAL, stretch=[[0, 0], [3000, 0.04]])]), "materials[0].stretch[0]", "starts at (0 N, 0 %)"),
        (_library_text([dict(GOOD_MATERIAL, stretch=[[500, 0.01], [3000, 0.04], [2000, 0.05]])]), "materials[0].stretch[2]", "rise in both"),
        (_library_text([dict(GOOD_MATERIAL, stretch=[[500, 0.01], [3000, 0.04], [4000, 0.04]])]), "materials[0].stretch[2]", "rise in both"),
        (_library_text([dict(GOOD_MATERIAL, stretch=[[500, 1], [3000, 4]])]), "materials[0].stretch[0]", "not a percentage"),
        (_library_text([GOOD_MATERIAL, GOOD_MATERIAL]), "materials[1].id", "both called"),
        (_library_text([], [dict(GOOD_PULLEY, efficiency=1.2)]), "hardware[0].efficiency", "at most 1"),
        (_library_text([], [dict(GOOD_PULLEY, efficiency=0)]), "hardware[0].efficiency", "above 0"),
        (_library_text([], [{"id": "p", "kind": "pulley"}]), "hardware[0].efficiency", "needs an efficiency"),
        (_library_text([], [{"id": "e", "kind": "edge"}]), "hardware[0].friction_coefficient", "needs a friction"),
        (_library_text([], [{"id": "e", "kind": "edge", "friction_coefficient": 44}]), "hardware[0].friction_coefficient", "between 0 and 2"),
        (_library_text([], [dict(GOOD_PULLEY, size_m=-0.1)]), "hardware[0].size_m", "0 m or more"),
        (_library_text([], [dict(GOOD_PULLEY, kind="winch")]), "hardware[0].kind", "pulley, carabiner, edge, ring"),
    ],
)
def test_a_bad_library_file_says_what_is_wrong_and_where(text, where, words):
    with pytest.raises(RigFileError) as err:
        library_from_json(text)
    assert err.value.where == where
    assert words in err.value.message


def test_error_messages_name_the_spec():
    text = _library_text([dict(GOOD_MATERIAL, stretch=[[500, 0.01], [3000, 0.04], [2000, 0.05]])])
    with pytest.raises(RigFileError) as err:
        library_from_json(text)
    assert 'material "team-rope"' in err.value.message
    assert "point 3 (2000 N, 5 %)" in err.value.message


def test_export_refuses_a_bad_spec_and_names_it():
    bad = Material("frayed", "rope", 10000.0, ((100.0, 0.02), (50.0, 0.03)))
    with pytest.raises(RigModelError) as err:
        library_as_json([bad], [])
    assert err.value.subject == "frayed" and err.value.where == "stretch[1]"


def test_export_refuses_two_specs_with_one_id():
    m = LIBRARY_MATERIALS["cord-8"]
    with pytest.raises(RigModelError, match="both called"):
        library_as_json([m, m], [])


def test_check_functions_pass_sound_specs_unchanged():
    for m in LIBRARY_MATERIALS.values():
        assert mat.check_material(m) is m
    for h in LIBRARY_HARDWARE.values():
        assert mat.check_hardware(h) is h


# --- property tests ----------------------------------------------------------------------------

_increments = st.lists(
    st.tuples(st.floats(1.0, 5000.0), st.floats(1e-4, 0.05)), min_size=1, max_size=12
)


@settings(max_examples=60, deadline=None)
@given(_increments, st.floats(1000.0, 60000.0))
def test_any_rising_table_round_trips_exactly(steps, mbs):
    table = tuple(zip(np.cumsum([s[0] for s in steps]).tolist(), np.cumsum([s[1] for s in steps]).tolist()))
    if table[-1][1] >= 1.0:
        return
    m = Material("prop", "cord", mbs, table, diameter_mm=7.0)
    materials, _ = library_from_json(library_as_json([m], []))
    assert materials["prop"] == m


@settings(max_examples=60, deadline=None)
@given(_increments, st.data())
def test_a_table_with_any_point_out_of_order_is_refused_at_that_point(steps, data):
    t = np.cumsum([s[0] for s in steps])
    e = np.cumsum([s[1] for s in steps]) / 10.0
    if len(t) < 2:
        return
    i = data.draw(st.integers(1, len(t) - 1))
    column = data.draw(st.sampled_from([0, 1]))
    (t if column == 0 else e)[i] = (t if column == 0 else e)[i - 1]  # a flat step is not rising
    m = Material("prop", "rope", 20000.0, tuple(zip(t.tolist(), e.tolist())))
    problem = mat.material_problem(m)
    assert problem is not None and problem[0] == f"stretch[{i}]"


def test_rope_grab_kind_round_trips_and_needs_its_slip_force():
    # rig-format.md additions: a hardware kind for a rope grab with slip_N
    from solver.materials import hardware_from_dict, hardware_to_dict
    d = {"id": "g1", "kind": "grab", "slip_N": 8000.0, "mbs_N": 20000.0, "label": "prusik"}
    assert hardware_to_dict(hardware_from_dict(d)) == d
    with pytest.raises(RigFileError, match="slips"):
        hardware_from_dict({"id": "g2", "kind": "grab", "mbs_N": 20000.0})
    # a 3-wrap prusik slips around 7-9.5 kN (check-values.md "Knots and grabs": common practice)
    assert 7000.0 <= LIBRARY_HARDWARE["prusik-3-wrap"].slip_N <= 9500.0
