"""The rope tool as a drawing tool: the pass chooser, refusals in words, take-back, rubber band, Esc,
and a property test that whatever a user clicks, every rope it commits is one the file format accepts.

The rules checked are those of shared/design/rig-format.md ("Ropes"), enforced by
``solver.rigfile.check_rig``; nothing here restates them with numbers of its own.
"""

from __future__ import annotations

from dataclasses import replace

import pytest
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QApplication

from sketchpad.geometry import to_scene
from sketchpad.pass_chooser import PassChoice, PassMenu, PassRequest
from solver.model import Hardware, Point, Rig
from solver.rigfile import check_rig, dumps_rig, loads_rig

SITE = Rig(points=(
    Point("L1", "load", 0, 0), Point("A1", "anchor", 0, 20), Point("A2", "anchor", 12, 20),
    Point("J1", "point", 6, 10), Point("H1", "haul", 12, 4), Point("P1", "person", -8, 6),
))


#: the offscreen platform cannot raise a popup or grab the keyboard for it; harmless (qt-headless.md)
POPUP_WARNINGS = pytest.mark.qt_log_ignore("This plugin does not support (raise|grabbing the keyboard)")


class Scripted:
    """A chooser that answers at once from a script and records what it was asked."""

    def __init__(self, *answers):
        self.answers = list(answers)
        self.asked: list[PassRequest] = []

    def __call__(self, request, done):
        self.asked.append(request)
        done(self.answers.pop(0) if self.answers else PassChoice(request.default_how))


@pytest.fixture
def rope_window(main_window):
    w = main_window
    w.document.replace_all(SITE)
    w.set_tool("rope")
    return w


def use_chooser(window, chooser, delay_ms=0):
    tool = window.tools["rope"]
    tool.chooser = chooser
    tool.chooser_delay_ms = delay_ms
    return tool


def path_of(rig, i=-1):
    return [(p.at, p.how, p.hardware) for p in rig.ropes[i].path]


def status(window) -> str:
    return window.statusBar().currentMessage()


# --- the chooser ------------------------------------------------------------------------------
def test_plain_clicks_on_existing_points_ask_and_the_answers_become_the_passes(rope_window, mouse):
    w = rope_window
    ask = Scripted(PassChoice("pulley", "pulley-small"), PassChoice("edge", "edge-rock"), PassChoice("tied"))
    use_chooser(w, ask)
    for x, y in ((0, 0), (0, 20), (12, 20), (6, 10), (12, 4)):  # L1, A1, A2, J1, then the haul team
        mouse.click(x, y)
    assert path_of(w.document.rig) == [("L1", "tied", None), ("A1", "pulley", "pulley-small"),
                                       ("A2", "edge", "edge-rock"), ("J1", "tied", None), ("H1", "hauled", None)]
    # asked about the three middle points only: not the start, not the haul team that ends the rope
    assert [r.point_id for r in ask.asked] == ["A1", "A2", "J1"]
    req = ask.asked[0]
    assert (req.default_how, req.pulley_hardware, req.edge_hardware) == ("pulley", "pulley-large", "edge-rock")
    assert ("pulley-small", "small pulley") in req.pulley_options and all(i.startswith("edge") for i, _ in req.edge_options)
    assert w.document.undo_stack.count() == 1
    check_rig(w.document.rig)


def test_modifier_keys_skip_the_chooser(rope_window, mouse):
    w = rope_window
    ask = Scripted()
    use_chooser(w, ask)
    mouse.click(0, 0)
    mouse.click(0, 20, Qt.ShiftModifier)
    mouse.click(12, 20, Qt.ControlModifier | Qt.ShiftModifier)
    mouse.click(6, 10, Qt.AltModifier)
    mouse.click(12, 4)
    assert [p[1] for p in path_of(w.document.rig)] == ["tied", "pulley", "edge", "sliding", "hauled"]
    assert ask.asked == []


def test_dismissing_the_chooser_drops_only_that_click(rope_window, mouse):
    w = rope_window
    use_chooser(w, Scripted(None))
    mouse.click(0, 0)
    mouse.click(0, 20)  # dismissed
    assert [p[0] for p in w.tools["rope"].picks] == ["L1"]
    assert "dropped" in status(w)
    mouse.click(12, 20, Qt.ControlModifier)
    mouse.key(Qt.Key_Return)
    assert path_of(w.document.rig) == [("L1", "tied", None), ("A2", "tied", None)]


def test_end_here_in_the_chooser_ends_the_rope_tied_at_that_point(rope_window, mouse):
    w = rope_window
    use_chooser(w, Scripted(PassChoice("tied", end=True)))
    mouse.click(0, 0)
    mouse.click(0, 20)
    assert not w.tools["rope"].active
    assert path_of(w.document.rig) == [("L1", "tied", None), ("A1", "tied", None)]


def test_a_double_click_on_a_point_ends_the_rope_there_without_asking(rope_window, mouse, qtbot):
    w = rope_window
    ask = Scripted()
    tool = use_chooser(w, ask, delay_ms=QApplication.doubleClickInterval())
    mouse.click(0, 0)
    mouse.click(6, 10, Qt.ShiftModifier)
    mouse.double_click(12, 20)
    qtbot.wait(QApplication.doubleClickInterval() + 50)  # the question would have come by now
    assert ask.asked == [] and not tool.asking
    assert path_of(w.document.rig) == [("L1", "tied", None), ("J1", "pulley", "pulley-large"), ("A2", "tied", None)]


def test_the_question_comes_after_the_double_click_time(rope_window, mouse, qtbot):
    w = rope_window
    ask = Scripted(PassChoice("sliding"))
    tool = use_chooser(w, ask, delay_ms=QApplication.doubleClickInterval())
    mouse.click(0, 0)
    mouse.click(0, 20)
    assert ask.asked == [] and tool.asking  # not yet: this might be the first half of a double-click
    qtbot.waitUntil(lambda: len(ask.asked) == 1)
    assert tool.picks[-1] == ("A1", "sliding", None)


@POPUP_WARNINGS
def test_the_real_popup_takes_keys_enter_and_esc(rope_window, mouse, qtbot):
    w = rope_window
    tool = use_chooser(w, None)  # None: the real popup menu
    w.combo_how.setCurrentIndex(w.combo_how.findData("sliding"))
    w.combo_pulley.setCurrentIndex(w.combo_pulley.findData("pulley-bushing"))

    def popup() -> PassMenu:
        qtbot.waitUntil(lambda: isinstance(QApplication.activePopupWidget(), PassMenu))
        return QApplication.activePopupWidget()

    mouse.click(0, 0)
    mouse.click(0, 20)
    menu = popup()
    assert "A1" in menu.actions()[0].defaultWidget().text()
    assert menu.default_action is menu.choice_actions["sliding"] is menu.activeAction()  # the toolbar default
    assert "plain-bushing pulley" in menu.choice_actions["pulley"].text()
    qtbot.keyClick(menu, Qt.Key_P)
    qtbot.waitUntil(lambda: not tool.asking)
    assert tool.picks[-1] == ("A1", "pulley", "pulley-bushing")
    mouse.click(12, 20)
    qtbot.keyClick(popup(), Qt.Key_Return)
    qtbot.waitUntil(lambda: not tool.asking)
    assert tool.picks[-1] == ("A2", "sliding", None)
    mouse.click(6, 10)
    qtbot.keyClick(popup(), Qt.Key_Escape)
    qtbot.waitUntil(lambda: not tool.asking)
    assert [p[0] for p in tool.picks] == ["L1", "A1", "A2"] and tool.active  # Esc dropped the click, not the rope
    assert w.tool.name == "rope"
    mouse.click(6, 10)
    qtbot.keyClick(popup(), Qt.Key_F)
    qtbot.waitUntil(lambda: not tool.active)
    assert path_of(w.document.rig) == [("L1", "tied", None), ("A1", "pulley", "pulley-bushing"),
                                       ("A2", "sliding", None), ("J1", "tied", None)]
    assert QApplication.activePopupWidget() is None


@POPUP_WARNINGS
@pytest.mark.parametrize("key, how", [
    (Qt.Key_1, "tied"), (Qt.Key_T, "tied"), (Qt.Key_2, "pulley"), (Qt.Key_P, "pulley"),
    (Qt.Key_3, "sliding"), (Qt.Key_S, "sliding"), (Qt.Key_4, "edge"), (Qt.Key_E, "edge"),
    (Qt.Key_6, "capture"), (Qt.Key_C, "capture"),
])
def test_each_chooser_key_picks_its_pass(qtbot, key, how):
    req = PassRequest("A1", "A1", "pulley", "pulley-large", "edge-concrete",
                      (("pulley-large", "large"), ("carabiner", "carabiner")), (("edge-concrete", "concrete"),))
    menu = PassMenu(req)
    got = []
    menu.chosen.connect(got.append)
    menu.popup(QPoint(100, 100))
    qtbot.waitUntil(menu.isVisible)
    qtbot.keyClick(menu, key)
    qtbot.waitUntil(lambda: bool(got))
    hw = {"pulley": "pulley-large", "edge": "edge-concrete", "capture": "pulley-large"}.get(how)
    assert got == [PassChoice(how, hw)]
    menu.deleteLater()


@POPUP_WARNINGS
def test_other_hardware_comes_from_the_submenus_with_the_rigs_own_specs_first(main_window, mouse, qtbot):
    w = main_window
    team = Hardware("team-pulley", "pulley", efficiency=0.9, mbs_N=30000.0, label="team's prusik-minding pulley")
    w.document.replace_all(replace(SITE, hardware=(team,)))
    w.set_tool("rope")
    tool = use_chooser(w, None)
    mouse.click(0, 0)
    mouse.click(0, 20)
    qtbot.waitUntil(lambda: isinstance(QApplication.activePopupWidget(), PassMenu))
    menu = QApplication.activePopupWidget()
    req = menu.request
    assert req.pulley_options[0] == ("team-pulley", "team's prusik-minding pulley")
    assert not {i for i, _ in req.pulley_options} & {i for i, _ in req.edge_options}  # edges never offered as pulleys
    others = {a.text(): a for a in menu.actions() if a.menu() is not None}
    sub = others["Other pulley or carabiner"].menu()
    [carabiner] = [a for a in sub.actions() if "(carabiner)" in a.text()]
    carabiner.trigger()
    qtbot.waitUntil(lambda: not tool.asking)
    assert tool.picks[-1] == ("A1", "pulley", "carabiner")
    mouse.key(Qt.Key_Return)
    check_rig(w.document.rig)


# --- refusals in words ----------------------------------------------------------------------
def test_the_same_point_twice_in_a_row_is_ignored_with_a_message(rope_window, mouse):
    w = rope_window
    use_chooser(w, Scripted(PassChoice("pulley")))
    mouse.click(0, 0)
    mouse.click(0, 0)
    assert "already at L1" in status(w) and "twice in a row" in status(w)
    mouse.click(3, 3)  # empty space: a new free point J2
    mouse.click(3, 3)
    assert [p[0] for p in w.tools["rope"].picks] == ["L1", "J2"]
    mouse.key(Qt.Key_Return)
    check_rig(w.document.rig)


def test_a_person_marker_cannot_be_a_pass(rope_window, mouse):
    w = rope_window
    mouse.click(-8, 6)
    assert not w.tools["rope"].active and "person" in status(w)
    mouse.click(0, 0)
    mouse.click(-8, 6)
    assert [p[0] for p in w.tools["rope"].picks] == ["L1"]
    assert "P1 marks a person" in status(w)


def test_finishing_with_fewer_than_two_passes_draws_nothing(rope_window, mouse):
    w = rope_window
    mouse.click(0, 0)
    mouse.key(Qt.Key_Return)
    assert w.document.rig == SITE and w.document.undo_stack.count() == 0
    assert "at least two points" in status(w)
    mouse.click(4, -4)  # a free point alone, then finished by switching tools
    w.set_tool("select")
    assert w.document.rig == SITE and w.document.undo_stack.count() == 0


def test_the_last_pass_is_hauled_only_at_a_haul_team(rope_window, mouse):
    w = rope_window
    use_chooser(w, Scripted(PassChoice("pulley")))
    mouse.click(0, 0)
    mouse.click(0, 20)  # the chooser says pulley, but it becomes the end: tied
    mouse.key(Qt.Key_Return)
    assert path_of(w.document.rig) == [("L1", "tied", None), ("A1", "tied", None)]
    mouse.click(0, 0)
    mouse.click(12, 4)
    assert path_of(w.document.rig) == [("L1", "tied", None), ("H1", "hauled", None)]
    check_rig(w.document.rig)


def test_pulley_and_edge_passes_always_name_hardware_that_fits(rope_window, mouse):
    w = rope_window
    use_chooser(w, Scripted(PassChoice("pulley", "no-such-pulley"), PassChoice("edge", "pulley-large")))
    w.view.defaults.pulley_hardware = "edge-rock"  # the wrong kind: never used for a pulley
    w.view.defaults.edge_hardware = "nothing-here"
    mouse.click(0, 0)
    mouse.click(0, 20)
    mouse.click(12, 20)
    mouse.click(3, 14, Qt.ShiftModifier)
    mouse.click(12, 4)
    rig = w.document.rig
    assert path_of(rig) == [("L1", "tied", None), ("A1", "pulley", "pulley-large"), ("A2", "edge", "edge-rock"),
                            ("J2", "pulley", "pulley-large"), ("H1", "hauled", None)]
    check_rig(rig)


# --- take back, rubber band, Esc --------------------------------------------------------------
def test_right_click_takes_back_the_last_pass_and_the_free_point_it_made(rope_window, mouse):
    w = rope_window
    mouse.click(0, 0)
    mouse.click(3, 5)  # new free point J2
    assert w.document.rig.has_point("J2")
    mouse.press(3, 5, button=Qt.RightButton)
    mouse.release(3, 5, button=Qt.RightButton)
    assert not w.document.rig.has_point("J2") and [p[0] for p in w.tools["rope"].picks] == ["L1"]
    assert "Took back J2" in status(w)
    mouse.press(0, 0, button=Qt.RightButton)  # the last one: no rope left, the sketch as it was
    assert not w.tools["rope"].active and w.document.rig == SITE


def test_backspace_takes_back_a_pass_and_does_not_delete_the_selection(rope_window, mouse):
    w = rope_window
    mouse.click(0, 0)
    mouse.click(12, 4)  # a first rope, now selected
    assert w.canvas.selected_keys() == [("rope", "rope1")]
    mouse.click(0, 0)
    mouse.click(6, 10, Qt.ShiftModifier)
    mouse.click(2, 16, Qt.ControlModifier)
    mouse.key(Qt.Key_Backspace)
    assert [p[0] for p in w.tools["rope"].picks] == ["L1", "J1"]
    assert w.document.rig.ropes[0].id == "rope1"  # the selected rope is still there (rope2 is being drawn)
    assert not w.document.rig.has_point("J2")
    mouse.key(Qt.Key_Return)
    assert path_of(w.document.rig) == [("L1", "tied", None), ("J1", "tied", None)]
    assert len(w.document.rig.ropes) == 2


def test_the_rubber_band_runs_from_the_last_pass_to_the_cursor(rope_window, mouse):
    w = rope_window
    tool = w.tools["rope"]
    mouse.click(0, 0)
    mouse.move(5, 5, buttons=Qt.NoButton)
    line = tool._line.line()
    assert tool._line.isVisible()
    assert (line.p1(), line.p2()) == (to_scene(0, 0), w.view.mapToScene(mouse.at(5, 5)))
    mouse.click(0, 20, Qt.ShiftModifier)
    mouse.move(6, 10.3, buttons=Qt.NoButton)  # within snap reach of J1: the band ends on it
    line = tool._line.line()
    assert (line.p1(), line.p2()) == (to_scene(0, 20), to_scene(6, 10))
    mouse.key(Qt.Key_Backspace)  # back to L1: the band follows without a mouse move
    assert tool._line.line().p1() == to_scene(0, 0)
    mouse.key(Qt.Key_Escape)
    assert tool._line is None and w.document.rig == SITE


@pytest.mark.parametrize("tool_name", ["select", "place-anchor", "place-load", "place-haul", "place-point",
                                       "place-person", "rope", "force", "feature", "measure"])
def test_esc_returns_to_select_from_every_tool_dropping_work_in_progress(main_window, mouse, tool_name):
    w = main_window
    w.document.replace_all(SITE)
    w.set_tool(tool_name)
    if tool_name in ("rope", "feature"):
        mouse.click(1, 1)
        mouse.click(4, 1)
    elif tool_name in ("force", "measure"):
        mouse.press(6, 10)
        mouse.move(8, 12)
    mouse.key(Qt.Key_Escape)
    assert w.tool.name == "select" and w.tool_actions["select"].isChecked()
    assert w.document.rig == SITE and w.document.undo_stack.count() == 0
    assert not [it for it in w.canvas.items() if it.zValue() == 50.0]  # no preview left (theme.Z_PREVIEW)


# --- whatever a user draws can be saved ----------------------------------------------------------
ON_POINT = st.tuples(st.just("point"), st.integers(0, len(SITE.points) - 1),
                     st.sampled_from([Qt.NoModifier, Qt.ShiftModifier, Qt.ControlModifier, Qt.AltModifier,
                                      Qt.ControlModifier | Qt.ShiftModifier]),
                     st.sampled_from([None, "tied", "pulley", "sliding", "edge", "end", "pulley-small", "edge-steel"]))
ON_EMPTY = st.tuples(st.just("empty"), st.integers(-15, 20), st.integers(-5, 25),
                     st.sampled_from([Qt.NoModifier, Qt.ShiftModifier, Qt.ControlModifier | Qt.ShiftModifier]))
OTHER = st.tuples(st.sampled_from(["right", "backspace", "enter", "enter", "double", "esc", "undo"]))
CLICK = st.one_of(ON_POINT, ON_POINT, ON_POINT, ON_EMPTY, OTHER)  # mostly clicks on points, as a user draws


def _answer(token):
    if token is None:
        return None
    if token == "end":
        return PassChoice("tied", end=True)
    if token.startswith("pulley-"):
        return PassChoice("pulley", token)
    if token.startswith("edge-"):
        return PassChoice("edge", token)
    return PassChoice(token)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(clicks=st.lists(CLICK, min_size=1, max_size=16))
def test_every_rig_the_rope_tool_commits_passes_the_file_check_and_round_trips(main_window, mouse, clicks):
    w = main_window
    w.set_tool("select")
    w.document.replace_all(SITE)
    w.set_tool("rope")
    tool = w.tools["rope"]
    answers = Scripted()
    use_chooser(w, lambda req, done: answers(req, done))
    committed = []

    def remember(_index: int) -> None:
        committed.append(w.document.rig)

    w.document.undo_stack.indexChanged.connect(remember)
    for c in clicks:
        if w.tool.name != "rope":
            w.set_tool("rope")
        if c[0] == "point":
            p = SITE.points[c[1]]
            answers.answers = [_answer(c[3])]
            mouse.click(p.x, p.y, c[2])
        elif c[0] == "empty":
            mouse.click(c[1] + 0.5, c[2] + 0.5, c[3])
        elif c[0] == "right":
            mouse.press(0, -3, button=Qt.RightButton)
        elif c[0] == "backspace":
            mouse.key(Qt.Key_Backspace)
        elif c[0] == "enter":
            mouse.key(Qt.Key_Return)
        elif c[0] == "double":
            mouse.double_click(-12, -2)
        elif c[0] == "esc":
            mouse.key(Qt.Key_Escape)
        elif c[0] == "undo":
            w.undo()
    w.set_tool("select")  # switching tools keeps a rope in progress: one more commit
    w.document.undo_stack.indexChanged.disconnect(remember)
    event(f"ropes committed: {min(len(w.document.rig.ropes), 3)}+")
    for rig in committed + [w.document.rig]:
        check_rig(rig)  # rig-format.md "Ropes": the rules a saved file must obey
        back = loads_rig(dumps_rig(rig))  # save and open again: the same points and ropes
        assert (back.points, back.ropes) == (rig.points, rig.ropes)
    assert not tool.active


# --- live forces while drawing -------------------------------------------------------------------
def test_a_half_drawn_rope_is_not_solved_until_it_is_finished(rope_window, mouse, qtbot):
    w = rope_window
    site = SITE.without_point("J1")  # a loose free point would (rightly) be a mechanism
    w.document.replace_all(site.with_point(replace(site.point("H1"), force_N=600.0)))
    scheduler = w.live.scheduler
    use_chooser(w, Scripted(PassChoice("pulley", "pulley-large")))
    scheduler.solve_now()
    before = scheduler.result
    mouse.click(0, 0)  # the load
    mouse.click(0, 20)  # anchor A1, as a pulley: the rope now ends in the air
    qtbot.wait(scheduler.timer.interval() + 50)
    assert w.document.sketching
    assert scheduler.result is before  # nothing solved: no "not held" failure for an unfinished rope
    mouse.click(12, 4)  # the haul team ends it: one edit, solved
    assert not w.document.sketching
    qtbot.waitUntil(lambda: scheduler.result is not None and scheduler.result.revision == w.document.revision,
                    timeout=5000)
    assert scheduler.result.status == "ok", scheduler.result.message
