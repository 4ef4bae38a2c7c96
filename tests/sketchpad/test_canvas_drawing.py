"""Drawing a rig from nothing through the viewport: place tools, rope tool with passes, force, feature, measure."""

from __future__ import annotations


import pytest
from PySide6.QtCore import Qt

from solver.model import Pass, Point, Rig, Rope


def place(window, mouse, tool: str, x: float, y: float) -> str:
    window.set_tool(tool)
    mouse.click(x, y)
    return window.document.rig.points[-1].id


def test_draw_three_to_one_from_nothing_builds_the_rig_and_solves_to_ideal_ma_3(main_window, mouse):
    w = main_window
    a = place(w, mouse, "place-anchor", 0.0, 20.0)
    ld = place(w, mouse, "place-load", 0.0, 0.0)
    h = place(w, mouse, "place-haul", 0.0, 14.0)  # hauling up the line: every strand parallel
    assert [p.kind for p in w.document.rig.points] == ["anchor", "load", "haul"]
    w.set_tool("rope")
    mouse.click(0.0, 0.0)  # the load: first pass is always tied
    mouse.click(0.0, 8.0, Qt.ControlModifier)  # empty space: a new free point, rope grab (tied)
    mouse.click(0.0, 20.0, Qt.ShiftModifier)  # anchor pulley
    mouse.click(0.0, 8.0, Qt.ShiftModifier)  # back to the grab: travelling pulley
    mouse.click(0.0, 14.0)  # the haul team ends the rope, hauled
    rig = w.document.rig
    assert len(rig.ropes) == 1
    rope = rig.ropes[0]
    grab = next(p for p in rig.points if p.kind == "point")
    assert (grab.x, grab.y) == pytest.approx((0.0, 8.0), abs=0.05)  # one pixel at 20 px/m
    assert [(ps.at, ps.how, ps.hardware) for ps in rope.path] == [
        (ld, "tied", None),
        (grab.id, "tied", None),
        (a, "pulley", "pulley-large"),
        (grab.id, "pulley", "pulley-large"),
        (h, "hauled", None),
    ]
    assert rope.material == "kern-11"
    # three placements + one rope: four undo steps, the rope (with its new free point) is one of them
    assert w.document.undo_stack.count() == 4
    assert w.tool.name == "rope"  # haul point finished the rope but the tool stays for the next one
    # the rig as drawn, solved. T-method tension summation for a Z-rig with parallel strands
    # (shared/references/check-values.md, "Pulley friction"): ideal MA 3, actual 1 + eta + eta^2
    from solver.analysis import analyse
    from solver.materials import hardware_for

    result = analyse(rig)
    assert result.status == "ok", result.message
    eta = hardware_for(rig, "pulley-large").efficiency
    assert result.ma_ideal == pytest.approx(3.0, rel=1e-3), f"ideal MA {result.ma_ideal} vs T-method 3"
    assert result.ma_actual == pytest.approx(1 + eta + eta**2, rel=1e-3), f"MA {result.ma_actual} vs {1 + eta + eta**2}"
    w.undo()
    assert w.document.rig.ropes == () and not any(p.kind == "point" for p in w.document.rig.points)


def test_rope_passes_follow_the_toolbar_default_and_double_click_ends_tied(main_window, mouse):
    w = main_window
    w.document.replace_all(Rig(points=(Point("A1", "anchor", -10, 0), Point("A2", "anchor", 10, 0))))
    w.combo_how.setCurrentIndex(w.combo_how.findData("sliding"))
    w.set_tool("rope")
    mouse.click(-10, 0)
    mouse.click(0, -5)  # a free point in the middle: sliding from the toolbar default
    mouse.double_click(10, 0)
    rope = w.document.rig.ropes[0]
    assert [p.how for p in rope.path] == ["tied", "sliding", "tied"]
    assert w.document.undo_stack.count() == 1


def test_enter_finishes_a_rope_and_esc_drops_it_with_its_new_points(main_window, mouse):
    w = main_window
    w.document.replace_all(Rig(points=(Point("A1", "anchor", -10, 0),)))
    w.set_tool("rope")
    mouse.click(-10, 0)
    mouse.click(0, 5)
    mouse.key(Qt.Key_Escape)
    assert w.document.rig == Rig(points=(Point("A1", "anchor", -10, 0),))
    assert w.document.undo_stack.count() == 0
    assert w.tool.name == "select"
    w.set_tool("rope")
    mouse.click(-10, 0)
    mouse.click(0, 5, Qt.ControlModifier | Qt.ShiftModifier)
    mouse.click(6, 0)
    mouse.key(Qt.Key_Return)
    rope = w.document.rig.ropes[0]
    assert [(p.how, p.hardware) for p in rope.path] == [("tied", None), ("edge", "edge-rock"), ("tied", None)]


def test_rope_items_draw_the_glyph_for_each_pass(main_window):
    w = main_window
    rig = Rig(
        points=(Point("L1", "load", 0, 0), Point("G", "point", 0, 5), Point("A", "anchor", 0, 10),
                Point("E", "point", 5, 10), Point("H", "haul", 8, 4)),
        ropes=(Rope("r", "kern-11", (
            Pass("L1"), Pass("G"), Pass("A", "pulley", "pulley-large"), Pass("E", "edge", "edge-rock"),
            Pass("G", "sliding"), Pass("H", "hauled"))),),
    )
    w.document.replace_all(rig)
    item = w.canvas.item_for(("rope", "r"))
    assert item.glyph_kinds() == ["tied", "tied", "pulley", "edge", "sliding", "hauled"]


def test_force_tool_drag_east_gives_zero_degrees_and_north_ninety(main_window, mouse):
    w = main_window
    w.document.replace_all(Rig(points=(Point("V1", "point", 0, 0), Point("A1", "anchor", 10, 0))))
    w.set_tool("force")
    mouse.drag(0, 0, 4, 0)
    mouse.drag(0, 0, 0, 3)
    mouse.drag(10, 0, 14, 0)  # an anchor is held still: no force
    forces = w.document.rig.forces
    assert [(f.at, f.direction_deg) for f in forces] == [("V1", pytest.approx(0.0, abs=0.5)), ("V1", pytest.approx(90.0, abs=0.5))]
    assert all(f.magnitude_N == w.view.defaults.force_N for f in forces)
    assert w.canvas.item_for(("force", 1)) is not None


def test_feature_tool_closes_a_polygon_on_enter(main_window, mouse):
    w = main_window
    w.combo_feature.setCurrentIndex(w.combo_feature.findData("boulder"))
    w.set_tool("feature")
    for x, y in ((0, 0), (4, 0), (4, 3)):
        mouse.click(x, y)
    mouse.key(Qt.Key_Enter)
    (f,) = w.document.rig.site.features
    assert f.kind == "boulder"
    assert [c for xy in f.polygon for c in xy] == pytest.approx([0, 0, 4, 0, 4, 3], abs=0.05)
    assert w.canvas.item_for(("feature", f.id)) is not None


def test_measure_tool_reads_a_3_4_5_triangle_as_5_m(main_window, mouse):
    w = main_window
    w.set_tool("measure")
    mouse.drag(0, 0, 3, 4)
    # Pythagoras: sqrt(3^2 + 4^2) = 5; one pixel at 20 px/m is 0.05 m
    assert w.tool.last_m == pytest.approx(5.0, abs=0.08)
    assert "5" in w.statusBar().currentMessage()
    assert w.document.undo_stack.count() == 0  # measuring changes nothing


def test_snap_to_grid_rounds_a_placement_to_the_grid(main_window, mouse):
    w = main_window
    w.action_snap_grid.trigger()
    step = w.view.grid_step_m()
    place(w, mouse, "place-anchor", 1.3 * step, 2.2 * step)
    p = w.document.rig.points[-1]
    assert (p.x, p.y) == pytest.approx((1.0 * step, 2.0 * step), abs=1e-9)


def test_placing_onto_an_existing_point_is_refused_while_point_snap_is_on(main_window, mouse):
    w = main_window
    place(w, mouse, "place-anchor", 0, 0)
    mouse.click(0.1, 0.1)
    assert len(w.document.rig.points) == 1


def test_imperial_switch_is_stored_in_the_rig_and_undoable(main_window, mouse):
    w = main_window
    w.unit_actions["imperial"].trigger()
    assert (w.document.rig.display.length, w.document.rig.display.force) == ("ft", "lbf")
    mouse.move(3.048, 0.0, buttons=Qt.NoButton)  # 3.048 m = 10 ft exactly (NIST SP 811: 1 ft = 0.3048 m)
    assert "ft" in w.cursor_label.text() and "10" in w.cursor_label.text()
    w.undo()
    assert w.document.rig.display.length == "m"
    assert w.unit_actions["metric"].isChecked()
