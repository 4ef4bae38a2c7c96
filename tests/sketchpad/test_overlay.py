"""The force overlay: label numbers are the solver's, labels do not pile up, failures grey the old overlay."""

from __future__ import annotations

import math
import pathlib

import pytest
from PySide6.QtCore import QPointF
from PySide6.QtWidgets import QApplication
from shapely.ops import unary_union

from sketchpad import theme
from sketchpad.overlay import LAYERS, OverlayLabel, place_labels
from solver.rigfile import load_rig
from solver.units import format_force
from tests.conftest import SAMPLES

SAMPLE_FILES = sorted(SAMPLES.glob("*.rig.json"))


def open_sample(window, name: str):
    """Open a sample like File > Open, fit it, and deliver its solve (as the timer would)."""
    path = SAMPLES / name
    window.document.replace_all(load_rig(path), pathlib.Path(path))
    window.view.zoom_to_fit()
    result = window.live.scheduler.solve_now()
    QApplication.processEvents()
    return result


def labels_of(window, kind: str) -> dict:
    return {lab.key: lab for lab in window.live.overlay.labels if lab.kind == kind}


def overlaps(a: OverlayLabel, b: OverlayLabel, to_px) -> bool:
    ax, ay = to_px(a.at)
    bx, by = to_px(b.at)
    ra = (ax + a.rect[0], ay + a.rect[1], a.rect[2], a.rect[3])
    rb = (bx + b.rect[0], by + b.rect[1], b.rect[2], b.rect[3])
    return ra[0] < rb[0] + rb[2] and rb[0] < ra[0] + ra[2] and ra[1] < rb[1] + rb[3] and rb[1] < ra[1] + ra[3]


def view_to_px(view):
    """Scene metres -> viewport px in floats, as the placer works (mapFromScene rounds each anchor to a whole pixel,
    which made two boxes placed a fraction of a pixel apart look overlapping)."""
    t = view.viewportTransform()
    return lambda p: (t.map(QPointF(*p)).x(), t.map(QPointF(*p)).y())


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_every_piece_label_shows_the_solver_tension_in_the_display_unit(main_window, path):
    result = open_sample(main_window, path.name)
    assert result.ok, result.message
    unit = main_window.document.rig.display.force
    tens = labels_of(main_window, "tension")
    assert set(tens) == {(s.rope, s.index) for s in result.segments}
    for s in result.segments:
        lab = tens[(s.rope, s.index)]
        assert lab.values["tension_N"] == s.tension_N
        assert lab.values["utilization"] == s.utilization
        assert lab.lines[0] == format_force(s.tension_N, unit)
        assert lab.lines[1] == f"{s.strain * 100:.1f} % stretch"
        assert lab.colour == theme.utilization_colour(s.utilization)


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_anchor_load_and_haul_labels_carry_the_result_numbers(main_window, path):
    result = open_sample(main_window, path.name)
    rig = main_window.document.rig
    unit = rig.display.force
    anchors = labels_of(main_window, "anchor")
    assert set(anchors) == set(result.anchors)
    for aid, a in result.anchors.items():
        lab = anchors[aid]
        assert lab.values["force_N"] == a.force_N and lab.values["direction_deg"] == a.direction_deg
        assert format_force(a.force_N, unit) in lab.lines[0]
        # the direction reads as a bearing from north, worked independently: atan2(east, north)
        bearing = round(math.degrees(math.atan2(a.fx_N, a.fy_N)) % 360.0) % 360
        assert lab.lines[1].startswith(f"toward {bearing:03d}° (")
        if a.utilization is not None:  # and the margin says what it was taken against
            assert lab.lines[2] == f"{a.utilization * 100:.0f} % of strength ÷ {rig.settings.min_safety_factor:g}"
    arrows = {ar.point_id: ar for ar in main_window.live.overlay.force_item.arrows}
    for aid, ar in arrows.items():
        rad = math.radians(result.anchors[aid].direction_deg)
        assert ar.direction == pytest.approx((math.cos(rad), -math.sin(rad)))  # scene y is down
    loads = labels_of(main_window, "load")
    for lid, f in result.loads.items():
        assert loads[lid].values["force_N"] == f.force_N
        assert format_force(f.force_N, unit) in loads[lid].lines[0]
        assert loads[lid].lines[1].startswith("toward ") and loads[lid].lines[1].endswith(")")
    hauls = labels_of(main_window, "haul")
    for hid, force in result.haul.items():
        lab = hauls[hid]
        assert lab.values["force_N"] == force
        team = rig.point(hid).team
        if team:
            assert lab.values["per_hauler_N"] == pytest.approx(force / team)
            assert lab.lines[1] == f"{team} × {format_force(force / team, unit)} each"


def test_turn_angles_at_redirects_and_the_vector_pull_hand(main_window):
    result = open_sample(main_window, "vector-pull.rig.json")
    angles = labels_of(main_window, "angle")
    hand = angles["line@V1"]
    turn = result.deflection_deg["line@V1"]
    assert hand.values["turn_deg"] == turn
    # a symmetric vector pull deflects each side by half the turn (geometry of the isosceles bend)
    assert hand.values["off_line_deg"] == pytest.approx(turn / 2.0)
    assert any(line.startswith("off line") for line in hand.lines)
    result = open_sample(main_window, "raft-3to1-redirect.rig.json")
    angles = labels_of(main_window, "angle")
    assert angles["main@A2"].values["turn_deg"] == result.deflection_deg["main@A2"]
    assert "off_line_deg" not in angles["main@A2"].values  # a fixed redirect is not a hand
    assert "main@G1" not in angles  # the rope grab is tied: a knot, not a redirect


@pytest.mark.parametrize("path", SAMPLE_FILES, ids=lambda p: p.name)
def test_labels_never_overlap_and_none_is_hidden_at_the_fitted_zoom(main_window, path):
    open_sample(main_window, path.name)
    ov = main_window.live.overlay
    placed = [lab for lab in ov.labels if lab.placed]
    # every label with a number is shown; a rope's name (placed last) may give way on a crowded plan
    numbers = [lab for lab in ov.labels if lab.kind != "rope"]
    assert all(lab.placed for lab in numbers) and ov.skipped == len(ov.labels) - len(placed)
    to_px = view_to_px(main_window.view)
    for i, a in enumerate(placed):
        for b in placed[i + 1:]:
            assert not overlaps(a, b, to_px), f"{a.text!r} overlaps {b.text!r}"


def test_labels_keep_their_screen_size_when_zooming(main_window):
    open_sample(main_window, "raft-3to1-redirect.rig.json")
    before = {(lab.kind, lab.key): lab.rect[2:] for lab in main_window.live.overlay.labels}
    view = main_window.view
    view.zoom_at(2.0, view.viewport().rect().center())
    after = {(lab.kind, lab.key): lab.rect[2:] for lab in main_window.live.overlay.labels}
    assert before == after


def test_crowded_labels_are_skipped_or_led_out_not_stacked():
    """Forty labels on one short piece: each placed one is clear of the others; the rest are counted."""
    labels = [OverlayLabel("tension", ("r", i), (f"{i}.00 kN",), {}, theme.UTIL_UNKNOWN, 50.0, (0.0, 0.0), (2.0, 0.0))
              for i in range(40)]
    skipped = place_labels(labels, lambda p: (p[0] * 20.0, p[1] * 20.0), lambda lab: (50.0, 18.0))
    placed = [lab for lab in labels if lab.placed]
    assert skipped == 40 - len(placed) and 0 < skipped < 40
    assert any(lab.leader for lab in placed)
    to_px = lambda p: (p[0] * 20.0, p[1] * 20.0)  # noqa: E731
    for i, a in enumerate(placed):
        for b in placed[i + 1:]:
            assert not overlaps(a, b, to_px)


def test_layer_toggles_in_the_view_menu_hide_and_show_labels(main_window):
    open_sample(main_window, "raft-3to1-redirect.rig.json")
    live = main_window.live
    texts = [a.text().replace("&", "") for a in live.menu_layers.actions()]
    assert texts == [t.replace("&", "") for t in LAYERS.values()]
    live.layer_actions["tensions"].trigger()
    assert not live.overlay.layers["tensions"]
    assert all(lab.lines == (lab.lines[0],) and lab.lines[0].endswith("% stretch")
               for lab in live.overlay.labels if lab.kind == "tension")
    live.layer_actions["stretch"].trigger()
    assert not any(lab.kind == "tension" for lab in live.overlay.labels)
    live.layer_actions["zones"].trigger()
    assert live.overlay.zones_item.paths == {}
    live.layer_actions["angles"].trigger()
    live.layer_actions["anchors"].trigger()
    assert live.overlay.labels == [] and live.overlay.force_item.arrows == []
    for name in LAYERS:
        live.layer_actions[name].trigger()
    # the raft's overloaded redirect pulley is marked with the anchors' layer ("hardware")
    # ... and the rope names are placed with the piece labels ("rope")
    # ... and the tension where the main line meets the water ("wet-end")
    assert {lab.kind for lab in live.overlay.labels} == {"tension", "angle", "anchor", "load", "haul", "hardware", "rope",
                                                         "wet-end"}


def test_danger_zones_are_drawn_where_solver_danger_puts_them(main_window):
    from solver.danger import danger_zones

    result = open_sample(main_window, "raft-3to1-redirect.rig.json")
    zones = danger_zones(main_window.document.rig, result)
    drawn = main_window.live.overlay.zones_item.paths
    for kind in ("bight", "recoil"):
        geom = unary_union([z.geometry for z in zones if z.kind == kind])
        minx, miny, maxx, maxy = geom.bounds  # shapely, site metres (y north)
        box = drawn[kind].boundingRect()  # scene metres (y down)
        assert box.left() == pytest.approx(minx, abs=1e-6) and box.right() == pytest.approx(maxx, abs=1e-6)
        assert box.top() == pytest.approx(-maxy, abs=1e-6) and box.bottom() == pytest.approx(-miny, abs=1e-6)


def test_a_failed_solve_shows_its_reason_and_keeps_the_last_overlay_greyed(main_window, qtbot):
    good = open_sample(main_window, "two-point-anchor.rig.json")
    doc = main_window.document
    before = {lab.key: lab.values["tension_N"] for lab in main_window.live.overlay.labels if lab.kind == "tension"}
    # add a free point no rope reaches: the rig cannot be solved, and the point is named
    from solver.model import Point

    doc.apply(doc.rig.with_point(Point("K9", "point", 30.0, 5.0, label="loose karabiner")), "Place free point")
    with qtbot.waitSignal(main_window.live.scheduler.result_ready, timeout=3000) as got:
        pass
    failed = got.args[0]
    assert not failed.ok and failed.subject == "K9"
    ov = main_window.live.overlay
    assert ov.greyed and ov.zones_item.grey
    # a point no rope reaches yet is a sketch still being drawn: a calm hint naming it, not the red banner
    assert ov.banner.isHidden() and ov.banner_text == ""
    assert "loose karabiner is not held by any rope yet" in main_window.hints.shown_text()
    after = {lab.key: lab.values["tension_N"] for lab in ov.labels if lab.kind == "tension"}
    assert after == before == {(s.rope, s.index): s.tension_N for s in good.segments}
    main_window.document.undo_stack.undo()
    with qtbot.waitSignal(main_window.live.scheduler.result_ready, timeout=3000):
        pass
    assert not ov.greyed and ov.banner_text == ""


def test_dragging_the_haul_team_through_the_viewport_updates_the_overlay_live(main_window, mouse, qtbot):
    first = open_sample(main_window, "two-point-anchor.rig.json")
    sched = main_window.live.scheduler
    rig0 = main_window.document.rig
    h = rig0.point("H1")
    moves = 8
    mouse.press(h.x, h.y)
    for i in range(1, moves + 1):
        mouse.move(h.x, h.y - 0.6 * i)  # swing the haul line south: the master point turns less
    qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == main_window.document.revision,
                    timeout=3000)
    mid = sched.result
    assert mid.ok
    assert sched.solve_count < moves + 1  # coalesced, not one solve per mouse event
    tens = labels_of(main_window, "tension")
    for s in mid.segments:
        assert tens[(s.rope, s.index)].values["tension_N"] == s.tension_N
    assert labels_of(main_window, "angle")["main@M1"].values["turn_deg"] == mid.deflection_deg["main@M1"]
    assert mid.deflection_deg["main@M1"] != pytest.approx(first.deflection_deg["main@M1"], abs=0.5)
    mouse.release(h.x, h.y - 0.6 * moves)
    assert main_window.document.undo_stack.count() == 1  # one drag = one command
    qtbot.waitUntil(lambda: sched.result.revision == main_window.document.revision, timeout=3000)
    final = {lab.key: lab.values["tension_N"] for lab in main_window.live.overlay.labels if lab.kind == "tension"}
    assert final == {(s.rope, s.index): s.tension_N for s in sched.result.segments}


def test_screen_size_labels_are_drawn_without_errors_in_a_grab(main_window):
    open_sample(main_window, "compound-2on3.rig.json")
    pix = main_window.view.viewport().grab()
    assert not pix.isNull() and pix.width() > 100
