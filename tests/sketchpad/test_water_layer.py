"""The plan in moving water: the current's arrows, river sides, bowed ropes, and a dragged tether (pytest-qt)."""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import Qt

from solver.rigfile import dumps_rig, load_rig
from solver.water import HIDDEN

SAMPLE = Path(__file__).resolve().parents[2] / "samples" / "tethered-boat-eddy.rig.json"


def test_flow_arrows_follow_the_topmost_current_and_sides_face_downstream():
    from sketchpad.water_layer import flow_arrows, river_side_labels

    rig = load_rig(SAMPLE)
    arrows = flow_arrows(rig)
    assert arrows
    east = [a for a in arrows if a[1][0] > a[0][0]]
    west = [a for a in arrows if a[1][0] < a[0][0]]
    assert east and west  # the main current east, the eddy back upstream
    for (x0, y0), (x1, y1) in west:  # every westward arrow sits in the eddy drawn on top
        assert 1.5 <= (x0 + x1) / 2 <= 18 and (y0 + y1) / 2 >= 3.5
    sides = dict(river_side_labels(rig))
    assert set(sides) == {"river left", "river right"}  # named once, on the main current, not on the eddy
    assert sides["river left"][1] > 0 > sides["river right"][1]  # flowing east: left is north


def test_dragging_a_tether_anchor_redraws_the_bowed_rope_and_keeps_hidden_points_out(main_window, mouse, qtbot):
    w = main_window
    rig = load_rig(SAMPLE)
    w.document.replace_all(rig)
    live = w.live
    item = live.overlay.water_item
    qtbot.waitUntil(lambda: bool(w.canvas.bows), timeout=10000)
    a2 = rig.point("A2")
    mouse.drag(a2.x, a2.y, a2.x - 4.0, a2.y, steps=5, release=False)
    qtbot.wait(200)
    mouse.release(a2.x - 4.0, a2.y)
    moved = w.document.rig.point("A2")
    assert moved.x == pytest.approx(a2.x - 4.0, abs=0.1)
    qtbot.waitUntil(lambda: live.overlay.result is not None and live.overlay.result.ok
                    and live.overlay.result.points["A2"] == pytest.approx((moved.x, moved.y)), timeout=10000)
    res = live.overlay.result
    wet = next(r for r in res.water.ropes if r.rope == "T2")
    assert wet.polyline[0] == pytest.approx((moved.x, moved.y))  # the bow starts at the moved anchor
    assert wet.sag_m > 0.1
    text = dumps_rig(w.document.rig)
    assert HIDDEN not in text and not any(p.id.startswith(HIDDEN) for p in w.document.rig.points)
    assert not any(HIDDEN in k for k in res.points) and not any(HIDDEN in s.rope for s in res.segments)


def _panel(qtbot, rig):
    """A shown property dock on a new Document of ``rig``: (document, dock); the caller keeps the dock alive."""
    from sketchpad.document import Document
    from sketchpad.properties import PropertiesDock

    doc = Document(rig)
    dock = PropertiesDock(doc)
    qtbot.addWidget(dock)
    dock.show()
    qtbot.waitExposed(dock)
    dock.activateWindow()
    return doc, dock


def test_current_fields_on_a_water_feature_set_the_flow_as_one_undoable_edit(qtbot):
    from dataclasses import replace

    from solver.model import Display
    from tests.sketchpad.test_properties import type_into

    rig = load_rig(SAMPLE)
    doc, dock = _panel(qtbot, rig)
    panel = dock.panel
    panel.show_subject("feature", "W1")
    page = panel.feature_page
    assert page.flow.speed.isVisible() and page.flow.speed.edit.text().startswith("2.2")
    type_into(qtbot, page.flow.speed, "3")
    assert doc.rig.site.features[0].flow.speed_m_s == pytest.approx(3.0)
    type_into(qtbot, page.flow.toward, "120")
    assert doc.rig.site.features[0].flow.bearing_deg == pytest.approx(120.0)
    assert doc.undo_stack.count() == 2
    doc.undo_stack.undo()
    doc.undo_stack.undo()
    assert doc.rig.site.features[0].flow == rig.site.features[0].flow
    type_into(qtbot, page.flow.speed, "")  # cleared: still water
    assert doc.rig.site.features[0].flow is None
    # feet: speeds in mph (1 mph = 0.44704 m/s, NIST SP 811), as the load estimate
    doc.apply(replace(doc.rig, display=Display("ft", "lbf")), "units")
    panel.show_subject("feature", "W1")
    type_into(qtbot, page.flow.speed, "5")
    assert doc.rig.site.features[0].flow.speed_m_s == pytest.approx(5 * 0.44704)
    # a boulder carries no current: the rows hide
    panel.show_subject("feature", "R1")
    assert not page.flow.speed.isVisible()


def test_wetted_area_and_shape_fields_and_the_force_from_the_current(qtbot):
    from tests.sketchpad.test_properties import type_into

    rig = load_rig(Path(__file__).resolve().parents[2] / "samples" / "raft-3to1-redirect.rig.json")
    doc, dock = _panel(qtbot, rig)
    panel = dock.panel
    panel.show_subject("point", "L1")
    body = panel.point_page.body
    assert body.area.isVisible() and not body.from_current.isVisible()
    type_into(qtbot, body.area, "1.5")
    p = doc.rig.point("L1")
    assert p.wetted_area_m2 == pytest.approx(1.5) and p.drag_shape == "raft-broadside"  # a shape comes with it
    body.shape.setCurrentIndex(body.shape.findData("hull-side-on"))
    assert doc.rig.point("L1").drag_shape == "hull-side-on"
    assert body.from_current.isVisible()
    qtbot.mouseClick(body.from_current, Qt.MouseButton.LeftButton)
    # drag equation, Matthews: long flat plate 1.98; 2.0 m/s; rho 1000 kg/m^3
    assert doc.rig.point("L1").required_N == pytest.approx(0.5 * 1000 * 1.98 * 1.5 * 2.0 ** 2)
    body.shape.setCurrentIndex(0)  # "—": out of the water
    assert doc.rig.point("L1").wetted_area_m2 is None and doc.rig.point("L1").drag_shape is None


def test_dragging_the_bank_pulley_redraws_the_bowed_haul_line(main_window, mouse, qtbot):
    # the raft sample's main line runs from the raft through the bank boulder's pulley: its wet piece is bowed
    # (the rope sliding through the pulley), drawn by the plan, and follows the pulley's anchor when dragged
    w = main_window
    rig = load_rig(Path(__file__).resolve().parents[2] / "samples" / "raft-3to1-redirect.rig.json")
    w.document.replace_all(rig)
    live = w.live
    item = live.overlay.water_item
    qtbot.waitUntil(lambda: bool(w.canvas.bows), timeout=10000)
    a2 = rig.point("A2")
    mouse.drag(a2.x, a2.y, a2.x + 3.0, a2.y, steps=5, release=False)
    qtbot.wait(200)
    mouse.release(a2.x + 3.0, a2.y)
    moved = w.document.rig.point("A2")
    assert moved.x == pytest.approx(a2.x + 3.0, abs=0.1)
    qtbot.waitUntil(lambda: live.overlay.result is not None and live.overlay.result.ok
                    and live.overlay.result.points["A2"] == pytest.approx((moved.x, moved.y)), timeout=10000)
    res = live.overlay.result
    wet = next(r for r in res.water.ropes if r.rope == "main" and r.index == 0)
    assert wet.bowed and wet.polyline[-1] == pytest.approx((moved.x, moved.y))
    assert wet.sag_m > 0.05 and len(wet.polyline) > 6
    assert wet.tension_in_N == pytest.approx(wet.tension_out_N, rel=1e-9)  # frictionless bends
    assert "rope-drag-straight" not in {x.code for x in res.warnings}
    qtbot.waitUntil(lambda: any(len(pts) == len(wet.polyline) - 2 for pts in w.canvas.bows.get("main", {}).values()),
                    timeout=10000)
    assert not any(HIDDEN in k for k in res.points) and not any(HIDDEN in s.rope for s in res.segments)
