"""Tools ▸ Rope and hardware specs: edit, check the stretch table, embed in the rig, import and export a team library."""

from __future__ import annotations

import json

import pytest
from PySide6.QtCore import Qt

from solver.materials import LIBRARY_HARDWARE, LIBRARY_MATERIALS, library_from_json
from solver.model import Point, Rig, Rope, Pass


def type_into(qtbot, field, text: str) -> None:
    qtbot.mouseClick(field.edit, Qt.LeftButton)
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, text)
    qtbot.keyClick(field.edit, Qt.Key_Return)


def rig_with_rope() -> Rig:
    return Rig(points=(Point("A1", "anchor", 0.0, 10.0), Point("L1", "load", 0.0, 0.0)),
               ropes=(Rope("r1", "kern-11", (Pass("L1"), Pass("A1"))),))


@pytest.fixture
def editor(main_window, qtbot):
    main_window.document.replace_all(rig_with_rope())
    ed = main_window.kit.library.make_dialog()
    qtbot.addWidget(ed)
    ed.show()
    qtbot.waitExposed(ed)
    yield ed
    ed.close()


def test_the_list_shows_every_built_in_spec_and_a_selected_rope_fills_the_stretch_table(editor):
    ed = editor
    for sid in LIBRARY_MATERIALS:
        assert ed.find_item("builtin", "material", sid) is not None, sid
    for sid in LIBRARY_HARDWARE:
        assert ed.find_item("builtin", "hardware", sid) is not None, sid
    assert "used by 1" in ed.find_item("builtin", "material", "kern-11").text(1)
    assert ed.select("builtin", "material", "kern-11")
    form = ed.material_form
    kern = LIBRARY_MATERIALS["kern-11"]
    assert form.table.rowCount() == len(kern.stretch)
    assert form.table.horizontalHeaderItem(0).text() == "Tension (kN)"
    # the rig's display unit is kN, strain is shown in %
    assert float(form.table.item(0, 0).text()) == pytest.approx(kern.stretch[0][0] / 1000.0)
    assert float(form.table.item(0, 1).text()) == pytest.approx(kern.stretch[0][1] * 100.0)
    assert form.stretch() == kern.stretch, "an untouched table gives back the stored points exactly"


def test_a_stretch_table_that_does_not_rise_is_refused_with_the_row_named(main_window, editor, qtbot):
    ed = editor
    ed.select("builtin", "material", "kern-11")
    form = ed.material_form
    form.set_cell(2, 1, "0.5")  # row 3 strain 0.5 % is below row 2's 0.65 %
    assert "row 3" in form.table_error.text()
    assert "rise in both tension and strain" in form.table_error.text()
    assert form.table.item(2, 0).background().color().alpha() > 0, "the row at fault is marked"
    assert form.table.item(1, 0).background().style() == Qt.NoBrush
    qtbot.mouseClick(ed.embed_button, Qt.LeftButton)
    assert main_window.document.undo_stack.count() == 0 and main_window.document.rig.materials == ()
    assert "red" in ed.message.text()
    form.set_cell(2, 1, "abc")
    assert "row 3" in form.table_error.text() and "not a number" in form.table_error.text()
    form.set_cell(2, 1, "1.17")
    assert form.table_error.text() == ""
    assert form.table.item(2, 0).background().style() == Qt.NoBrush


def test_a_valid_edit_embeds_a_copy_in_one_undo_step_and_the_rope_uses_it(main_window, editor, qtbot):
    w = main_window
    ed = editor
    ed.select("builtin", "material", "kern-11")
    form = ed.material_form
    type_into(qtbot, form.id_field, "kern-11-team")
    type_into(qtbot, form.mbs, "28")
    form.set_cell(0, 1, "0.25")
    qtbot.mouseClick(ed.embed_button, Qt.LeftButton)
    rig = w.document.rig
    assert w.document.undo_stack.count() == 1
    (spec,) = rig.materials
    assert spec.id == "kern-11-team" and spec.mbs_N == pytest.approx(28000.0)
    assert spec.stretch[0] == pytest.approx((100.0, 0.0025))
    assert spec.stretch[1:] == LIBRARY_MATERIALS["kern-11"].stretch[1:]
    assert ed.current == ("rig", "material", "kern-11-team")
    assert ed.embed_button.text() == "Save to rig"
    # renaming the embedded spec renames it in the ropes that use it, one more undo step
    w.document.apply(w.document.rig.with_rope(Rope("r1", "kern-11-team", (Pass("L1"), Pass("A1")))), "use it")
    type_into(qtbot, form.id_field, "team-rope")
    qtbot.mouseClick(ed.embed_button, Qt.LeftButton)
    assert w.document.rig.rope("r1").material == "team-rope"
    assert [m.id for m in w.document.rig.materials] == ["team-rope"]
    w.undo()
    assert w.document.rig.rope("r1").material == "kern-11-team"


def test_bad_hardware_efficiency_is_shown_under_the_field_and_nothing_is_embedded(main_window, editor, qtbot):
    ed = editor
    ed.select("builtin", "hardware", "pulley-large")
    form = ed.hardware_form
    type_into(qtbot, form.efficiency, "95")  # a percentage where a fraction is wanted
    assert form.efficiency.has_error and "more than 1" in form.efficiency.error.text()
    assert not ed.embed()
    type_into(qtbot, form.efficiency, "0.9")
    assert ed.embed()
    assert main_window.document.rig.hardware[0].efficiency == 0.9
    assert main_window.document.rig.hardware[0].id == "pulley-large"  # same id: the rig's copy wins


def test_a_rope_grab_shows_its_slip_force_and_an_edited_one_is_embedded(main_window, editor, qtbot):
    ed = editor
    ed.select("builtin", "hardware", "prusik-3-wrap")
    form = ed.hardware_form
    assert form.kind.currentText() == "grab" and form.slip.edit.text().startswith("7")  # 7 kN (library)
    qtbot.mouseClick(form.slip.edit, Qt.LeftButton)  # a grab with no slip force is refused, the field named
    form.slip.edit.selectAll()
    qtbot.keyClick(form.slip.edit, Qt.Key_Delete)
    qtbot.keyClick(form.slip.edit, Qt.Key_Return)
    assert not ed.embed() and form.slip.has_error and "slip" in form.slip.error.text()
    type_into(qtbot, form.slip, "8.5 kN")
    assert ed.embed()
    grab = next(h for h in main_window.document.rig.hardware if h.id == "prusik-3-wrap")
    assert grab.kind == "grab" and grab.slip_N == 8500.0


def test_removing_an_embedded_spec_a_rope_needs_is_refused_with_the_rope_named(main_window, editor):
    w = main_window
    ed = editor
    w.document.apply(w.document.rig.with_rope(Rope("r1", "team-only", (Pass("L1"), Pass("A1")), label="main line")),
                     "use a team spec")
    from solver.materials import LIBRARY_MATERIALS as LIB
    from dataclasses import replace

    w.document.apply(replace(w.document.rig, materials=(replace(LIB["cord-8"], id="team-only"),)), "embed")
    assert ed.select("rig", "material", "team-only")
    assert not ed.remove()
    assert "main line" in ed.message.text()
    assert w.document.rig.materials[0].id == "team-only"


def test_export_then_import_round_trips_the_embedded_specs(main_window, editor, tmp_path, qtbot):
    w = main_window
    ed = editor
    ed.select("builtin", "material", "cord-8")
    type_into(qtbot, ed.material_form.id_field, "team-cord")
    assert ed.embed()
    ed.select("builtin", "hardware", "pulley-small")
    type_into(qtbot, ed.hardware_form.id_field, "team-pulley")
    type_into(qtbot, ed.hardware_form.efficiency, "0.82")
    assert ed.embed()
    path = tmp_path / "team.json"
    assert ed.export_library(path), ed.message.text()
    # the file is a library file the solver's own reader accepts
    mats, hws = library_from_json(path.read_text(encoding="utf-8"))
    assert set(mats) == {"team-cord"} and set(hws) == {"team-pulley"}
    # a fresh sketch and a fresh editor (new team library) import it back unchanged
    w.document.replace_all(rig_with_rope())
    from sketchpad.library_editor import LibraryEditor

    fresh = LibraryEditor(w.document)
    qtbot.addWidget(fresh)
    assert fresh.import_library(path), fresh.message.text()
    assert fresh.team.materials["team-cord"] == mats["team-cord"]
    assert fresh.team.hardware["team-pulley"].efficiency == 0.82
    assert fresh.select("team", "hardware", "team-pulley")
    assert fresh.embed()
    assert w.document.rig.hardware == (hws["team-pulley"],)


@pytest.mark.parametrize("content, words", [
    ("{ not json", "broken JSON"),
    (json.dumps({"format": "ropewright-rig", "version": 1}), "rig file, not a library"),
    (json.dumps({"format": "ropewright-library", "version": 1,
                 "materials": [{"id": "bad", "kind": "rope", "mbs_N": 20000,
                                "stretch": [[100, 0.01], [200, 0.005]]}]}), "materials[0].stretch[1]"),
])
def test_a_broken_library_file_shows_the_error_and_imports_nothing(editor, tmp_path, content, words):
    path = tmp_path / "broken.json"
    path.write_text(content, encoding="utf-8")
    assert not editor.import_library(path)
    assert words in editor.message.text()
    assert "Nothing was imported" in editor.message.text()
    assert editor.team.materials == {} and editor.team.hardware == {}


def test_a_missing_library_file_is_named_in_the_message(editor, tmp_path):
    assert not editor.import_library(tmp_path / "nowhere.json")
    assert "nowhere.json" in editor.message.text()


def test_export_with_nothing_embedded_or_imported_says_so(editor, tmp_path):
    assert not editor.export_library(tmp_path / "empty.json")
    assert "Nothing to export" in editor.message.text()
    assert not (tmp_path / "empty.json").exists()
