"""The water's numbers on the plan (wet-end tensions, the current's push on a body) are labels placed by the
overlay's placer: on the wet samples at the default window size no placed label covers another or a site
feature's name, and each shows the solver's number in the rig's force unit."""

from __future__ import annotations

import pytest
from PySide6.QtWidgets import QApplication

from sketchpad.feature_names import feature_name_boxes
from sketchpad.main_window import DEFAULT_SIZE
from sketchpad.water_labels import CURRENT_PRIORITY, WET_END_PRIORITY, water_labels
from sketchpad.rope_names import NAME_PRIORITY
from solver.units import format_force
from tests.sketchpad.test_overlay import open_sample

WET_SAMPLES = ["tethered-boat-eddy.rig.json", "raft-3to1-redirect.rig.json"]


def _open(window, name):
    window.resize(*DEFAULT_SIZE)
    QApplication.processEvents()
    result = open_sample(window, name)
    assert result.ok and result.water is not None
    return result


def _px_box(lab, to_px):
    x, y = to_px(lab.at)
    rx, ry, w, h = lab.rect
    return (x + rx, y + ry, x + rx + w, y + ry + h)


def _to_px(view):
    """Scene metres -> viewport px, as the view draws them."""
    t = view.viewportTransform()
    return lambda p: (p[0] * t.m11() + t.dx(), p[1] * t.m22() + t.dy())


def _apart(a, b) -> bool:
    return a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1]


def _expected(rig, result):
    """(kind, key) -> the text the solver's water result gives (read as ``water_layer.bow_marks`` read it)."""
    unit = rig.display.force
    out = {}
    for b in result.water.bodies:
        if b.force_N > 0:
            out[("current", b.point)] = (f"current's push {format_force(b.force_N, unit)}", b.force_N)
    for w in result.water.ropes:
        if w.bowed:
            out[("wet-end", (w.rope, w.index, "in"))] = (f"wet end {format_force(w.tension_in_N, unit)}", w.tension_in_N)
            out[("wet-end", (w.rope, w.index, "out"))] = (f"wet end {format_force(w.tension_out_N, unit)}",
                                                         w.tension_out_N)
    return out


@pytest.mark.parametrize("name", WET_SAMPLES)
def test_wet_numbers_are_placed_labels_with_the_solvers_numbers(main_window, name):
    result = _open(main_window, name)
    rig = main_window.document.rig
    ov = main_window.live.overlay
    want = _expected(rig, result)
    assert any(k[0] == "wet-end" for k in want)  # both samples bow a rope through the water
    got = {(lab.kind, lab.key): lab for lab in ov.labels if lab.kind in ("wet-end", "current")}
    assert set(got) == set(want)
    for k, lab in got.items():
        text, value = want[k]
        assert lab.lines == (text,)
        assert next(iter(lab.values.values())) == pytest.approx(value, rel=1e-12)
    hidden = sum(not lab.placed for lab in ov.labels)
    assert hidden == ov.skipped  # a label not placed is counted in the key's "N labels hidden" line
    if hidden:
        assert any(line.startswith(f"{hidden} label") for line in ov.legend.lines)
    # nothing drawn twice: the water item keeps the arrows and draws no number
    assert ov.water_item.bows.marks.texts == ()


@pytest.mark.parametrize("name", WET_SAMPLES)
def test_no_placed_label_covers_another_or_a_feature_name(main_window, name):
    _open(main_window, name)
    ov, view = main_window.live.overlay, main_window.view
    to_px = _to_px(view)
    placed = [lab for lab in ov.labels if lab.placed]
    assert any(lab.kind == "wet-end" for lab in placed)
    boxes = [(_px_box(lab, to_px), lab.text) for lab in placed]
    for i, (a, ta) in enumerate(boxes):
        for b, tb in boxes[i + 1:]:
            assert _apart(a, b), (ta, tb)
    names = feature_name_boxes(main_window.canvas, main_window.document.rig.site.features)
    assert names  # the samples name their features
    for xy, (bx, by, bw, bh) in names:
        x, y = to_px(xy)
        f = (x + bx, y + by, x + bx + bw, y + by + bh)
        for b, text in boxes:
            assert _apart(f, b), text


def test_feature_name_boxes_are_where_qt_draws_the_names(main_window):
    _open(main_window, "tethered-boat-eddy.rig.json")
    view, canvas = main_window.view, main_window.canvas
    rig = main_window.document.rig
    to_px = _to_px(view)
    boxes = feature_name_boxes(canvas, rig.site.features)
    for f, (xy, (bx, by, bw, bh)) in zip([f for f in rig.site.features if f.label], boxes):
        label = [c for c in canvas.item_for(("feature", f.id)).childItems() if hasattr(c, "text")][0]
        r = label.deviceTransform(view.viewportTransform()).mapRect(label.boundingRect())  # Qt's own mapping
        x, y = to_px(xy)
        assert (x + bx, y + by, bw, bh) == pytest.approx((r.x(), r.y(), r.width(), r.height()), abs=1e-6)


def test_priorities_keep_the_numbers_before_the_rope_names():
    # the tension labels' priorities run 50..80 and the anchors' from 90 (sketchpad.overlay.labels)
    assert NAME_PRIORITY < WET_END_PRIORITY < 50.0 and 80.0 < CURRENT_PRIORITY < 90.0


def test_a_dry_or_failed_result_gives_no_water_labels():
    from solver.equilibrium import solve
    from solver.rigfile import load_rig
    from tests.conftest import SAMPLES

    rig = load_rig(SAMPLES / "two-point-anchor.rig.json")
    memo: dict = {}
    assert water_labels(rig, solve(rig), memo) == [] and memo == {}
    assert water_labels(rig, None, memo) == []


def test_unchanged_water_labels_keep_their_objects():
    from solver.equilibrium import solve
    from solver.rigfile import load_rig
    from tests.conftest import SAMPLES

    rig = load_rig(SAMPLES / "tethered-boat-eddy.rig.json")
    result = solve(rig)
    memo: dict = {}
    first = water_labels(rig, result, memo)
    again = water_labels(rig, result, memo)
    assert first and all(a is b for a, b in zip(first, again))
    assert [lab.lines for lab in water_labels(rig, result, {})] == [lab.lines for lab in first]  # equal to a fresh call


def test_the_water_labels_follow_a_drag_of_the_boat(main_window, mouse):
    """Dragged with the mouse (press, moves, release on the viewport), the boat's push label hangs from where the
    boat was solved, the wet-end labels from the solved bow's ends, as a fresh call makes them, none overlapping."""
    result = _open(main_window, "tethered-boat-eddy.rig.json")
    body = next(b.point for b in result.water.bodies if b.force_N > 0)
    x, y = result.points[body]
    mouse.drag(x, y, x + 1.5, y - 1.0, release=False)  # drag steps, solved as the drag goes
    sched = main_window.live.scheduler
    sched.solve_now()
    QApplication.processEvents()
    mouse.release(x + 1.5, y - 1.0)
    sched.solve_now()
    QApplication.processEvents()
    ov = main_window.live.overlay
    rig, now = main_window.document.rig, sched.result
    assert now.points[body] != result.points[body]
    mine = [lab for lab in ov.labels if lab.kind in ("wet-end", "current")]
    fresh = water_labels(rig, now, {})
    assert [(a.kind, a.key, a.lines, a.base, a.end) for a in mine] == [(b.kind, b.key, b.lines, b.base, b.end) for b in fresh]
    push = next(lab for lab in mine if lab.kind == "current")
    assert push.base == pytest.approx((now.points[body][0], -now.points[body][1]))
    to_px = _to_px(main_window.view)
    boxes = [_px_box(lab, to_px) for lab in ov.labels if lab.placed]
    assert all(_apart(a, b) for i, a in enumerate(boxes) for b in boxes[i + 1:])


def test_the_kept_feature_name_boxes_equal_fresh_ones_after_an_edit(main_window):
    """The overlay keeps the feature names' boxes while the features are the same; renaming one (an undoable edit)
    gives the boxes made afresh, and so does undoing it."""
    import dataclasses

    _open(main_window, "raft-3to1-redirect.rig.json")
    doc, canvas = main_window.document, main_window.canvas
    ov = main_window.live.overlay
    sched = main_window.live.scheduler

    def kept_equals_fresh():
        sched.solve_now()
        QApplication.processEvents()
        kept = ov._feature_boxes.of(canvas, doc.rig)
        assert kept == feature_name_boxes(canvas, doc.rig.site.features) and kept
        return kept

    before = kept_equals_fresh()
    rig = doc.rig
    named = next(f for f in rig.site.features if f.label)
    longer = dataclasses.replace(named, label=named.label + " and a much longer name")
    site = dataclasses.replace(rig.site, features=tuple(longer if f is named else f for f in rig.site.features))
    assert doc.apply(dataclasses.replace(rig, site=site), "Rename feature")
    after = kept_equals_fresh()
    assert after != before  # the renamed feature's box is wider
    doc.undo_stack.undo()
    assert kept_equals_fresh() == before


def test_an_exported_drawing_places_the_water_labels_with_the_solvers_numbers(qapp, tmp_path):
    """A PNG drawing of the eddy sample (as File > Export draws it) places the same wet-end and push labels, clear
    of the other labels; the water item draws no number of its own there either."""
    from sketchpad.export import export_drawing
    from solver.analysis import analyse
    from solver.rigfile import load_rig
    from tests.conftest import SAMPLES

    rig = load_rig(SAMPLES / "tethered-boat-eddy.rig.json")
    result = analyse(rig)
    drawing = export_drawing(rig, tmp_path / "eddy.png", None, result)
    want = _expected(rig, result)
    got = {(lab.kind, lab.key): lab for lab in drawing.force_item.labels if lab.kind in ("wet-end", "current")}
    assert set(got) == set(want) and all(lab.lines == (want[k][0],) for k, lab in got.items())
    assert drawing.water_item.bows.marks.texts == ()
    assert all(lab.placed for lab in got.values())
    k = drawing.fit.px_per_m  # the page's placer maps scene metres by this scale alone
    boxes = [_px_box(lab, lambda p: (p[0] * k, p[1] * k)) for lab in drawing.force_item.labels if lab.placed]
    assert all(_apart(a, b) for i, a in enumerate(boxes) for b in boxes[i + 1:])


@pytest.mark.parametrize("degrees", [-60, 60])
def test_after_a_wheel_zoom_no_label_covers_another_or_a_feature_name(main_window, degrees):
    """Wheel-zoomed out or in on the eddy sample (the labels re-placed once the wheel settles), the placed labels
    still keep off each other and off the feature names; the wet labels not placed are counted as hidden."""
    from PySide6.QtCore import QPoint

    from tests.sketchpad.test_canvas_editing import _wheel

    _open(main_window, "tethered-boat-eddy.rig.json")
    view, ov = main_window.view, main_window.live.overlay
    before = view.px_per_m
    _wheel(view, QPoint(view.viewport().width() // 2, view.viewport().height() // 2), degrees)
    ov.zoom_pacer.settle()
    QApplication.processEvents()
    assert view.px_per_m != pytest.approx(before) and ov._memo_scale == pytest.approx(view.transform().m11())
    to_px = _to_px(view)
    boxes = [(_px_box(lab, to_px), lab.text) for lab in ov.labels if lab.placed]
    for i, (a, ta) in enumerate(boxes):
        for b, tb in boxes[i + 1:]:
            assert _apart(a, b), (ta, tb)
    for xy, (bx, by, bw, bh) in feature_name_boxes(main_window.canvas, main_window.document.rig.site.features):
        x, y = to_px(xy)
        assert all(_apart((x + bx, y + by, x + bx + bw, y + by + bh), b) for b, _t in boxes)
    assert ov.skipped == sum(not lab.placed for lab in ov.labels)
