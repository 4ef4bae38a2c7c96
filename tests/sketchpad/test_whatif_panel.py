"""The What-if dock: scans once the rig is still (never during a drag), rows per component, a ghost per row,
and the plan's danger zones replaced by the computed failure areas."""

from __future__ import annotations

import pathlib
from dataclasses import replace

from sketchpad import theme
from solver.failures import components
from solver.rigfile import load_rig
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def _open(window, qtbot, path: pathlib.Path):
    rig = load_rig(path)
    window.document.replace_all(rig, path)
    qtbot.waitUntil(lambda: window.what_if.scan is not None and window.what_if.scan.rig is window.document.rig,
                    timeout=10000)
    return rig


def test_the_scan_fills_a_row_per_component_and_the_plan_shows_computed_areas(main_window, qtbot):
    rig = _open(main_window, qtbot, RAFT)
    panel = main_window.what_if.panel
    assert panel.table.rowCount() == len(components(rig))
    assert panel.table.item(1, 0).text() == "A2 · anchor"
    overlay = main_window.live.overlay
    assert {z.kind for z in overlay.zones} == {"failure", "recoil"}
    assert "failure" in overlay.zones_item.paths and "bight" not in overlay.zones_item.paths
    assert overlay.legend.zone_names == theme.COMPUTED_ZONE_NAMES
    assert "Ropewright's own choice" in panel.people.item(panel.people.count() - 1).text()


def test_selecting_a_row_draws_that_failure_as_a_ghost(main_window, qtbot):
    _open(main_window, qtbot, RAFT)
    panel, ghost = main_window.what_if.panel, main_window.what_if.ghost
    assert not ghost.pieces and ghost.zone.isEmpty()
    panel.table.selectRow(1)  # the bank boulder anchor lets go
    f = main_window.what_if.scan.failures[1]
    assert f.component.id == "A2"
    assert len(ghost.pieces) == len(f.after.segments) and len(ghost.moves) == len(f.moved) == 1
    assert not ghost.zone.isEmpty() and ghost.boundingRect().contains(ghost.zone.boundingRect())
    panel.table.clearSelection()
    assert not ghost.pieces


def test_no_scan_runs_during_a_drag_only_after_it(main_window, qtbot, mouse):
    _open(main_window, qtbot, RAFT)
    view = main_window.view
    view.zoom_to_fit()
    qtbot.wait(50)
    scans = main_window.what_if.scans
    x, y = 6.5, 12.0  # the bank boulder anchor
    mouse.press(x, y)
    for k in range(1, 12):
        mouse.move(x + 0.1 * k, y)
        qtbot.wait(15)
        assert main_window.what_if.scans == scans, "a scan ran in the middle of a drag"
    mouse.release(x + 1.1, y)
    qtbot.waitUntil(lambda: main_window.what_if.scans > scans, timeout=10000)
    assert main_window.what_if.scan.rig is main_window.document.rig
    assert main_window.document.rig.point("A2").x > 7.0


def test_a_rig_that_does_not_hold_shows_why_there_is_no_scan(main_window, qtbot):
    rig = _open(main_window, qtbot, RAFT)
    # the raft let loose (not pinned) in plan, with nothing but the haul rope on it: nothing holds it
    # (deleting the 3:1's anchor no longer breaks the rig: its two passes at the grab merge into one)
    broken = rig.with_point(replace(rig.point("L1"), fixed=False))
    main_window.document.apply(broken, "free the raft")
    qtbot.waitUntil(lambda: "No scan" in main_window.what_if.panel.status.text(), timeout=10000)
    assert not main_window.what_if.panel.table.isEnabled()


def test_a_long_scan_goes_in_slices_and_a_change_cancels_it(main_window, qtbot):
    rig = _open(main_window, qtbot, RAFT)
    what_if = main_window.what_if
    scans = what_if.scans
    assert what_if.run_scan(budget_ms=0.0) is what_if.scan  # this answer is scanned already: not again
    what_if.scan = None
    assert what_if.run_scan(budget_ms=0.0) is None  # one failure, then back to the window's events
    assert what_if._steps is not None and len(what_if._steps[3]) == 1
    assert "1 of 11" in what_if.panel.status.text()
    what_if.ticks.stop()
    main_window.document.apply(rig.moved("A2", 7.0, 12.0), "move the boulder anchor")
    assert what_if._continue(0.0) is None and what_if._steps is None  # cancelled: the rig changed
    qtbot.waitUntil(lambda: what_if.scans > scans and what_if.scan.rig is main_window.document.rig, timeout=10000)
    assert len(what_if.scan.failures) == 11
