"""Done-when test of issue 18: a first rig from an empty sketch, as a newcomer would draw it, with real key
presses and mouse events on the viewport, checking what the screen shows at each step.

Load, anchor and haul team by their tool keys; the rope from the load over a pulley at the anchor (a 1:1
redirect) to the haul team; undo, and redo by keyboard.  The forces shown are checked against the
redirect's own statics: the haul team's pull times the pulley's efficiency reaches the load.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from solver.completeness import START_HINT
from solver.materials import hardware_for
from solver.units import format_force

LOAD, ANCHOR, HAUL = (0.0, 0.0), (0.0, 12.0), (9.0, 3.0)


def settle(window):
    QApplication.processEvents()
    window.live.scheduler.solve_now()
    QApplication.processEvents()


def screen_words(window) -> str:
    """Every word the canvas shows a reader: hint strip, failure banner, the key's lines, placed labels."""
    ov = window.live.overlay
    labels = [lab.text for lab in ov.labels if lab.placed]
    key = ov.legend.lines if ov.legend.shown else []
    return "\n".join([window.hints.shown_text(), ov.banner_text, *key, *labels])


def history(window) -> list[str]:
    stack = window.document.undo_stack
    return [window.history_view.emptyLabel()] + [stack.text(i) for i in range(stack.index())]


def test_a_first_redirect_from_an_empty_sketch(main_window, mouse, qtbot):
    w = main_window
    view = w.view
    w.activateWindow()
    view.setFocus()
    qtbot.waitUntil(lambda: view.hasFocus())
    # 1. the empty sketch says where to start
    assert w.hints.shown_text() == START_HINT
    assert history(w) == ["New sketch"]

    # 2. load, anchor and haul team, each by its tool key and a click
    for key, name, xy in ((Qt.Key_L, "place-load", LOAD), (Qt.Key_A, "place-anchor", ANCHOR),
                          (Qt.Key_H, "place-haul", HAUL)):
        qtbot.keyClick(view, key)
        assert w.tool.name == name
        assert w.tool.hint in w.hints.shown_text()  # the whole tool hint on the canvas
        mouse.click(*xy)
        settle(w)
        assert w.live.overlay.banner_text == ""  # a sketch being drawn: never the red alarm
    assert [p.kind for p in w.document.rig.points] == ["load", "anchor", "haul"]
    assert "Sketch incomplete: L1 is not held by any rope yet" in screen_words(w)
    assert history(w) == ["New sketch", "Place load L1", "Place anchor A1", "Place haul team H1"]

    # 3. the rope tool tells how to get a pulley; the rope runs from the load, Shift+click makes the pulley
    qtbot.keyClick(view, Qt.Key_R)
    assert w.tool.name == "rope"
    assert "over a pulley (Shift+click)" in w.hints.shown_text()
    mouse.click(*LOAD)
    mouse.click(*ANCHOR, modifiers=Qt.ShiftModifier)
    assert "Rope: L1 → A1" in w.statusBar().currentMessage()
    mouse.click(*HAUL)  # a haul team ends the rope, hauled
    settle(w)
    rig = w.document.rig
    assert [(p.at, p.how) for p in rig.ropes[0].path] == [("L1", "tied"), ("A1", "pulley"), ("H1", "hauled")]
    result = w.live.scheduler.result
    assert result.ok
    words = screen_words(w)
    assert "Sketch incomplete" not in words and w.live.overlay.banner_text == ""
    # the redirect's statics: T_load = eta x T_haul across one pulley (the T-method of pulley efficiency,
    # e.g. the efficiency factor of NFPA 1983 / CI 1801 pulley ratings: common practice for rescue pulleys)
    haul = rig.point("H1")
    pull = haul.team * haul.force_per_person_N
    eta = hardware_for(rig, rig.ropes[0].path[1].hardware).efficiency
    to_load = result.loads["L1"].force_N
    assert to_load == pytest.approx(eta * result.haul["H1"], rel=2e-3)
    assert result.haul["H1"] == pytest.approx(pull, rel=1e-9)
    unit = rig.display.force
    assert f"Reaches L1: {format_force(to_load, unit)}." in words  # the key says it in a sentence
    assert f"haul {format_force(pull, unit)}" in words  # the haul team's label on the plan
    assert w.live.panel.segments.proxy.rowCount() == 2  # the Forces dock lists both pieces
    assert history(w)[-1] == "Draw rope rope1"

    # 4. undo by Ctrl+Z, redo by keyboard (both usual keys)
    qtbot.keyClick(view, Qt.Key_Escape)
    assert w.tool.name == "select"
    qtbot.keyClick(view, Qt.Key_Z, Qt.ControlModifier)
    settle(w)
    assert not w.document.rig.ropes
    assert w.statusBar().currentMessage() == "Undid: Draw rope rope1"
    assert "Sketch incomplete" in screen_words(w)
    qtbot.keyClick(view, Qt.Key_Z, Qt.ControlModifier | Qt.ShiftModifier)
    settle(w)
    assert len(w.document.rig.ropes) == 1 and w.live.scheduler.result.ok
    qtbot.keyClick(view, Qt.Key_Z, Qt.ControlModifier)
    qtbot.keyClick(view, Qt.Key_Y, Qt.ControlModifier)
    settle(w)
    assert len(w.document.rig.ropes) == 1
    assert f"Reaches L1: {format_force(w.live.scheduler.result.loads['L1'].force_N, unit)}." in screen_words(w)
    assert w.hints.shown_text() == ""  # finished and holding: nothing over the plan but the plan
