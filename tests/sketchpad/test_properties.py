"""The property panel edits the selection through undoable commands, in the rig's display units,
and refuses bad input with a message under the field, changing nothing.

Fields are typed into with qtbot.keyClicks and committed with Return, as a user would.
Unit factors: 1 lbf = 4.4482216152605 N, 1 ft = 0.3048 m exactly (NIST SP 811, App. B).
"""

from __future__ import annotations

from dataclasses import replace

import pytest

from solver.units import format_force
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QGraphicsScene

from sketchpad.document import Document
from sketchpad.properties import PropertiesDock, subjects_from_items
from solver import rigfile
from solver.model import Display, Force, Pass, Point, Rig, Rope
from tests.conftest import SAMPLES

LBF = 4.4482216152605  # N, NIST SP 811
FT = 0.3048  # m, NIST SP 811


def _rig() -> Rig:
    return Rig(
        points=(
            Point("A1", "anchor", 0.0, 10.0, label="big alder", capacity_N=20000.0, anchor_type="tree"),
            Point("L1", "load", 0.0, 0.0, label="raft"),
            Point("H1", "haul", 5.0, 10.0, team=3, force_per_person_N=300.0),
            Point("P1", "point", 2.0, 5.0),
        ),
        ropes=(
            Rope("R1", "kern-11", (Pass("L1"), Pass("A1", "pulley", "pulley-large"), Pass("H1", "hauled"))),
        ),
        forces=(Force("P1", 200.0, 90.0, "sideways pull"),),
        title="test rig",
    )


@pytest.fixture
def dock(qtbot):
    doc = Document(_rig())
    d = PropertiesDock(doc)
    d.resize(360, 640)
    qtbot.addWidget(d)
    d.show()
    qtbot.waitExposed(d)
    d.activateWindow()
    return d


def type_into(qtbot, field, text: str) -> None:
    """Select all, type ``text`` and press Return, as a user would."""
    edit = field.edit
    edit.setFocus()
    edit.selectAll()
    qtbot.keyClick(edit, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    qtbot.keyClick(edit, Qt.Key.Key_Delete)
    qtbot.keyClicks(edit, text)
    qtbot.keyClick(edit, Qt.Key.Key_Return)


@pytest.mark.parametrize(
    "typed, words",
    [
        ("12,5 kN", "point for decimals"),
        ("abc", "not a number"),
        ("-3", "more than zero"),
        ("7 m", "not a force"),
    ],
)
def test_bad_capacity_shows_an_inline_message_and_changes_nothing(dock, qtbot, typed, words):
    panel = dock.panel
    panel.show_subject("point", "A1")
    before = panel.document.rig
    field = panel.point_page.capacity
    type_into(qtbot, field, typed)
    assert field.has_error
    assert words in field.error.text()
    assert field.error.text().startswith("Capacity")  # names the field
    assert panel.document.rig == before
    assert panel.document.undo_stack.count() == 0
    assert field.edit.text() == typed  # the user's text stays in front of them to fix
    qtbot.waitUntil(lambda: field.edit.hasFocus(), timeout=1000)  # and the field keeps focus


def test_typing_2_5_kN_sets_2500_N_and_one_undo_restores(dock, qtbot):
    panel = dock.panel
    panel.show_subject("point", "A1")
    field = panel.point_page.capacity
    type_into(qtbot, field, "2.5 kN")
    assert not field.has_error
    assert panel.document.rig.point("A1").capacity_N == pytest.approx(2500.0, rel=1e-12)
    assert panel.document.undo_stack.count() == 1
    panel.document.undo_stack.undo()
    assert panel.document.rig.point("A1").capacity_N == 20000.0
    assert field.edit.text() == "20.0 kN"  # the field follows the model, at the plan's precision


def test_a_fixed_error_clears_when_a_good_value_is_typed(dock, qtbot):
    panel = dock.panel
    panel.show_subject("point", "A1")
    field = panel.point_page.capacity
    type_into(qtbot, field, "abc")
    assert field.has_error
    type_into(qtbot, field, "18")  # a bare number is in the display unit (kN)
    assert not field.has_error
    assert panel.document.rig.point("A1").capacity_N == pytest.approx(18000.0)


def test_imperial_display_shows_and_reads_feet_and_pounds(dock, qtbot):
    panel = dock.panel
    doc = panel.document
    doc.apply(replace(doc.rig, display=Display(length="ft", force="lbf")), "Imperial")
    panel.show_subject("point", "A1")
    page = panel.point_page
    # 20 000 N / 4.4482216152605 N/lbf = 4496.18 lbf (NIST SP 811 factor)
    assert page.capacity.edit.text() == format_force(20000.0, "lbf")  # as the plan and dock print it: 4 496 lbf
    # 10 m / 0.3048 m/ft = 32.808 ft
    assert page.y.edit.text() == "32.8 ft"  # 10 m / 0.3048 m/ft = 32.808 ft, at the plan's precision
    type_into(qtbot, page.capacity, "1000")  # bare number: pounds-force
    assert doc.rig.point("A1").capacity_N == pytest.approx(1000 * LBF, rel=1e-12)
    type_into(qtbot, page.x, "10")  # bare number: feet
    assert doc.rig.point("A1").x == pytest.approx(10 * FT, rel=1e-12)
    type_into(qtbot, page.capacity, "3 kN")  # an explicit unit wins
    assert doc.rig.point("A1").capacity_N == pytest.approx(3000.0)


def test_units_combo_on_the_rig_page_switches_the_display(dock, qtbot):
    panel = dock.panel
    panel.show_subject(None)
    rp = panel.rig_page
    rp.force_unit_box.setCurrentIndex(rp.force_unit_box.findData("lbf"))
    rp.length_unit_box.setCurrentIndex(rp.length_unit_box.findData("ft"))
    assert panel.document.rig.display == Display(length="ft", force="lbf")
    panel.show_subject("point", "H1")
    assert panel.point_page.per_person.edit.text().endswith("lbf")


def test_haul_team_fields_and_total(dock, qtbot):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("point", "H1")
    page = panel.point_page
    assert not page.team.isHidden() and page.capacity.isHidden()
    type_into(qtbot, page.team, "4")
    assert doc.rig.point("H1").team == 4
    assert doc.rig.point("H1").haul_force == pytest.approx(1200.0)
    type_into(qtbot, page.team, "2.5")
    assert page.team.has_error and "whole number" in page.team.error.text()
    page.team.revert()
    type_into(qtbot, page.total, "1.5 kN")
    assert doc.rig.point("H1").haul_force == pytest.approx(1500.0)
    assert "1.50 kN" in page.haul_hint.text()


def test_clearing_an_optional_field_removes_the_value(dock, qtbot):
    panel = dock.panel
    panel.show_subject("point", "A1")
    type_into(qtbot, panel.point_page.capacity, "")
    assert panel.document.rig.point("A1").capacity_N is None


def test_label_and_kind_edit_the_point(dock, qtbot):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("point", "P1")
    page = panel.point_page
    type_into(qtbot, page.label, "master point")
    assert doc.rig.point("P1").label == "master point"
    page.kind.setCurrentIndex(page.kind.findData("anchor"))
    assert doc.rig.point("P1").kind == "anchor"
    assert not page.capacity.isHidden()
    assert doc.undo_stack.count() == 2


def test_mass_field_only_in_elevation(dock, qtbot):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("point", "L1")
    assert panel.point_page.mass.isHidden()
    doc.apply(replace(doc.rig, view="elevation"), "Elevation")
    assert not panel.point_page.mass.isHidden()
    type_into(qtbot, panel.point_page.mass, "80 kg")
    assert doc.rig.point("L1").mass_kg == 80.0


def test_rope_material_slack_and_pass_hardware(dock, qtbot, tmp_path):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("rope", "R1")
    page = panel.rope_page
    assert page.material.findData("kern-11") >= 0 and page.material.findData("webbing-25") >= 0
    page.material.setCurrentIndex(page.material.findData("kern-12.5"))
    assert doc.rig.rope("R1").material == "kern-12.5"
    type_into(qtbot, page.slack, "0.5 m")
    assert doc.rig.rope("R1").rigged.slack_m == 0.5
    type_into(qtbot, page.slack, "-1")
    assert page.slack.has_error and "less than zero" in page.slack.error.text()
    how, hw = page._pass_widgets[1]
    how.setCurrentIndex(how.findData("edge"))
    assert doc.rig.rope("R1").path[1].how == "edge"
    assert doc.rig.rope("R1").path[1].hardware.startswith("edge-")  # an edge needs an edge spec
    hw.setCurrentIndex(hw.findData("edge-steel"))
    assert doc.rig.rope("R1").path[1].hardware == "edge-steel"
    assert "(none)" not in [hw.itemText(i) for i in range(hw.count())]  # an edge pass must name its edge
    first_how, _ = page._pass_widgets[0]
    assert not first_how.isEnabled()  # a rope's first pass is always tied
    page.setup.setCurrentIndex(page.setup.findData("pretension"))
    assert doc.rig.rope("R1").rigged.pretension_N is not None
    type_into(qtbot, page.pretension, "1 kN")
    assert doc.rig.rope("R1").rigged.pretension_N == 1000.0
    rigfile.save_rig(doc.rig, tmp_path / "edited.rig.json")  # every edit left a rig the file format accepts


def test_tied_pass_takes_a_termination_and_a_rope_grab_each_undoable(dock, qtbot, tmp_path):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("rope", "R1")
    page = panel.rope_page
    term = page._term_widgets[0]  # the rope's first pass: always tied
    assert not term.isHidden()
    term.setCurrentIndex(term.findData("figure-8-loop"))
    assert doc.rig.rope("R1").path[0].termination == "figure-8-loop"
    assert "75 % of MBS" in term.currentText().replace("%", " %").replace("  ", " ")
    _, hw = page._pass_widgets[0]
    assert hw.findData("prusik-3-wrap") >= 0  # a tied pass offers the rope grabs
    hw.setCurrentIndex(hw.findData("prusik-3-wrap"))
    assert doc.rig.rope("R1").path[0].hardware == "prusik-3-wrap"
    doc.undo_stack.undo()
    assert doc.rig.rope("R1").path[0].hardware != "prusik-3-wrap"
    doc.undo_stack.undo()
    assert doc.rig.rope("R1").path[0].termination is None
    doc.undo_stack.redo()
    assert doc.rig.rope("R1").path[0].termination == "figure-8-loop"
    how, _ = page._pass_widgets[1]
    if how.findData("pulley") >= 0:  # a middle pass over a pulley hides the termination choice
        how.setCurrentIndex(how.findData("pulley"))
        assert page._term_widgets[1].isHidden()
    rigfile.save_rig(doc.rig, tmp_path / "edited.rig.json")


def test_force_magnitude_and_direction(dock, qtbot):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("force", 0)
    page = panel.force_page
    type_into(qtbot, page.magnitude, "0.3 kN")
    type_into(qtbot, page.direction, "-90°")  # a bearing: -90 = 270 = west = 180 deg from east, anticlockwise
    f = doc.rig.forces[0]
    assert f.magnitude_N == pytest.approx(300.0) and f.direction_deg == 180.0


def test_rig_page_when_nothing_selected(dock, qtbot):
    panel = dock.panel
    doc = panel.document
    panel.set_selection([])
    assert panel.stack.currentWidget() is panel.rig_page
    rp = panel.rig_page
    type_into(qtbot, rp.title, "Kestrel Bend")
    type_into(qtbot, rp.min_sf, "0.5")
    assert rp.min_sf.has_error and doc.rig.settings.min_safety_factor == 10.0
    type_into(qtbot, rp.min_sf, "12")
    rp.motion.setCurrentIndex(rp.motion.findData("lower"))
    assert doc.rig.title == "Kestrel Bend"
    assert doc.rig.settings.min_safety_factor == 12.0 and doc.rig.settings.motion == "lower"


def test_deleting_the_selected_point_falls_back_to_the_rig_page(dock):
    panel = dock.panel
    doc = panel.document
    panel.show_subject("point", "P1")
    doc.apply(doc.rig.without_point("P1"), "Delete")
    assert panel.stack.currentWidget() is panel.rig_page


def test_selection_in_a_scene_picks_the_page(dock, qtbot):
    from PySide6.QtWidgets import QGraphicsRectItem, QGraphicsItem

    class Keyed(QGraphicsRectItem):
        def __init__(self, key):
            super().__init__(0, 0, 1, 1)
            self.key = key
            self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIsSelectable)

    scene = QGraphicsScene()
    a, r = Keyed(("point", "A1")), Keyed(("rope", "R1"))
    scene.addItem(a)
    scene.addItem(r)
    dock.follow_scene(scene)
    a.setSelected(True)
    assert dock.panel.stack.currentWidget() is dock.panel.point_page
    r.setSelected(True)
    assert dock.panel.stack.currentWidget() is dock.panel.multi_page
    a.setSelected(False)
    assert dock.panel.stack.currentWidget() is dock.panel.rope_page
    assert subjects_from_items([a, r]) == [("point", "A1"), ("rope", "R1")]


def test_every_sample_shows_every_point_and_rope_without_error(qtbot):
    for path in sorted(SAMPLES.glob("*.rig.json")):
        doc = Document(rigfile.load_rig(path))
        d = PropertiesDock(doc)
        qtbot.addWidget(d)
        for p in doc.rig.points:
            d.panel.show_subject("point", p.id)
            assert d.panel.stack.currentWidget() is d.panel.point_page
        for r in doc.rig.ropes:
            d.panel.show_subject("rope", r.id)
            assert len(d.panel.rope_page._pass_widgets) == len(r.path)


def test_clicking_a_point_on_the_canvas_shows_it_in_the_main_window_panel(main_window, mouse, qtbot):
    w = main_window
    w.set_tool("place-anchor")
    mouse.click(2.0, 3.0)
    aid = w.document.rig.points[-1].id
    w.set_tool("select")
    mouse.click(2.0, 3.0)
    panel = w.properties_dock.panel
    assert panel.subject == ("point", aid)
    type_into(qtbot, panel.point_page.capacity, "2.5 kN")
    assert w.document.rig.point(aid).capacity_N == pytest.approx(2500.0)
    w.undo()
    assert w.document.rig.point(aid).capacity_N is None
    mouse.click(-8.0, -8.0)  # empty space: nothing selected, the rig itself
    assert panel.subject == (None, None)


def test_a_drag_elsewhere_leaves_the_rig_page_as_it_is(dock, qtbot):
    # A drag step changes points only: the rig page keeps what it shows, a refused entry with its
    # message included (the rigger's typo is not wiped by an unrelated edit); a change of the rig's
    # own settings (here an undo-able edit from elsewhere) shows the new value.
    panel = dock.panel
    doc = panel.document
    panel.set_selection([])
    rp = panel.rig_page
    type_into(qtbot, rp.min_sf, "0.5")
    rp.min_sf.edit.clearFocus()
    assert rp.min_sf.has_error
    doc.preview(doc.rig.moved("P1", 3.0, 5.5))
    assert rp.min_sf.has_error and rp.min_sf.edit.text() == "0.5"
    doc.apply(replace(doc.rig, settings=replace(doc.rig.settings, min_safety_factor=8.0)), "Change rig settings")
    assert not rp.min_sf.has_error and float(rp.min_sf.edit.text().split()[0].rstrip(":1")) == 8.0


def test_a_pass_turned_into_a_capture_holds_with_the_kits_grab_and_the_grab_can_be_changed(dock, qtbot, tmp_path):
    # issue 22: a progress capture runs as its pulley and holds with a rope grab (its slip force counts)
    from solver.model import Hardware

    panel = dock.panel
    doc = panel.document
    strong = Hardware("g-strong", "grab", mbs_N=30000.0, slip_N=12000.0, label="strong grab")
    doc.replace_all(replace(doc.rig, hardware=doc.rig.hardware + (strong,)))
    panel.show_subject("rope", "R1")
    page = panel.rope_page
    how, _hw = page._pass_widgets[1]
    grab_box = page._grab_widgets[1]
    assert not grab_box.isVisibleTo(page)  # only a capture holds with a grab
    how.setCurrentIndex(how.findData("capture"))
    ps = doc.rig.rope("R1").path[1]
    assert (ps.how, ps.grab) == ("capture", "prusik-3-wrap") and ps.hardware
    assert grab_box.isVisibleTo(page)
    grab_box.setCurrentIndex(grab_box.findData("g-strong"))
    assert doc.rig.rope("R1").path[1].grab == "g-strong"
    doc.undo_stack.undo()
    assert doc.rig.rope("R1").path[1].grab == "prusik-3-wrap"
    rigfile.save_rig(doc.rig, tmp_path / "capture.rig.json")  # the file format accepts it


def test_capacity_kind_is_chosen_in_the_panel_and_names_the_field(dock, qtbot):
    # The panel says which number is being entered: a breaking strength (÷ safety factor) or a rated
    # working load (no factor); choosing one is one undoable edit.
    panel = dock.panel
    panel.show_subject("point", "A1")
    page = panel.point_page
    assert page.capacity_kind.currentData() == "strength"
    assert page.form.labelForField(page.capacity).text() == "Breaking strength"
    page.capacity_kind.setCurrentIndex(page.capacity_kind.findData("working"))
    assert panel.document.rig.point("A1").capacity_kind == "working"
    assert page.form.labelForField(page.capacity).text() == "Working load"
    assert panel.document.undo_stack.count() == 1
    panel.document.undo_stack.undo()
    assert panel.document.rig.point("A1").capacity_kind == "strength"
    assert page.capacity_kind.currentData() == "strength"


def test_a_force_direction_is_typed_and_shown_as_a_bearing_from_north(dock, qtbot):
    # The file keeps direction_deg counter-clockwise from east (rig-format.md); the panel reads and takes a
    # bearing clockwise from north. Worked by hand: east is bearing 090 = 0 deg maths; the test force points
    # north (90 deg maths) = bearing 000; typing 225 (south-west) stores 90 - 225 = -135 = 225 deg maths.
    panel = dock.panel
    panel.show_subject("force", 0)
    page = panel.force_page
    assert page.direction.edit.text() == "0"
    assert "bearing" in page.form.labelForField(page.direction).text()
    type_into(qtbot, page.direction, "90")
    assert panel.document.rig.forces[0].direction_deg == pytest.approx(0.0)
    type_into(qtbot, page.direction, "225")
    assert panel.document.rig.forces[0].direction_deg == pytest.approx(225.0)
    type_into(qtbot, page.direction, "300°")
    assert panel.document.rig.forces[0].direction_deg == pytest.approx(150.0)  # WNW: 90 - 300 + 360
    assert page.direction.toolTip() == "300° (WNW)"
