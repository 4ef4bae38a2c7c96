"""The Haul plan dock driven as a user would: type the travel, plan, drag the scrubber; the drawing is untouched."""

from __future__ import annotations

import pathlib

import pytest
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtWidgets import QApplication, QStyle, QStyleOptionSlider

from sketchpad.geometry import to_site
from solver.haul_settings import haul_settings
from solver.haul_table import stroke_rows
from solver.rigfile import load_rig
from tests.conftest import SAMPLES

SAMPLE = "raft-three-strokes.rig.json"


def open_sample(window):
    """The sample opened and the Haul plan dock opened from Tools > Plan the haul (which plans it once)."""
    rig = load_rig(SAMPLES / SAMPLE)
    window.document.replace_all(rig, pathlib.Path(SAMPLES / SAMPLE))
    window.view.zoom_to_fit()
    assert not window.haul_dock.isVisible()  # closed until asked for: the canvas keeps its room
    window.action_plan_haul.trigger()
    QApplication.processEvents()
    assert window.haul_dock.isVisible() and window.haul_plan.plan is not None
    return rig


def handle_centre(slider) -> QPoint:
    opt = QStyleOptionSlider()
    slider.initStyleOption(opt)
    return slider.style().subControlRect(QStyle.CC_Slider, opt, QStyle.SC_SliderHandle, slider).center()


def test_typed_travel_is_an_undoable_rig_setting(main_window, qtbot):
    open_sample(main_window)
    panel = main_window.haul_plan
    field = panel.travel.edit
    field.setFocus()
    field.selectAll()
    qtbot.keyClicks(field, "1.5")
    qtbot.keyClick(field, Qt.Key_Return)
    assert haul_settings(main_window.document.rig).travel_m == pytest.approx(1.5)
    main_window.document.undo_stack.undo()
    assert haul_settings(main_window.document.rig).travel_m == pytest.approx(1.8)


def test_plan_fills_the_table_and_totals_as_the_command_line_words_them(main_window, qtbot):
    rig = open_sample(main_window)
    panel = main_window.haul_plan
    qtbot.mouseClick(panel.plan_button, Qt.LeftButton)
    plan = panel.plan
    assert plan is not None and plan.ok, plan.message
    rows = stroke_rows(plan, rig.display.length, rig.display.force)
    assert panel.table.rowCount() == len(rows) == 3
    for r, row in enumerate(rows):
        assert [panel.table.item(r, c).text() for c in range(len(row))] == list(row)
    assert "Rope paid in before the load first moves" in panel.summary.text()


def test_dragging_the_scrubber_moves_the_preview_not_the_drawing(main_window, qtbot):
    rig = open_sample(main_window)
    panel = main_window.haul_plan
    qtbot.mouseClick(panel.plan_button, Qt.LeftButton)
    depth = main_window.document.undo_stack.count()
    slider = panel.slider
    start = handle_centre(slider)
    qtbot.mousePress(slider, Qt.LeftButton, pos=start)
    for k in range(1, 6):
        qtbot.mouseMove(slider, QPoint(start.x() + k * (slider.width() - start.x() - 8) // 5, start.y()))
    end = QPoint(slider.width() - 4, start.y())
    qtbot.mouseMove(slider, end)
    qtbot.mouseRelease(slider, Qt.LeftButton, pos=end)
    assert slider.value() > 0
    frame = panel.plan.frames[slider.value()]
    assert panel.ghost.ropes.isVisible()
    # the preview's path runs through the load where the plan has it at that step
    load_xy = frame.points[panel.plan.load]
    path = panel.ghost.ropes.path()
    on_path = [to_site(QPointF(path.elementAt(i).x, path.elementAt(i).y)) for i in range(path.elementCount())]
    assert any(abs(x - load_xy[0]) < 1e-9 and abs(y - load_xy[1]) < 1e-9 for x, y in on_path)
    assert frame.load_travel_m > 0.5
    # and nothing was edited: same rig object, no undo entry
    assert main_window.document.rig == rig and main_window.document.undo_stack.count() == depth
    slider.setValue(0)
    assert not panel.ghost.ropes.isVisible()


def test_a_drawing_changed_after_planning_says_the_plan_is_stale(main_window, qtbot):
    open_sample(main_window)
    panel = main_window.haul_plan
    qtbot.mouseClick(panel.plan_button, Qt.LeftButton)
    rig = main_window.document.rig
    panel.slider.setValue(panel.slider.maximum())
    assert panel.ghost.ropes.isVisible()
    main_window.document.apply(rig.moved("A1", -2.0, 26.0), "move the anchor")
    assert "plan the haul again" in panel.status.text()
    assert not panel.ghost.ropes.isVisible() and not panel.slider.isEnabled()


def test_closing_the_dock_takes_the_preview_off_the_canvas(main_window, qtbot):
    open_sample(main_window)
    panel = main_window.haul_plan
    panel.slider.setValue(panel.slider.maximum() // 2)
    assert panel.ghost.ropes.isVisible()
    main_window.haul_dock.close()
    QApplication.processEvents()
    assert not panel.ghost.ropes.isVisible()


def test_the_preview_paints_a_dot_where_the_travelling_grab_is_at_that_step(main_window, qtbot):
    from sketchpad import theme
    from sketchpad.geometry import to_scene

    open_sample(main_window)
    panel = main_window.haul_plan
    plan = panel.plan
    k = next(i for i, f in enumerate(plan.frames) if f.phase == "stroke" and f.stroke == 2)
    panel.slider.setValue(k)
    grab = plan.frames[k].points["G1"]
    view = main_window.view
    view.centerOn(to_scene(*grab))
    QApplication.processEvents()
    image = view.viewport().grab().toImage()
    at = view.mapFromScene(to_scene(*grab))
    want = theme.HAUL_GHOST

    def close(c) -> bool:  # the preview's blue, drawn part-transparent over paper or the drawing
        return c.blue() - c.red() > 0.6 * (want.blue() - want.red()) and c.blue() > c.green()

    # the rope here runs nearly north-south and is 3 px wide: 3 px either side of it only the dot is blue
    assert close(image.pixelColor(at.x(), at.y()))
    assert close(image.pixelColor(at.x() - 3, at.y())) and close(image.pixelColor(at.x() + 3, at.y())), \
        "the preview's dot is painted where the grab is at that step"
