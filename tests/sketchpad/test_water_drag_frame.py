"""A drag on a rig in moving water (sketchpad.water_layer, sketchpad.water_marks, sketchpad.drag_layer).

Every item of a window showing the water sample is one the drag layer tracks; a drag through the viewport
(a paint after each mouse move and another after its solve) goes through the drag layer, the current's arrow
field in its still image and the bowed ropes drawn with the force overlay; the water items after a drag draw
what items made afresh draw (the field's kept drawing equals a fresh one); a render after a drag equals a
fresh render pixel by pixel; and the items' bounding rects hold every pixel they paint at any zoom.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QImage, QPainter, QTransform
from PySide6.QtWidgets import QApplication, QGraphicsScene

from sketchpad.drag_layer import Tracked, item_version, paint_item
from sketchpad.water_label_places import snapped_points_box
from sketchpad.water_layer import WaterItem, field_marks
from solver.equilibrium import solve
from solver.model import Rig
from tests.bench.test_bench_water import boat_across_the_current
from tests.sketchpad.test_drag_bookkeeping import check_against_full_scan, fresh_stack
from tests.sketchpad.test_drag_damage import assert_screen_fresh
from tests.sketchpad.test_drag_layer import assert_same, frame
from tests.sketchpad.test_overlay import open_sample
from tests.sketchpad.test_overlay_incremental import pixels

SAMPLE = "tethered-boat-eddy.rig.json"


def untracked(scene) -> list[str]:
    """Items of ``scene`` the drag layer cannot account for: not told of its structure changes (``Tracked``), or
    below the overlay with pixels it cannot tell changed (no version, no fingerprint: they would turn the still
    image off).  Items at and above the overlay are drawn in every frame; a box of theirs without a version is
    redrawn in every frame's damage."""
    below, top = fresh_stack(scene)
    assert len(below) + len(top) == len(scene.items())
    return ([type(it).__name__ for it in below + top if not isinstance(it, Tracked)]
            + [type(it).__name__ for it in below if item_version(it) is None])


def open_water(window):
    """The water sample open and fitted, solved in the GUI thread as a quick drag step is (the test process's first
    solve, paying the imports, would otherwise send every step to the worker, where each is a full analysis)."""
    assert open_sample(window, SAMPLE).ok
    sched = window.live.scheduler
    sched.background, sched.background_after_ms = False, float("inf")
    sched.settle_timer.setInterval(600_000)  # every step is one drag until a test says otherwise
    return window.document, window.view, sched


def drag_through_viewport(window, mouse, qtbot, pid: str, steps: int, dx: float, dy: float, release: bool = True):
    """Press on ``pid``, move ``steps`` times by (dx, dy) m, each step solved and painted; release unless told not to."""
    doc, sched, view = window.document, window.live.scheduler, window.view
    p = doc.rig.point(pid)
    mouse.press(p.x, p.y)
    for i in range(1, steps + 1):
        mouse.move(p.x + dx * i, p.y + dy * i)
        qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == doc.revision, timeout=5000)
        view.viewport().repaint()
    if release:
        mouse.release(p.x + dx * steps, p.y + dy * steps)
    return p


def test_every_item_of_a_fresh_window_with_the_water_sample_is_tracked_by_the_drag_layer(main_window, mouse, qtbot):
    _doc, view, sched = open_water(main_window)
    scene, layer = view.sketch_scene, view.drag_layer
    water = main_window.live.overlay.water_item
    assert water.marks.arrows and main_window.canvas.bows  # the current drawn, the tethers bowed
    assert scene.tracks_structure and not untracked(scene)
    drag_through_viewport(main_window, mouse, qtbot, "A2", 4, -0.5, 0.0, release=False)
    assert not untracked(scene)  # what a drag adds (solved places, rings) is tracked too
    scans, frames = layer.scans, layer.frames
    a2 = main_window.document.rig.point("A2")
    for i in range(1, 7):
        mouse.move(a2.x - 0.5 * i, a2.y + 0.1 * i)
        qtbot.waitUntil(lambda: sched.result.revision == main_window.document.revision, timeout=5000)
        view.viewport().repaint()
    assert layer.scans == scans and layer.frames >= frames + 6  # no full read of the scene: everything reported
    assert water not in [it for kind, it in layer._steps if kind == "live"]  # the arrows stay in the still image
    assert water.bows in layer._stack[1]  # the bows are drawn with the force overlay in every frame
    check_against_full_scan(view)
    assert_screen_fresh(view)
    assert_same(frame(view, True, through_layer=True), frame(view, False))
    mouse.release(a2.x - 3.0, a2.y + 0.6)


def draw(items, transform: QTransform, size: tuple[int, int], widget) -> np.ndarray:
    """``items`` painted as Qt paints them (device transform, fresh state) onto a transparent image."""
    image = QImage(size[0], size[1], QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.transparent)
    p = QPainter(image)
    for it in items:
        paint_item(p, it, transform, widget, QPainter.Antialiasing | QPainter.TextAntialiasing)
    p.end()
    return pixels(image)


def fresh_water_item(rig, result, m_per_px: float) -> tuple[QGraphicsScene, WaterItem]:
    scene = QGraphicsScene()
    item = WaterItem()
    item.add_to(scene)
    item.set_scale(m_per_px)
    item.show(rig, result)
    return scene, item


def test_after_a_drag_the_water_items_draw_what_fresh_items_draw(main_window, mouse, qtbot):
    doc, view, sched = open_water(main_window)
    water = main_window.live.overlay.water_item
    start, start_rig = water.marks, doc.rig
    drag_through_viewport(main_window, mouse, qtbot, "A2", 5, -0.6, 0.2, release=False)
    assert water.marks is start  # the field was not laid out again during the drag (its texts wait for the pause)
    rig, result = main_window.live.overlay.rig, main_window.live.overlay.result
    k = 1.0 / view.px_per_m
    _scene, fresh = fresh_water_item(rig, result, k)
    fresh.set_marks(field_marks(start_rig))  # the field as laid out before the drag
    assert water.marks == fresh.marks and water.bows.marks == fresh.bows.marks
    assert snapped_points_box(rig) != snapped_points_box(start_rig)  # the drag crossed a line of the texts' box...
    assert water.boundingRect() == fresh.boundingRect() and water.bows.boundingRect() == fresh.bows.boundingRect()
    vt, vp = view.viewportTransform(), view.viewport()
    size = (vp.width(), vp.height())
    shown = draw([water, water.bows], vt, size, vp)
    assert (shown[..., 3] > 0).sum() > 500  # arrows, bows and texts were drawn
    assert np.array_equal(shown, draw([fresh, fresh.bows], vt, size, vp))
    mouse.release(rig.point("A2").x, rig.point("A2").y)
    sched.settle_timer.setInterval(1)
    qtbot.waitUntil(lambda: sched.settled and sched.result.revision == doc.revision, timeout=10000)
    assert water.marks == field_marks(doc.rig) != start  # ...so once the drag pauses its texts are placed again
    # a new current (an undoable edit of the feature): the field's kept drawing is made again
    faster = replace(rig.site.features[0], flow=replace(rig.site.features[0].flow, speed_m_s=3.1))
    doc.apply(replace(rig, site=replace(rig.site, features=(faster, *rig.site.features[1:]))), "current speed")
    qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == doc.revision, timeout=5000)
    assert water.marks == field_marks(doc.rig) != start
    assert any(t.startswith("3.1 m/s") for t, _at, _c, _off in water.marks.texts)
    # feet: speeds in mph (1 mph = 0.44704 m/s, NIST SP 811): the kept field follows the length unit too
    from solver.model import Display

    doc.apply(replace(doc.rig, display=Display("ft", "lbf")), "units")
    qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == doc.revision, timeout=5000)
    assert water.marks == field_marks(doc.rig)
    assert any(t.startswith(f"{3.1 / 0.44704:.1f} mph") for t, _at, _c, _off in water.marks.texts)


def test_a_render_after_a_drag_equals_a_fresh_render_pixel_by_pixel(main_window, mouse, qtbot):
    """The water as drawn after a drag through the viewport (released and settled) equals the water a fresh window
    opened on the final rig draws, pixel for pixel.  (The rest of the frame is not compared: labels keep the places
    they had during the drag, by design of the placer, and the dragged point stays selected.)"""
    from sketchpad.main_window import MainWindow

    doc, view, sched = open_water(main_window)
    drag_through_viewport(main_window, mouse, qtbot, "A2", 6, -0.5, 0.3)
    sched.settle_timer.setInterval(0)
    qtbot.waitUntil(lambda: sched.settled and sched.result.revision == doc.revision, timeout=10000)
    QApplication.processEvents()
    water = main_window.live.overlay.water_item
    vt, vp = view.viewportTransform(), view.viewport()
    size = (vp.width(), vp.height())
    after = draw([water, water.bows], vt, size, vp)
    other = MainWindow()
    try:
        other.resize(main_window.size())
        other.show()
        qtbot.waitExposed(other)
        other.document.replace_all(doc.rig)
        other.view.setTransform(view.transform())
        other.view._scale_changed()
        other.view.horizontalScrollBar().setValue(view.horizontalScrollBar().value())
        other.view.verticalScrollBar().setValue(view.verticalScrollBar().value())
        assert other.live.scheduler.solve_now().ok
        QApplication.processEvents()
        assert other.view.viewportTransform() == vt and other.view.viewport().size() == vp.size()
        fresh = other.live.overlay.water_item
        assert fresh.marks == water.marks
        assert (after[..., 3] > 0).sum() > 500
        assert np.array_equal(after, draw([fresh, fresh.bows], vt, size, other.view.viewport()))
    finally:
        other.close()
        other.deleteLater()
        QApplication.processEvents()


def small_crossing() -> Rig:
    """The benchmark's boat across a current (``test_bench_water``) shrunk to a 12 m crossing, compact enough to
    paint at 100 px/m (demo data)."""
    rig = boat_across_the_current().moved("A", 0.0, 6.0).moved("C", 0.0, -6.0)
    water = replace(rig.site.features[0], polygon=((-6, -4), (6, -4), (6, 4), (-6, 4)))
    return replace(rig, site=replace(rig.site, features=(water,)))


@pytest.mark.parametrize("m_per_px", [0.01, 0.05, 0.4, 3.0])
def test_the_water_items_bounding_rects_hold_every_pixel_they_paint_at_any_zoom(qapp, m_per_px):
    """At 3 m per px (a far zoom-out) the 12 m river is 4 px wide and a label 60 px wide is 180 m: the rect grows
    with the zoom; at 100 px per m it hugs the ink (within the arrow heads' and halos' reach, ours: 12 px)."""
    rig = small_crossing()
    result = solve(rig)
    assert result.ok and result.water.ropes and result.water.bodies
    _scene, item = fresh_water_item(rig, result, m_per_px)
    margin = 600  # px around the rect: ink outside it would be seen
    for it in (item, item.bows):
        rect = it.boundingRect()
        assert not rect.isEmpty()
        t = QTransform.fromTranslate(-rect.left(), -rect.top()) * QTransform.fromScale(1 / m_per_px, 1 / m_per_px)
        t = t * QTransform.fromTranslate(margin, margin)
        box = t.mapRect(rect)
        size = (int(box.width()) + 2 * margin, int(box.height()) + 2 * margin)
        ink = _paint_alone(it, t, size)
        ys, xs = np.nonzero(ink[..., 3] > 0)
        assert len(xs), type(it).__name__
        x0, y0, x1, y1 = xs.min(), ys.min(), xs.max() + 1, ys.max() + 1
        assert box.left() <= x0 and box.top() <= y0 and x1 <= box.right() and y1 <= box.bottom(), \
            f"ink {x0, y0, x1, y1} outside the rect {box.getCoords()}"
        assert box.left() >= x0 - 12 and box.top() >= y0 - 12 and box.right() <= x1 + 12 and box.bottom() <= y1 + 12, \
            f"rect {box.getCoords()} far wider than the ink {x0, y0, x1, y1}"


def _paint_alone(item, t: QTransform, size: tuple[int, int]) -> np.ndarray:
    image = QImage(size[0], size[1], QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.transparent)
    p = QPainter(image)
    p.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing)
    p.setWorldTransform(t)
    item.paint(p, None, None)
    p.end()
    return pixels(image)
