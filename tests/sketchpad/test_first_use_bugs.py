"""First-use bugs: keyboard redo, the sample opened by ``dev.py run``, stale status text, History's first row,
and the articles in tool hints. Driven by real key presses and mouse events on the viewport."""

from __future__ import annotations

import importlib.util
import pathlib

from PySide6.QtCore import Qt
from PySide6.QtGui import QKeySequence

from sketchpad.files import samples_dir

ROOT = pathlib.Path(__file__).resolve().parents[2]


def _place_anchor(window, mouse, x=2.0, y=3.0):
    window.set_tool("place-anchor")
    mouse.click(x, y)
    window.set_tool("select")


def test_redo_keys_are_bound_once_each_and_not_ambiguous(main_window):
    keys = [k.toString() for k in main_window.action_redo.shortcuts()]
    assert len(keys) == len(set(keys)), keys  # a key given twice is an ambiguous shortcut in Qt
    assert "Ctrl+Shift+Z" in keys and "Ctrl+Y" in keys
    assert keys[0] == QKeySequence(QKeySequence.Redo).toString()  # the platform's own key first


def test_ctrl_y_and_ctrl_shift_z_redo_by_key_press(main_window, mouse, qtbot):
    w = main_window
    _place_anchor(w, mouse)
    assert len(w.document.rig.points) == 1
    for redo in ((Qt.Key_Y, Qt.ControlModifier), (Qt.Key_Z, Qt.ControlModifier | Qt.ShiftModifier)):
        qtbot.keyClick(w.view, Qt.Key_Z, Qt.ControlModifier)
        assert len(w.document.rig.points) == 0
        qtbot.keyClick(w.view, *redo)
        assert len(w.document.rig.points) == 1, f"redo by {redo} did nothing"


def test_undo_replaces_the_stale_moving_message(main_window, mouse, qtbot):
    w = main_window
    _place_anchor(w, mouse, 0.0, 0.0)
    mouse.drag(0.0, 0.0, 4.0, 0.0)
    assert w.document.rig.points[0].x == 4.0
    assert "Moving" not in w.statusBar().currentMessage()  # the release says what was done
    qtbot.keyClick(w.view, Qt.Key_Z, Qt.ControlModifier)
    assert w.document.rig.points[0].x == 0.0
    msg = w.statusBar().currentMessage()
    assert msg.startswith("Undid") and "Moving" not in msg


def test_history_first_row_says_how_the_history_started(main_window, mouse):
    w = main_window
    assert w.history_view.emptyLabel() == "New sketch"
    sample = sorted(samples_dir().glob("*.rig.json"))[0]
    w.files.open_sample(sample)
    assert w.history_view.emptyLabel().startswith("Opened a copy of ")
    _place_anchor(w, mouse)
    w.document.undo_stack.setClean()  # File ▸ New would ask about the edit; the question is not under test
    w.files.new()
    assert w.history_view.emptyLabel() == "New sketch"


def test_place_tool_hints_use_the_right_article(main_window):
    hints = {name: t.hint for name, t in main_window.tools.items() if name.startswith("place-")}
    assert hints["place-anchor"].startswith("Click to place an anchor")
    assert hints["place-load"].startswith("Click to place a load")
    assert not any(" a anchor" in h for h in hints.values())


def test_a_sample_given_on_the_command_line_opens_as_an_untitled_copy(main_window, tmp_path):
    from sketchpad.app import open_in_window

    w = main_window
    sample = samples_dir() / "vector-pull.rig.json"
    assert open_in_window(w, sample)
    assert w.document.path is None  # Save asks where instead of overwriting samples/
    assert w.document.rig.points
    own = tmp_path / "mine.rig.json"
    own.write_bytes(sample.read_bytes())
    assert open_in_window(w, own)
    assert w.document.path == own  # a user's own file stays the document's file
    assert open_in_window(w, own, copy=True) and w.document.path is None


def test_dev_run_opens_the_default_sample_as_a_copy():
    spec = importlib.util.spec_from_file_location("dev_script", ROOT / "dev.py")
    dev = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(dev)
    argv = dev.run_command([])
    assert argv[1:3] == ["open", "--copy"] and argv[-1].endswith("raft-3to1-redirect.rig.json")
    from solver.cli import build_parser

    args = build_parser().parse_args(argv[1:])
    assert args.copy and args.rig == argv[-1]


def test_system_menu_entries_say_each_ma_once_and_never_a_bare_dash(main_window):
    menu = main_window.kit.templates.menu
    texts = [a.text() for a in menu.actions() if not a.isSeparator()]
    assert "3:1 (Z)" in texts and "Redirect (1:1)" in texts
    for t in texts:
        ma = t.split(" ")[0]
        assert "—" not in t, t
        assert not (":" in ma and t.endswith(f"({ma})")), t  # "3:1 (Z) (3:1)": the MA said twice


def test_toolbar_drop_downs_show_names_and_set_ids(main_window):
    w = main_window
    assert w.combo_material.currentText() != "kern-11" and "kernmantle" in w.combo_material.currentText()
    assert "pulley" in w.combo_pulley.currentText() and w.combo_pulley.currentText() != "pulley-large"
    w.combo_pulley.setCurrentIndex(w.combo_pulley.findData("pulley-small"))
    assert w.view.defaults.pulley_hardware == "pulley-small"


def _dev():
    spec = importlib.util.spec_from_file_location("dev_script", ROOT / "dev.py")
    dev = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(dev)
    return dev


def test_dev_run_says_what_is_missing_before_qt_fails():
    dev = _dev()
    found, missing = (lambda _name: "libxcb-cursor.so.0"), (lambda _name: None)
    no_display = dev.display_problem({}, "linux", found)
    assert "no display" in no_display and "ropewright screenshot" in no_display
    assert "libxcb-cursor0" in dev.display_problem({"DISPLAY": ":0"}, "linux", missing)
    assert dev.display_problem({"DISPLAY": ":0"}, "linux", found) is None
    assert dev.display_problem({"QT_QPA_PLATFORM": "offscreen"}, "linux", missing) is None
    assert dev.display_problem({}, "darwin", missing) is None


def test_a_history_click_also_drops_the_move_message(main_window, mouse):
    w = main_window
    _place_anchor(w, mouse, 0.0, 0.0)
    mouse.drag(0.0, 0.0, 4.0, 0.0)
    assert w.statusBar().currentMessage().startswith("Moved ")
    w.document.undo_stack.setIndex(1)  # what clicking the History row "Place anchor A1" does
    assert w.document.rig.points[0].x == 0.0
    assert not w.statusBar().currentMessage().startswith(("Moving", "Moved"))
