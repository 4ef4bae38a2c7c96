"""Insert ▸ System: placing ready-made systems by clicking the sketch, and from the list dialog."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt

from sketchpad.templates_ui import TOOL_NAME, SystemDialog
from solver.model import Hardware, Point, Rig

#: A pulley spec with efficiency 0.90 so the T-method check value of check-values.md applies.
PULLEY_90 = Hardware("pulley-90", "pulley", efficiency=0.90, mbs_N=36000.0, label="test pulley, 90 %")


def site(*extra: Point) -> Rig:
    """A load 20 m below an anchor on the y axis (demo data), with the 90 % pulley embedded."""
    return Rig(points=(Point("L1", "load", 0.0, 0.0), Point("A1", "anchor", 0.0, 20.0)) + extra,
               hardware=(PULLEY_90,))


def start(window, name: str, rig: Rig) -> None:
    window.document.replace_all(rig)
    window.view.defaults.pulley_hardware = "pulley-90"
    window.kit.templates.start(name)


def status(window) -> str:
    return window.statusBar().currentMessage()


def test_three_to_one_placed_by_clicking_load_anchor_and_haul_solves_to_ideal_3_actual_2_71(main_window, mouse):
    w = main_window
    start(w, "3:1", site())
    assert w.tool.name == TOOL_NAME
    assert "click the load" in status(w)
    mouse.click(0.0, 0.0)
    assert "click the anchor" in status(w)
    mouse.move(0.0, 10.0, buttons=Qt.NoButton)  # the rubber line follows the mouse; nothing is placed yet
    mouse.click(0.0, 20.0)
    assert "haul team" in status(w)
    assert w.document.undo_stack.count() == 0
    mouse.click(0.0, 16.0)  # haul team between the grab and the anchor: every strand parallel
    rig = w.document.rig
    assert w.document.undo_stack.count() == 1
    assert len(rig.ropes) == 1
    grab = next(p for p in rig.points if p.kind == "point")
    haul = next(p for p in rig.points if p.kind == "haul")
    assert (haul.x, haul.y) == pytest.approx((0.0, 16.0), abs=0.05)  # one pixel at 20 px/m
    assert [(p.at, p.how, p.hardware) for p in rig.ropes[0].path] == [
        ("L1", "tied", None), (grab.id, "tied", None), ("A1", "capture", "pulley-90"),
        (grab.id, "pulley", "pulley-90"), (haul.id, "hauled", None)]
    from solver.analysis import analyse

    result = analyse(rig)
    assert result.status == "ok", result.message
    # T-method, 3:1 (Z) with parallel strands: ideal 3, actual 1 + eta + eta^2 = 2.710 at eta 0.90
    # (shared/references/check-values.md, "Pulley friction and actual mechanical advantage")
    assert result.ma_ideal == pytest.approx(3.0, rel=1e-4)
    assert result.ma_actual == pytest.approx(2.710, abs=5e-4), f"actual MA {result.ma_actual} vs 2.710"
    w.undo()
    assert w.document.rig == site(), "one undo removes the whole system"


def test_esc_in_the_middle_of_picking_leaves_the_rig_untouched_and_returns_to_select(main_window, mouse):
    w = main_window
    start(w, "3:1", site())
    before = w.document.rig
    mouse.click(0.0, 0.0)
    mouse.click(0.0, 20.0)
    mouse.key(Qt.Key_Escape)
    assert w.document.rig == before
    assert w.document.undo_stack.count() == 0
    assert w.tool.name == "select"
    mouse.click(0.0, 16.0)  # a later click with the select tool places nothing
    assert w.document.rig == before


def test_clicking_empty_space_for_the_load_says_what_to_click_and_places_nothing(main_window, mouse):
    w = main_window
    start(w, "3:1", site())
    mouse.click(5.0, 5.0)
    assert "not a load" in status(w)
    mouse.click(0.0, 20.0)  # the anchor is not a load either
    assert "not a load" in status(w)
    assert w.document.undo_stack.count() == 0 and w.document.rig == site()


def test_enter_after_the_anchor_places_the_haul_team_at_the_default_place(main_window, mouse):
    w = main_window
    start(w, "2:1", site())
    mouse.click(0.0, 0.0)
    mouse.click(0.0, 20.0)
    mouse.key(Qt.Key_Return)
    rig = w.document.rig
    haul = next(p for p in rig.points if p.kind == "haul")
    # default: 5 m beyond the anchor along the load->anchor line (solver.templates.DEFAULT_HAUL_DISTANCE_M)
    assert (haul.x, haul.y) == pytest.approx((0.0, 25.0))
    assert w.document.undo_stack.count() == 1


def test_compound_2_on_3_takes_a_second_anchor_click_and_solves_to_the_t_method_5_149(main_window, mouse):
    w = main_window
    start(w, "6:1", site(Point("A2", "anchor", 0.0, 22.0)))  # second anchor in line: strands parallel
    mouse.click(0.0, 0.0)
    mouse.click(0.0, 20.0)
    assert "another anchor" in status(w)
    mouse.click(0.0, 22.0)
    assert w.document.undo_stack.count() == 0
    mouse.click(0.0, 18.0)
    rig = w.document.rig
    assert w.document.undo_stack.count() == 1
    second = [r for r in rig.ropes if r.path[0].at == "A2"]
    assert len(second) == 1, "the 2:1 stage hangs from the second anchor picked"
    from solver.analysis import analyse

    result = analyse(rig)
    assert result.status == "ok", result.message
    # compound 2:1 on 3:1 = (1 + eta)(1 + eta + eta^2) = 5.149 at eta 0.90, ideal 6
    # (shared/references/check-values.md, "Pulley friction and actual mechanical advantage")
    assert result.ma_ideal == pytest.approx(6.0, rel=1e-4)
    assert result.ma_actual == pytest.approx(5.149, abs=5e-4)


def test_two_anchor_tensioned_line_is_placed_on_the_second_anchor_click(main_window, mouse):
    w = main_window
    start(w, "tensioned-line", site(Point("A2", "anchor", 10.0, 20.0)))
    mouse.click(0.0, 0.0)  # the load is not an anchor: refused
    assert "not an anchor" in status(w)
    mouse.click(0.0, 20.0)
    mouse.click(0.0, 20.0)  # the same anchor twice: refused
    assert w.document.undo_stack.count() == 0
    mouse.click(10.0, 20.0)
    rig = w.document.rig
    assert [(p.at, p.how) for p in rig.ropes[0].path] == [("A1", "tied"), ("A2", "tied")]
    assert rig.ropes[0].rigged.pretension_N == pytest.approx(1000.0)


def test_a_system_that_cannot_be_built_says_why_and_changes_nothing(main_window, mouse):
    w = main_window
    start(w, "3:1", site())
    w.view.defaults.pulley_hardware = "no-such-pulley"
    mouse.click(0.0, 0.0)
    mouse.click(0.0, 20.0)
    mouse.click(0.0, 16.0)
    assert "no-such-pulley" in status(w)
    assert w.document.rig == site() and w.document.undo_stack.count() == 0


def test_insert_system_menu_lists_every_template_with_its_ideal_ma(main_window):
    from solver.templates import TEMPLATES

    kit = main_window.kit.templates
    texts = [a.text() for a in kit.menu.actions() if a.text()]
    assert kit.menu.menuAction() in main_window.menu_insert.actions()
    for name, tpl in TEMPLATES.items():
        assert any(t.startswith(tpl.title) for t in texts), name
    # each entry says its ideal MA once: in the title, else in brackets after it
    assert kit.actions["3:1"].text() == "3:1 (Z)" and kit.actions["9:1"].text().startswith("9:1 ")
    assert kit.actions["redirect"].text() == "Redirect (1:1)"
    kit.actions["5:1"].trigger()
    assert main_window.tool.name == TOOL_NAME and main_window.tool.template == "5:1"


def test_dialog_places_the_chosen_system_from_the_keyboard_in_one_undo_step(main_window, qtbot):
    w = main_window
    w.document.replace_all(site(Point("H9", "haul", 0.0, 16.0, team=3, force_per_person_N=220.0)))
    w.view.defaults.pulley_hardware = "pulley-90"
    dialog = w.kit.templates.make_dialog()
    qtbot.addWidget(dialog)
    dialog.show()
    dialog.select_template("3:1")
    assert dialog.ma_label.text() == "3:1"
    assert "rope grab" in dialog.description.text()
    dialog.haul_box.setCurrentIndex(dialog.haul_box.findData("H9"))
    qtbot.mouseClick(dialog.place_button, Qt.LeftButton)
    rig = w.document.rig
    assert w.document.undo_stack.count() == 1
    assert rig.ropes[0].path[-1].at == "H9", "the existing haul team ends the rope"
    w.undo()
    assert w.document.rig.ropes == ()


def test_dialog_with_no_load_in_the_sketch_says_so_and_places_nothing(main_window, qtbot):
    w = main_window
    w.document.replace_all(Rig(points=(Point("A1", "anchor", 0.0, 20.0),)))
    dialog = SystemDialog(w.document, w.view.defaults, w)
    qtbot.addWidget(dialog)
    dialog.select_template("3:1")
    assert not dialog.place()
    assert "no load" in dialog.error.text()
    assert w.document.undo_stack.count() == 0


def test_anchor_system_without_a_load_puts_the_master_point_where_clicked_and_says_nothing_pulls_yet(main_window, mouse):
    w = main_window
    start(w, "anchor-shared", site(Point("A2", "anchor", 6.0, 20.0)))
    assert "click anchor 1" in status(w)
    mouse.click(0.0, 20.0)
    mouse.click(6.0, 20.0)
    assert "master point" in status(w)
    mouse.click(3.0, 16.0)
    rig = w.document.rig
    master = next(p for p in rig.points if p.kind == "point")
    assert (master.x, master.y) == pytest.approx((3.0, 16.0), abs=0.05)
    assert sorted(r.path[0].at for r in rig.ropes) == ["A1", "A2"], "one sling from each anchor"
    assert "Nothing pulls on the master point" in status(w)
