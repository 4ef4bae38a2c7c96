"""Drag frames that repaint only what changed (sketchpad.drag_layer, damage) leave on screen what a whole frame shows.

A damage-only frame leaves every pixel outside its damage as the last frame left it in the
window's backing store, so the proof is on the backing store itself: after many such frames its
viewport pixels (``QScreen.grabWindow`` on the offscreen platform reads the backing store: checked
first) are compared with the same state painted afresh by Qt alone (``frame(view, False)``).  Items
composited from cached images differ from Qt's own paint only by 8-bit rounding at anti-aliased
edges (``ROUNDING``, as in test_drag_layer.py); a stale label, band or banner differs by far more.
Each test also checks that damage-only frames were painted (``damage_frames``), so it can fail.
"""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QPoint, QRect
from PySide6.QtGui import QColor, QImage, QPainter
from PySide6.QtWidgets import QApplication

from solver.model import Point
from tests.sketchpad.test_drag_layer import assert_same, drag_steps, fifty_rope_window, frame, line_steps
from tests.sketchpad.test_overlay import open_sample
from tests.sketchpad.test_overlay_incremental import _chip_entry, pixels


def screen(view) -> np.ndarray:
    """The viewport's pixels in the window's backing store: what the frames painted so far left on screen."""
    vp, win = view.viewport(), view.window()
    at = vp.mapTo(win, QPoint(0, 0))
    shot = win.screen().grabWindow(win.winId(), at.x(), at.y(), vp.width(), vp.height())
    assert shot.width() == vp.width() and shot.height() == vp.height()
    return pixels(shot.toImage())


def damage_share(view) -> float:
    """The share of the viewport the last damage-only frame redrew."""
    vp = view.viewport()
    return sum(r.width() * r.height() for r in view.drag_layer.last_damage) / (vp.width() * vp.height())


def assert_screen_fresh(view) -> None:
    """The backing store holds what Qt alone paints for the current state (the fresh paint comes second:
    it paints into a pixmap, never the backing store)."""
    shown = screen(view)
    assert_same(shown, frame(view, False))


def test_the_screen_grab_reads_the_backing_store(main_window):
    """Pixels put into the backing store behind Qt's back show in ``screen``: it reads the store, not a new paint."""
    view = main_window.view
    vp = view.viewport()
    vp.repaint()
    store = vp.backingStore().paintDevice()
    assert isinstance(store, QImage)
    at = vp.mapTo(view.window(), QPoint(0, 0))
    p = QPainter(store)
    p.fillRect(at.x() + 10, at.y() + 20, 7, 5, QColor(255, 0, 255))
    p.end()
    shown = screen(view)
    assert (shown[20:25, 10:17, :3] == (255, 0, 255)).all()
    assert not (shown[30:40, 10:17, :3] == (255, 0, 255)).all(axis=2).any()
    vp.repaint()
    assert not (screen(view)[20:25, 10:17, :3] == (255, 0, 255)).all(axis=2).any()  # a repaint covers it


def step(doc, sched, view, pid: str, i: int) -> tuple[int, int]:
    """Drag step ``i`` of ``pid`` (as test_drag_layer.drag_steps: preview, solve, repaint); returns how many
    frames and damage-only frames the drag layer painted for it."""
    layer = view.drag_layer
    frames, damaged = layer.frames, layer.damage_frames
    drag_steps(doc, sched, view, pid, 1, start=i)
    return layer.frames - frames, layer.damage_frames - damaged


def test_damage_only_drag_frames_on_fifty_ropes_leave_the_frame_a_fresh_paint_shows(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    layer = view.drag_layer
    drag_steps(doc, sched, view, "H4", 4)
    shares, placed = [], set()
    for i in range(4, 40):
        assert step(doc, sched, view, "H4", i) == (1, 1)  # every frame after the first few redrew its damage only
        shares.append(damage_share(view))
        placed.add(frozenset(lab.key for lab in main_window.live.overlay.labels if lab.placed))
        if i % 9 == 0:
            assert_screen_fresh(view)
    assert len(placed) > 1  # labels came and went on the way
    assert max(shares) < 0.25 and min(shares) > 0  # a part of the viewport, never nothing
    assert_screen_fresh(view)
    assert layer.damage_frames >= 36


def test_labels_hidden_and_shown_between_damage_frames_leave_no_stale_pixels(main_window):
    """Labels go and come back between two frames, with the drag's still image kept (frames with nothing
    solved, as when the overlay is relaid out); and whole kinds of labels go and come with their View menu
    layer (the rebuild redraws the danger zones, so the still image is built again first)."""
    doc, sched, view = fifty_rope_window(main_window)
    ov = main_window.live.overlay
    item = ov.force_item
    drag_steps(doc, sched, view, "H7", 4)
    placed = [lab for lab in ov.labels if lab.placed]
    chosen = placed[::7][:6]
    for lab in chosen:
        lab.placed = False  # the placer hides it
    item.refresh_rect(ov._m_per_px())
    frames, damaged = view.drag_layer.frames, view.drag_layer.damage_frames
    view.viewport().repaint()
    assert (view.drag_layer.frames - frames, view.drag_layer.damage_frames - damaged) == (1, 1)
    assert_screen_fresh(view)
    for lab in chosen:
        lab.placed = True  # and shows it again
    item.refresh_rect(ov._m_per_px())
    view.viewport().repaint()
    assert view.drag_layer.damage_frames - damaged == 2
    assert_screen_fresh(view)
    kinds = lambda: {lab.kind for lab in ov.labels if lab.placed}  # noqa: E731
    assert "anchor" in kinds()
    for n, (layer, on) in enumerate((("anchors", False), ("angles", False), ("anchors", True), ("angles", True))):
        ov.set_layer(layer, on)
        assert ("anchor" in kinds()) == ov.layers["anchors"] and ("angle" in kinds()) == ov.layers["angles"]
        drag_steps(doc, sched, view, "H7", 3, start=4 + 4 * n)
        assert step(doc, sched, view, "H7", 7 + 4 * n) == (1, 1)
        assert_screen_fresh(view)


def test_a_drag_through_the_viewport_with_qt_scheduling_the_paints_keeps_the_screen_fresh(main_window, mouse, qtbot):
    """A real drag: mouse moves on the viewport, solves delivered and frames painted by Qt's event loop
    (updates, not repaints), the legend's numbers changing on the way."""
    open_sample(main_window, "raft-3to1-redirect.rig.json")
    view, sched = main_window.view, main_window.live.scheduler
    sched.settle_timer.setInterval(600_000)
    layer = view.drag_layer
    legend = main_window.live.overlay.legend
    pid = next(p.id for p in main_window.document.rig.points if p.kind == "haul")
    h = main_window.document.rig.point(pid)
    mouse.press(h.x, h.y)
    texts = set()
    for i in range(1, 16):
        mouse.move(h.x + 0.15 * i, h.y - 0.25 * i)
        qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == main_window.document.revision,
                        timeout=3000)
        QApplication.processEvents()  # Qt paints what was updated
        texts.add(tuple(legend.lines))
        if layer.damage_frames and i % 3 == 0:
            assert_screen_fresh(view)
    assert layer.damage_frames >= 5
    assert len(texts) > 2  # the key's numbers changed as the haul team moved
    assert_screen_fresh(view)
    mouse.release(h.x + 2.25, h.y - 3.75)
    qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == main_window.document.revision,
                    timeout=3000)
    QApplication.processEvents()
    assert_screen_fresh(view)


def test_a_failed_solve_mid_drag_greys_the_overlay_and_shows_the_hint_on_screen(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    ov = main_window.live.overlay
    layer = view.drag_layer
    drag_steps(doc, sched, view, "H2", 5)
    base = doc.rig
    loose = base.with_point(Point("K9", "point", 40.0, 5.0, label="loose karabiner"))  # no rope reaches it: no solve
    p = base.point("H2")
    # the hint strip's own updates (partial paints of the viewport under it) after steps 0 and 5
    line_steps(doc, sched, view, loose, "H2", p, range(8), lambda i: i in (0, 5) and QApplication.processEvents())
    # a point no rope reaches is a sketch being drawn: greyed, with the calm hint (translucent, over the frame)
    assert ov.greyed and ov.banner.isHidden() and "loose karabiner" in main_window.hints.shown_text()
    assert layer.damage_frames > 0
    before = layer.damage_frames
    line_steps(doc, sched, view, loose, "H2", p, range(8, 12))
    assert layer.damage_frames - before == 4  # greyed frames redraw their damage only
    assert_screen_fresh(view)  # the translucent hint over the frame, laid down once
    # the point goes: the solve works again, the hint goes (its own updates after step 13)
    line_steps(doc, sched, view, base, "H2", p, range(12, 20), lambda i: i == 13 and QApplication.processEvents())
    assert not ov.greyed and main_window.hints.isHidden()
    assert layer.damage_frames - before > 8
    assert_screen_fresh(view)


def test_zoom_pan_resize_and_a_partial_paint_mid_drag_paint_the_next_frame_whole(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    drag_steps(doc, sched, view, "H4", 5)
    assert step(doc, sched, view, "H4", 5) == (1, 1)
    view.zoom_at(1.3, QPoint(400, 300))
    assert step(doc, sched, view, "H4", 6)[1] == 0  # a new transform: not over the last frame
    drag_steps(doc, sched, view, "H4", 3, start=7)
    assert step(doc, sched, view, "H4", 10) == (1, 1)
    assert_screen_fresh(view)
    view._scroll_by(QPoint(-37, 21))  # a pan
    assert step(doc, sched, view, "H4", 11)[1] == 0
    drag_steps(doc, sched, view, "H4", 3, start=12)
    assert step(doc, sched, view, "H4", 15) == (1, 1)
    assert_screen_fresh(view)
    main_window.resize(1300, 860)
    QApplication.processEvents()
    assert step(doc, sched, view, "H4", 16)[1] == 0
    drag_steps(doc, sched, view, "H4", 3, start=17)
    assert step(doc, sched, view, "H4", 20) == (1, 1)
    assert_screen_fresh(view)
    QApplication.processEvents()
    ov = main_window.live.overlay
    for lab in [lab for lab in ov.labels if lab.placed][:5]:
        lab.placed = False  # labels go (Qt hears of it only once events run) ...
    ov.force_item.refresh_rect(ov._m_per_px())
    frames, damaged = view.drag_layer.frames, view.drag_layer.damage_frames
    view.viewport().repaint(QRect(30, 30, 40, 40))  # ... and a paint of a corner alone: they are still on screen
    assert (view.drag_layer.frames, view.drag_layer.damage_frames) == (frames + 1, damaged)
    assert step(doc, sched, view, "H4", 21) == (1, 0)  # so the next frame is whole
    assert_screen_fresh(view)
    assert step(doc, sched, view, "H4", 22) == (1, 1)
    assert_screen_fresh(view)
    assert view.drag_layer.damage_frames == damaged + 1
    view.viewport().repaint(QRect(30, 30, 40, 40))  # a corner, with nothing changed since: it covers the (HUD-free) damage
    assert view.drag_layer.damage_frames == damaged + 2 and view.drag_layer.last_damage.isEmpty()


def test_a_grab_mid_drag_is_a_whole_frame_and_the_next_screen_frame_is_still_right(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    layer = view.drag_layer
    drag_steps(doc, sched, view, "H4", 6)
    doc.preview(doc.rig.moved("H4", doc.rig.point("H4").x + 0.5, doc.rig.point("H4").y - 0.4))
    sched._change_gap_ms = 1.0
    sched.fire()  # a new state that only the grab paints
    frames, damaged = layer.frames, layer.damage_frames
    grabbed = pixels(view.viewport().grab().toImage())
    assert layer.frames == frames + 1 and layer.damage_frames == damaged  # through the layer, but whole
    assert_same(grabbed, frame(view, False))
    whole = pixels(main_window.grab().toImage())  # the window too (it paints the viewport into its pixmap)
    at = view.viewport().mapTo(main_window, QPoint(0, 0))
    vp = view.viewport()
    assert_same(whole[at.y():at.y() + vp.height(), at.x():at.x() + vp.width()], frame(view, False))
    assert layer.damage_frames == damaged
    view.viewport().repaint()  # the screen gets the state the grabs showed: over the frame before them
    assert layer.damage_frames == damaged + 1
    assert_screen_fresh(view)
    assert step(doc, sched, view, "H4", 7) == (1, 1)
    assert_screen_fresh(view)


def test_a_selection_change_mid_drag_shows_on_screen(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    drag_steps(doc, sched, view, "H4", 6)
    view.sketch_scene.select_keys([("point", "M4"), ("rope", "sa4")])  # still items change their look
    assert step(doc, sched, view, "H4", 6)[1] == 0  # a new still image: a whole frame
    drag_steps(doc, sched, view, "H4", 2, start=7)
    assert_screen_fresh(view)
    assert step(doc, sched, view, "H4", 9) == (1, 1)
    view.sketch_scene.select_keys([("point", "H4")])
    assert step(doc, sched, view, "H4", 10)[1] == 0
    drag_steps(doc, sched, view, "H4", 2, start=11)
    assert step(doc, sched, view, "H4", 13) == (1, 1)
    assert_screen_fresh(view)


def test_a_retained_layers_damage_holds_every_pixel_it_changed():
    """``RetainedLayer.take_damage`` (what a damage frame redraws for the overlay) holds every device pixel whose
    value changed since it was last taken: over patched frames, frames redrawn whole (many changes, a moved
    area, a new frame key), frames that were not taken in between, and a ``clear``."""
    import random

    from PySide6.QtGui import QPixmap, QRegion

    from sketchpad.retained import RetainedLayer

    rng = random.Random(3)
    swatches = []
    for i in range(5):
        pix = QPixmap(12 + 5 * i, 8 + 3 * i)
        pix.fill(QColor.fromHsv(70 * i, 190, 220, 90 + 30 * i))
        swatches.append(pix)
    size = (260, 190)

    def entry(k, x, y):
        return _chip_entry(swatches, k, x, y)

    def on_device(layer, area) -> np.ndarray:
        """The layer as composited on a device of ``size`` (transparent where it has no area)."""
        out = np.zeros((size[1], size[0], 4), int)
        if layer.image is not None:
            got = pixels(layer.image)
            out[area.top():area.bottom() + 1, area.left():area.right() + 1] = got[:area.height(), :area.width()]
        return out

    def inside(region: QRegion) -> np.ndarray:
        mask = np.zeros((size[1], size[0]), bool)
        for r in region:
            mask[max(r.top(), 0):r.bottom() + 1, max(r.left(), 0):r.right() + 1] = True
        return mask

    things = [(rng.randrange(5), rng.uniform(20, 200), rng.uniform(20, 150)) for _ in range(30)]
    layer = RetainedLayer()
    area = QRect(10, 10, 230, 170)
    shown = np.zeros((size[1], size[0], 4), int)  # what the screen holds: the layer when damage was last taken
    untaken = 0
    for step in range(40):
        n = 20 if step % 9 == 4 else rng.randrange(1, 4)  # now and then more than a partial redraw takes
        for _ in range(n):
            i = rng.randrange(len(things))
            k, x, y = things[i]
            things[i] = (k, x + rng.uniform(-8, 8), y + rng.uniform(-8, 8))
        if step % 9 == 4:  # and the leftmost drawables go (the used part shrinks), others come at the right
            things.sort(key=lambda t: t[1])
            things = things[6:] + [(rng.randrange(5), rng.uniform(150, 200), rng.uniform(20, 150)) for _ in range(6)]
        if step == 20:
            area = QRect(0, 4, 250, 180)  # the layer's area moves: redrawn whole
        if step == 30:
            layer.clear()
        frame = ("f", step >= 25)  # a new frame key from step 25 on
        layer.update(frame, area, [entry(*t) for t in things])
        if step % 5 == 2:
            untaken += 1
            continue  # this frame's damage is taken with the next one's
        now = on_device(layer, area)
        changed = np.abs(now - shown).max(axis=2) > 0
        damage = layer.take_damage()
        assert not (changed & ~inside(damage)).any(), f"step {step}: changed pixels outside the damage"
        assert changed.any() and inside(damage).mean() < 0.9 or step in (20, 25, 30), f"step {step}"
        shown = now
    assert layer.full_redraws >= 4 and layer.partial_redraws >= 20 and untaken >= 5
