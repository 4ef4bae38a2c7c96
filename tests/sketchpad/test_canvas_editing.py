"""Selecting, dragging, deleting, zooming and panning through the viewport; the screenshot command."""

from __future__ import annotations

import pathlib

import pytest
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtGui import QImage, QWheelEvent
from PySide6.QtWidgets import QApplication

from solver.model import Force, Pass, Point, Rig, Rope
from tests.conftest import SAMPLES

VECTOR = Rig(
    points=(Point("L1", "load", 0, 0), Point("V1", "point", 5, 1), Point("A1", "anchor", 10, 0),
            Point("A2", "anchor", 0, 8)),
    ropes=(Rope("main", "kern-11", (Pass("L1"), Pass("V1", "sliding"), Pass("A1"))),
           Rope("tag", "cord-8", (Pass("V1"), Pass("A2")))),
    forces=(Force("V1", 400.0, 90.0, "sideways pull"),),
)


def test_dragging_a_point_moves_it_with_one_command_and_undo_restores_it_exactly(main_window, mouse):
    w = main_window
    w.document.replace_all(VECTOR)
    mouse.drag(5, 1, 7, -2, steps=6)
    p = w.document.rig.point("V1")
    assert (p.x, p.y) == pytest.approx((7, -2), abs=0.05)
    assert w.document.undo_stack.count() == 1  # six moves, one command
    item = w.canvas.item_for(("point", "V1"))
    assert item.pos().x() == pytest.approx(p.x) and item.pos().y() == pytest.approx(-p.y)
    w.undo()
    assert w.document.rig == VECTOR
    assert item.pos().x() == pytest.approx(5.0) and item.pos().y() == pytest.approx(-1.0)
    w.redo()
    assert w.document.rig.point("V1").x == pytest.approx(7, abs=0.05)


def test_esc_during_a_drag_restores_the_press_time_rig_and_pushes_nothing(main_window, mouse):
    w = main_window
    w.document.replace_all(VECTOR)
    mouse.drag(5, 1, 9, 4, release=False)
    assert w.document.rig.point("V1").x == pytest.approx(9, abs=0.05)  # the preview shows the drag
    mouse.key(Qt.Key_Escape)
    assert w.document.rig == VECTOR
    mouse.release(9, 4)
    assert w.document.rig == VECTOR
    assert w.document.undo_stack.count() == 0
    assert w.tool.name == "select"


def test_a_click_without_moving_selects_and_pushes_nothing(main_window, mouse):
    w = main_window
    w.document.replace_all(VECTOR)
    mouse.click(5, 1)
    assert w.canvas.selected_keys() == [("point", "V1")]
    assert w.document.undo_stack.count() == 0


def test_deleting_a_point_removes_its_passes_forces_and_short_ropes_as_one_undo_step(main_window, mouse):
    w = main_window
    w.document.replace_all(VECTOR)
    mouse.click(5, 1)
    mouse.key(Qt.Key_Delete)
    rig = w.document.rig
    assert not rig.has_point("V1")
    assert rig.forces == ()
    assert [r.id for r in rig.ropes] == ["main"]  # "tag" had only V1 and A2: fewer than 2 passes left
    assert [p.at for p in rig.rope("main").path] == ["L1", "A1"]
    assert set(w.canvas.items_by_key) == {("point", "L1"), ("point", "A1"), ("point", "A2"), ("rope", "main")}
    assert w.document.undo_stack.count() == 1
    w.undo()
    assert w.document.rig == VECTOR
    assert ("force", 0) in w.canvas.items_by_key and ("rope", "tag") in w.canvas.items_by_key


def test_rubber_band_selects_two_points_and_dragging_one_moves_both(main_window, mouse):
    w = main_window
    w.document.replace_all(VECTOR)
    mouse.drag(-2, 10, 3, -3)  # from empty space around L1 and A2 (not V1 at x=5, not A1)
    assert {k for k in w.canvas.selected_keys() if k[0] == "point"} == {("point", "L1"), ("point", "A2")}
    mouse.drag(0, 8, 1, 9)
    rig = w.document.rig
    assert (rig.point("L1").x, rig.point("L1").y) == pytest.approx((1, 1), abs=0.05)
    assert (rig.point("A2").x, rig.point("A2").y) == pytest.approx((1, 9), abs=0.05)
    assert rig.point("V1") == VECTOR.point("V1")
    assert w.document.undo_stack.count() == 1


def test_ctrl_click_adds_to_the_selection_and_delete_removes_a_rope_and_a_point_together(main_window, mouse):
    w = main_window
    w.document.replace_all(VECTOR)
    mouse.click(2.5, 4.5)  # halfway along the "tag" rope V1 -> A2
    assert w.canvas.selected_keys() == [("rope", "tag")]
    mouse.click(10, 0, Qt.ControlModifier)
    assert set(w.canvas.selected_keys()) == {("rope", "tag"), ("point", "A1")}
    w.action_delete.trigger()
    rig = w.document.rig
    assert [r.id for r in rig.ropes] == ["main"] and [p.at for p in rig.rope("main").path] == ["L1", "V1"]
    assert rig.rope("main").path[-1].how == "tied"  # the new end is tied, not sliding
    w.undo()
    assert w.document.rig == VECTOR


def _wheel(view, pos: QPoint, degrees: float) -> None:
    vp = view.viewport()
    ev = QWheelEvent(QPointF(pos), QPointF(vp.mapToGlobal(pos)), QPoint(0, 0), QPoint(0, int(degrees * 8)),
                     Qt.NoButton, Qt.NoModifier, Qt.NoScrollPhase, False)
    QApplication.sendEvent(vp, ev)


def test_wheel_zooms_at_the_cursor_keeping_the_point_under_it(main_window):
    view = main_window.view
    pos = QPoint(200, 150)
    under = view.mapToScene(pos)
    scale = view.px_per_m
    _wheel(view, pos, 45)
    assert view.px_per_m == pytest.approx(scale * 1.01**45)
    after = view.mapFromScene(under)
    assert abs(after.x() - pos.x()) <= 1 and abs(after.y() - pos.y()) <= 1
    _wheel(view, pos, -90)
    assert view.px_per_m < scale
    # rope glyphs follow the zoom: the scene's metres-per-pixel is the view's inverse scale
    assert main_window.canvas.scale_m_per_px == pytest.approx(1 / view.px_per_m)


def test_middle_drag_and_space_drag_pan_without_editing(main_window, mouse, qtbot):
    w = main_window
    w.document.replace_all(VECTOR)
    view = w.view
    before = view.mapToScene(QPoint(300, 300))
    mouse.press(0, 0, button=Qt.MiddleButton)
    mouse.move(2, 0, buttons=Qt.MiddleButton)  # 40 px to the right at 20 px/m
    mouse.release(2, 0, button=Qt.MiddleButton)
    moved = view.mapToScene(QPoint(300, 300))
    assert before.x() - moved.x() == pytest.approx(2.0, abs=0.06)
    qtbot.keyPress(view, Qt.Key_Space)
    mouse.drag_pixels(mouse.at(5, 1), mouse.at(5, 3))  # on V1 - but space is held: it pans, V1 stays
    qtbot.keyRelease(view, Qt.Key_Space)
    assert w.document.rig == VECTOR
    assert w.document.undo_stack.count() == 0
    assert view.mapToScene(QPoint(300, 300)).y() - moved.y() == pytest.approx(2.0, abs=0.06)


def test_zoom_to_fit_shows_every_point(main_window):
    w = main_window
    w.document.replace_all(VECTOR)
    w.view.scale(0.01, 0.01)
    w.action_zoom_fit.trigger()
    vp = w.view.viewport().rect()
    for p in VECTOR.points:
        q = w.view.mapFromScene(QPointF(p.x, -p.y))
        assert vp.contains(q), f"{p.id} at {q} is outside {vp}"


def test_screenshot_command_writes_a_png_of_the_asked_size(tmp_path):
    from solver.cli import main

    out = tmp_path / "shot.png"
    code = main(["screenshot", str(SAMPLES / "raft-3to1-redirect.rig.json"), "-o", str(out), "--size", "900x620"])
    assert code == 0
    image = QImage(str(out))
    assert (image.width(), image.height()) == (900, 620)
    # not a blank picture: the paper colour is not the only colour in the canvas area
    colours = {image.pixel(x, y) for x in range(100, 800, 7) for y in range(150, 560, 7)}
    assert len(colours) > 10


def test_screenshot_command_refuses_a_bad_size_and_a_missing_file(tmp_path, capsys):
    from solver.cli import main

    assert main(["screenshot", str(SAMPLES / "vector-pull.rig.json"), "-o", str(tmp_path / "a.png"), "--size", "big"]) == 2
    assert main(["screenshot", str(tmp_path / "nope.rig.json"), "-o", str(tmp_path / "a.png")]) == 2
    err = capsys.readouterr().err
    assert "1400x900" in err and "no such file" in err
    assert not pathlib.Path(tmp_path / "a.png").exists()
