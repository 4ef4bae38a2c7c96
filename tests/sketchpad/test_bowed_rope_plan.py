"""The plan shows one rope where the current bows it (issue 20): a drag through the viewport on the tethered-boat
sample and on the raft sample, then the pixels read as a rigger reads them.

- The rope item draws a bowed piece along the solver's hidden points: rope-coloured pixels at the bow's middle,
  none at the middle of the straight chord between the piece's ends (the chord is not drawn at all).
- The use band of a bowed piece follows the bow: every band end lies on the bowed polyline.
- During the drag (not settled) the free load's marker stands where the drag step's own solve put it, the solve
  the bows are drawn from, with its ropes ending there.
- The water texts sit inside the fitted view and inside the water.
Geometry only (no published values): the checks compare the drawing with the solver's own result.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QImage, QPainter
from shapely.geometry import LineString
from shapely.geometry import Point as ShapelyPoint
from shapely.geometry import Polygon

from sketchpad import theme
from sketchpad.drag_layer import paint_item
from sketchpad.geometry import to_scene
from tests.sketchpad.test_overlay import open_sample
from tests.sketchpad.test_overlay_incremental import pixels
from tests.sketchpad.test_water_drag_frame import drag_through_viewport

BOAT, RAFT = "tethered-boat-eddy.rig.json", "raft-3to1-redirect.rig.json"


def drag_without_release(window, mouse, qtbot, pid: str, steps: int, dx: float, dy: float) -> None:
    """Press on ``pid`` and move ``steps`` times by (dx, dy) m, each step's drag solve delivered and painted."""
    sched = window.live.scheduler
    sched.background, sched.background_after_ms = False, float("inf")
    sched.settle_timer.setInterval(600_000)  # the whole test is one drag: no settled result in between
    drag_through_viewport(window, mouse, qtbot, pid, steps, dx, dy, release=False)
    assert not sched.settled and sched.result.ok


def rope_alone(window, rope_id: str) -> np.ndarray:
    """The rope item of ``rope_id`` painted alone, as Qt paints it, over a transparent viewport-sized image."""
    view = window.view
    item = window.canvas.items_by_key[("rope", rope_id)]
    vp = view.viewport()
    image = QImage(vp.width(), vp.height(), QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.transparent)
    p = QPainter(image)
    paint_item(p, item, view.viewportTransform(), vp, QPainter.Antialiasing)
    p.end()
    return pixels(image)


def device(view, site_xy) -> tuple[float, float]:
    d = view.viewportTransform().map(to_scene(*site_xy))
    return d.x(), d.y()


def near(img: np.ndarray, xy, r: int) -> np.ndarray:
    x, y = int(round(xy[0])), int(round(xy[1]))
    return img[max(0, y - r):y + r + 1, max(0, x - r):x + r + 1].reshape(-1, 4)


def colour_distance(block: np.ndarray, colour: QColor) -> float:
    """The smallest distance (0-255 per channel, largest channel) of an opaque-ish pixel of ``block`` to ``colour``."""
    solid = block[block[:, 3] > 200]
    if not len(solid):
        return 255.0
    want = np.array([colour.red(), colour.green(), colour.blue()])
    return float(np.abs(solid[:, :3] - want).max(axis=1).min())


def bowed_pieces(window, min_sag_m: float = 0.05):
    """The wet pieces of the shown result whose bow stands at least ``min_sag_m`` off its chord."""
    res = window.live.overlay.result
    return [w for w in res.water.ropes if w.bowed and w.sag_m >= min_sag_m]


def far_point(line: np.ndarray) -> np.ndarray:
    """The point of a bowed polyline farthest from its chord."""
    a, b = line[0], line[-1]
    u = (b - a) / np.hypot(*(b - a))
    off = np.abs((line[:, 0] - a[0]) * u[1] - (line[:, 1] - a[1]) * u[0])
    return line[int(np.argmax(off))]


def chord_foot(line: np.ndarray, q: np.ndarray) -> np.ndarray:
    """The point of the straight chord between a polyline's ends nearest to ``q``."""
    a, b = line[0], line[-1]
    u = (b - a) / np.hypot(*(b - a))
    return a + u * float(np.dot(q - a, u))


def zoom_on(window, w, sag_px: float = 12.0) -> None:
    """Zoom the view so piece ``w``'s bow stands ``sag_px`` off its chord, centred on its middle."""
    view = window.view
    s = max(view.px_per_m, sag_px / w.sag_m)
    line = np.array(w.polyline)
    far = far_point(line)
    mid = (far + chord_foot(line, far)) / 2  # between the bow's farthest point and the chord opposite it
    view.resetTransform()
    view.scale(s, s)
    view.centerOn(to_scene(*mid))
    view._scale_changed()
    view.viewport().repaint()


@pytest.mark.parametrize("sample, pid, step", [(BOAT, "A2", (-0.5, 0.0)), (RAFT, "A2", (0.5, 0.0))])
def test_a_bowed_piece_is_drawn_along_its_bow_and_its_chord_is_not(main_window, mouse, qtbot, sample, pid, step):
    assert open_sample(main_window, sample).ok
    for stage in range(2):  # settled, then mid-drag
        if stage:
            drag_without_release(main_window, mouse, qtbot, pid, 4, *step)
        pieces = bowed_pieces(main_window)
        assert pieces, "the sample's current bows a rope visibly"
        order = [r.id for r in main_window.document.rig.ropes]
        for w in pieces:
            zoom_on(main_window, w)
            img = rope_alone(main_window, w.rope)
            colour = theme.rope_colour(order.index(w.rope))
            line = np.array(w.polyline)
            far = far_point(line)  # the bow's point farthest from the chord: the rope must be drawn there
            assert colour_distance(near(img, device(main_window.view, far), 1), colour) < 40, (w.rope, "bow not drawn")
            screen = pixels(main_window.view.viewport().grab().toImage())
            bow = LineString(line)
            # the chord opposite the bow's farthest point, and the chord's middle where the bow stands clear of it
            for q in (chord_foot(line, far), (line[0] + line[-1]) / 2):
                if bow.distance(ShapelyPoint(*q)) * main_window.view.px_per_m < 5.0:
                    continue
                assert near(img, device(main_window.view, q), 1)[:, 3].max() < 40, (w.rope, "a chord is drawn")
                # on screen, with the bands over it, no rope-coloured pixel there either
                assert colour_distance(near(screen, device(main_window.view, q), 1), colour) > 25, w.rope


def test_the_use_bands_follow_the_bow(main_window, mouse, qtbot):
    assert open_sample(main_window, BOAT).ok
    drag_without_release(main_window, mouse, qtbot, "A2", 3, -0.5, 0.0)
    item = main_window.live.overlay.force_item
    res = main_window.live.overlay.result
    ends = {e for band in item.band_ends for e in band}
    for w in bowed_pieces(main_window):
        scene_line = [tuple(to_scene(*p).toTuple()) for p in w.polyline]
        inner = scene_line[1:-1]
        # every hidden point of the bow is a band end (the band runs through it)...
        assert all(any(math.dist(q, e) < 1e-9 for e in ends) for q in inner), w.rope
        # ...and the band has no piece along the chord: no band segment joins the piece's two ends
        a, b = scene_line[0], scene_line[-1]
        for band in item.band_ends:
            pairs = list(zip(band[0::2], band[1::2]))
            assert not any({tuple(p), tuple(q)} == {a, b} for p, q in pairs), w.rope
    assert res.ok


def test_the_boat_follows_the_drag_steps_solve(main_window, mouse, qtbot):
    assert open_sample(main_window, BOAT).ok
    scene = main_window.canvas
    drag_without_release(main_window, mouse, qtbot, "A2", 5, -0.6, 0.0)
    res = main_window.live.scheduler.result
    assert main_window.live.overlay.result is res  # the bows are this solve's
    boat = scene.items_by_key[("point", "B1")]
    assert (boat.pos().x(), boat.pos().y()) == pytest.approx(tuple(to_scene(*res.points["B1"]).toTuple()), abs=1e-9)
    drawn = main_window.document.rig.point("B1")
    assert math.dist(res.points["B1"], (drawn.x, drawn.y)) > 0.05  # a real move off the drawn place (ring shown)
    # the dragged anchor stays under the cursor, where the document has it
    a2 = main_window.document.rig.point("A2")
    assert scene.items_by_key[("point", "A2")].pos() == to_scene(a2.x, a2.y)
    # each tether's rope item ends at the boat's solved place (its last path point is the boat)
    for rope in ("T1", "T2"):
        path = scene.items_by_key[("rope", rope)]._path
        last = path.elementAt(path.elementCount() - 1)
        assert math.dist((last.x, last.y), tuple(to_scene(*res.points["B1"]).toTuple())) < 0.5


def test_water_texts_sit_in_the_fitted_view_and_in_the_water(main_window):
    assert open_sample(main_window, BOAT).ok
    view = main_window.view
    water = main_window.live.overlay.water_item
    seen = view.mapToScene(view.viewport().rect()).boundingRect()
    rig = main_window.document.rig
    wet = [Polygon(f.polygon) for f in rig.site.features if f.flow is not None]
    for text, (x, y), _c, _off in water.marks.texts:
        assert seen.contains(QPointF(x, y)), text
        assert any(p.covers(ShapelyPoint(x, -y)) for p in wet), text
    # no force label is placed over a speed or a river side (they are the placer's obstacles)
    k = view.px_per_m
    texts = [(at[0] * k + x, at[1] * k + y, w, h) for at, (x, y, w, h) in water.text_boxes()]
    assert len(texts) == len(water.marks.texts)  # all shown at fit zoom
    for lab in main_window.live.overlay.labels:
        if lab.placed:
            x, y, w, h = lab.rect
            lx, ly = lab.at[0] * k + x, lab.at[1] * k + y
            for tx, ty, tw, th in texts:
                assert not (lx < tx + tw and tx < lx + w and ly < ty + th and ty < ly + h), lab.lines
    # zoomed far out the speeds and river sides are left out rather than piled on the river
    view.scale(0.1, 0.1)
    view._scale_changed()
    from sketchpad.water_marks import shown_texts

    fm = water._fm
    assert len(shown_texts(water.marks, water.m_per_px, fm)) < len(water.marks.texts)



def test_print_rails_follow_the_bow(qapp):
    """The rope-use rails of a printed drawing (``sketchpad.pages.greyscale``) run along a bowed piece's bow: each
    railed bowed piece gets two rails per segment of its bowed polyline, none along its chord."""
    from sketchpad.export import Drawing
    from sketchpad.pages.greyscale import paint_drawing_rails, util_class
    from solver.rigfile import load_rig
    from tests.sketchpad.test_overlay import SAMPLES

    drawing = Drawing(load_rig(SAMPLES / BOAT))
    assert drawing.result.ok
    drawing.fit_into(900, 640)
    wet = {(w.rope, w.index): w for w in drawing.result.water.ropes if w.bowed}
    util = {(s.rope, s.index): s.utilization for s in drawing.result.segments}
    railed = [key for key, _a, _b in drawing.pieces if key in wet and util_class(util[key]) not in (None, 0)]
    assert railed  # the sample's tethers are loaded past half their allowed load
    lines = []

    class Recorder(QPainter):
        def drawLine(self, a, b):  # noqa: N802
            lines.append((QPointF(a), QPointF(b)))
            super().drawLine(a, b)

    image = QImage(900, 640, QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.white)
    p = Recorder(image)
    n = paint_drawing_rails(p, QRectF(0, 0, 900, 640), drawing)
    p.end()
    assert n >= len(railed)
    bowed_rails = sum(2 * (len(wet[k].polyline) - 1) for k in railed)
    straight_rails = 2 * (n - len(railed))
    assert len(lines) == bowed_rails + straight_rails


def test_live_places_keep_the_dragged_point_under_the_cursor():
    """``live_places``: on a wet rig mid-drag every free point the solve moved is drawn there except one the drag
    moved (it stays under the cursor); a dry rig mid-drag keeps the places drawn; settled: all of them."""
    from dataclasses import replace

    from sketchpad.solved_places import live_places, moved_free_points
    from solver.equilibrium import solve
    from solver.rigfile import load_rig
    from tests.sketchpad.test_overlay import SAMPLES

    rig = load_rig(SAMPLES / BOAT)
    res = solve(rig)
    assert res.ok and "B1" in moved_free_points(rig, res)
    b1 = rig.point("B1")
    dragged = rig.moved("B1", b1.x + 1.0, b1.y)
    moved = solve(dragged)
    assert live_places(dragged, moved, None) == moved_free_points(dragged, moved)  # settled: all
    assert "B1" not in live_places(dragged, moved, rig)  # mid-drag: the dragged boat stays under the cursor
    a2 = rig.point("A2")
    anchor_dragged = rig.moved("A2", a2.x - 1.0, a2.y)
    step = solve(anchor_dragged)
    assert live_places(anchor_dragged, step, rig)["B1"] == pytest.approx(step.points["B1"])  # the boat follows
    dry = replace(step, water=None)
    assert live_places(anchor_dragged, dry, rig) == "keep"
