"""The drag layer's bookkeeping (sketchpad.drag_layer) decides as a full read of the scene does and shows what Qt shows.

A drag frame no longer reads every item of the scene: items report their changes (``Versioned``
logs each version bump), and the scene's item set and stacking order are taken as unchanged while
a structure counter is (bumped by the scene's adds and removes and by every tracked item's scene,
parent, child, z or flags change and ``stackBefore``).  These tests drive random mid-drag
sequences of item adds and removes, z changes, ``stackBefore``, children, updates, moves,
selection and visibility, and after every frame compare the layer's stacking order and versions
with a fresh full computation (``stacking_order`` and ``item_version`` over the whole scene),
its decisions (build, drop, moved items, damage frames) with those of the same run read in full
every frame, and the screen with Qt's own paint.
"""

from __future__ import annotations

import random

import pytest
from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QPen
from PySide6.QtWidgets import QApplication, QGraphicsItem, QGraphicsRectItem, QGraphicsSimpleTextItem

from sketchpad import drag_layer, theme
from sketchpad.drag_layer import Versioned, _partly_cached, _with_children, item_version, stacking_order
from tests.sketchpad.test_drag_damage import assert_screen_fresh
from tests.sketchpad.test_drag_layer import assert_same, drag_steps, fifty_rope_window, frame


class Marker(Versioned, QGraphicsRectItem):
    """A tracked, versioned test item (a translucent box)."""


class Plain(QGraphicsSimpleTextItem):
    """A text the layer cannot track (a stock Qt item, fingerprinted for what it shows): while one is in the scene
    every frame reads the scene whole."""


def name(item) -> object:
    """What names ``item`` the same way in two windows built alike."""
    return getattr(item, "key", None) or getattr(item, "tag", None) or type(item).__name__


def fresh_stack(scene) -> tuple[list, list]:
    """Below and at/above the overlay, in stacking order, computed from the whole scene (as the layer once did every frame)."""
    below, top = [], []
    for root in stacking_order(scene):
        (below if root.zValue() < theme.Z_OVERLAY else top).extend(_with_children(root))
    return below, top


def check_against_full_scan(view) -> None:
    """The layer's last frame used the stacking order and versions a fresh read of the whole scene gives (versions:
    but for items logged as changed since)."""
    layer = view.drag_layer
    below, top = fresh_stack(view.scene())
    _frame, used_below, used_versions = layer._last
    assert [name(it) for it in used_below] == [name(it) for it in below]
    assert all(a is b for a, b in zip(used_below, below))
    assert [name(it) for it in layer._stack[1]] == [name(it) for it in top]
    vt, vp = view.viewportTransform(), view.viewport()
    for _key, it, part in layer._partly.values():  # kept answers for the top items, where they still hold
        if id(it) not in layer._log:
            assert part == _partly_cached(it, vt, vp), name(it)
    now = [item_version(it) for it in below]
    # an item changed since (while the frame was painted) is in the log, read again by the next frame
    assert not [name(it) for it, a, b in zip(below, used_versions, now) if a != b and id(it) not in layer._log]


def random_mid_drag(window, seed: int, push: bool, steps: int = 48) -> list:
    """A drag of H4 with random changes of the scene between its frames; returns the layer's decisions frame by frame.

    ``push`` False makes the scene say it does not track its structure: the layer reads it whole every frame."""
    doc, sched, view = fifty_rope_window(window)
    scene, layer = view.sketch_scene, view.drag_layer
    if not push:
        scene.tracks_structure = False
    rng = random.Random(seed)
    added: list = []
    drag_steps(doc, sched, view, "H4", 4)
    trace = []
    for i in range(steps):
        h = doc.rig.point("H4")
        op = "none" if rng.random() < 0.5 else rng.choice(["add", "add", "plain", "remove", "z", "update", "select",
                                                           "visible", "stack", "child", "move"])
        keys = sorted(k for k in scene.items_by_key if k[0] in ("point", "rope"))
        if op == "add" or (op in ("remove", "stack", "child", "move") and not added):
            it = Marker(QRectF(0, 0, rng.uniform(0.5, 4), rng.uniform(0.5, 4)))
            it.tag = f"m{i}"
            it.setPos(h.x + rng.uniform(-6, 6), -h.y + rng.uniform(-6, 6))
            it.setBrush(QBrush(QColor.fromHsv(rng.randrange(360), 200, 220, 120)))
            it.setPen(QPen(Qt.NoPen))
            it.setZValue(rng.choice([theme.Z_FEATURE, theme.Z_ROPE, theme.Z_POINT, theme.Z_POINT + 0.5]))
            scene.addItem(it)
            added.append(it)
            op = "add"
        elif op == "plain":
            it = Plain(f"plain {i}")
            it.tag = f"p{i}"
            it.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
            it.setPos(h.x + rng.uniform(-6, 6), -h.y + rng.uniform(-6, 6))
            it.setBrush(QBrush(QColor(30, 90, 200)))
            it.setZValue(theme.Z_ROPE)
            scene.addItem(it)
            added.append(it)
        elif op == "remove":
            it = added.pop(rng.randrange(len(added)))
            if it.scene() is not None:
                it.scene().removeItem(it)
        elif op == "z":
            it = rng.choice(added + [scene.items_by_key[k] for k in keys])
            it.setZValue(rng.choice([theme.Z_FEATURE, theme.Z_ROPE, theme.Z_POINT, theme.Z_POINT + 0.5]))
        elif op == "update":
            scene.items_by_key[rng.choice(keys)].update()
        elif op == "select":
            scene.select_keys(rng.sample(keys, rng.randrange(0, 3)))
        elif op == "visible":
            it = rng.choice(added + [scene.items_by_key[k] for k in keys if k[0] == "point"])
            it.setVisible(not it.isVisible())
        elif op == "stack":  # an item put under another of the same z (Qt keeps no other trace of it)
            a = rng.choice(added)
            peers = [b for b in added + [scene.items_by_key[k] for k in keys]
                     if b is not a and b.zValue() == a.zValue() and b.parentItem() is a.parentItem()]
            if peers:
                a.stackBefore(rng.choice(peers))
        elif op == "child":
            parent = rng.choice(added)
            if rng.random() < 0.7:  # made under a parent in the scene
                kid = Marker(QRectF(0, 0, 1, 1), parent)
            else:
                kid = Plain(f"child {i}", parent)
                kid.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
            kid.tag = f"c{i}"
            kid.setBrush(QBrush(QColor(200, 40, 40, 160)))
            kid.setPos(rng.uniform(-1, 1), rng.uniform(-1, 1))
        elif op == "move":
            it = rng.choice(added)
            it.moveBy(rng.uniform(-1, 1), rng.uniform(-1, 1))
        before = (layer.builds, layer.frames, layer.damage_frames)
        drag_steps(doc, sched, view, "H4", 1, start=4 + i)
        try:
            check_against_full_scan(view)
        except AssertionError as e:
            raise AssertionError(f"frame {i} after {op!r} ({'pushed' if push else 'full scans'}; before: "
                                 f"{[t[0] for t in trace]}): {e}") from None
        below = layer._last[1]
        trace.append((op, layer.builds - before[0], layer.frames - before[1], layer.damage_frames - before[2],
                      layer.image is None, sorted(str(name(below[j])) if j < len(below) else str(j) for j in (layer._last_moved or ())),
                      [(kind, str(name(it)) if kind == "live" else None) for kind, it in layer._steps]))
        if push and i % 6 == 5:
            assert_screen_fresh(view)
    if push:
        assert_screen_fresh(view)
        assert_same(frame(view, True), frame(view, False))
    return trace


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_random_changes_mid_drag_are_decided_as_a_full_scan_decides_them(qtbot, seed):
    from sketchpad.main_window import MainWindow

    traces, scans = [], []
    for push in (True, False):
        w = MainWindow()
        w.resize(1200, 800)
        w.show()
        qtbot.waitExposed(w)
        QApplication.processEvents()  # until the window's first events ran, a repaint of the viewport paints nothing
        try:
            traces.append(random_mid_drag(w, seed, push))
            scans.append(w.view.drag_layer.scans)
        finally:
            w.close()
            w.deleteLater()
            QApplication.processEvents()
    pushed, full = traces
    assert [t[0] for t in pushed] == [t[0] for t in full]  # the same changes were made
    for i, (a, b) in enumerate(zip(pushed, full)):
        assert a == b, f"frame {i} after {a[0]!r}: {a} != {b}"
    assert sum(t[1] for t in pushed) >= 2 and sum(t[2] for t in pushed) >= 5  # the layer was built and used
    assert scans[0] < scans[1]  # the pushed run skipped reading the scene on some frames (else it tests nothing)


def test_a_plain_drag_reads_the_scene_once_and_an_untracked_item_makes_every_frame_read_it(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    layer = view.drag_layer
    drag_steps(doc, sched, view, "H4", 4)
    scans = layer.scans
    drag_steps(doc, sched, view, "H4", 6, start=4)
    assert layer.scans == scans and layer.frames >= 6  # nothing added or restacked: no frame read the whole scene
    plain = Plain("a note")
    plain.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
    plain.setBrush(QBrush(QColor(0, 120, 0)))
    plain.setZValue(theme.Z_POINT)
    h = doc.rig.point("H4")
    plain.setPos(h.x, -h.y)
    view.sketch_scene.addItem(plain)
    drag_steps(doc, sched, view, "H4", 5, start=10)
    assert layer.scans >= scans + 5  # it could change unseen (its z, a child): every frame reads the scene
    plain.setZValue(theme.Z_FEATURE)  # unseen by any hook, seen by the scan
    drag_steps(doc, sched, view, "H4", 3, start=15)
    check_against_full_scan(view)
    assert_screen_fresh(view)
    view.sketch_scene.removeItem(plain)
    drag_steps(doc, sched, view, "H4", 3, start=18)
    scans = layer.scans
    drag_steps(doc, sched, view, "H4", 4, start=21)
    assert layer.scans == scans  # tracked again
    assert_screen_fresh(view)


def test_more_changes_than_the_log_holds_between_frames_make_the_next_frame_read_everything(main_window, monkeypatch):
    monkeypatch.setattr(drag_layer, "MAX_LOGGED", 20)
    doc, sched, view = fifty_rope_window(main_window)
    layer = view.drag_layer
    drag_steps(doc, sched, view, "H4", 5)
    scans = layer.scans
    items = [it for k, it in sorted(view.sketch_scene.items_by_key.items()) if k[0] == "point"]
    assert len(items) > 25
    items[3].setSelected(True)  # a still item changes among many logged ones
    for it in items[5:30]:
        it.update()
    assert drag_layer.OVERFLOW in layer._log
    drag_steps(doc, sched, view, "H4", 1, start=5)
    assert layer.scans == scans + 1
    check_against_full_scan(view)
    drag_steps(doc, sched, view, "H4", 3, start=6)
    assert_screen_fresh(view)


def test_the_haul_preview_shown_mid_drag_keeps_frames_from_reading_the_scene_and_the_screen_fresh(main_window):
    """The Haul plan dock's scrubber preview (sketchpad.haul_ghost) lives in the scene: its items are tracked, so
    a drag with it shown, moved or hidden reads the scene only when it was added or restacked (shown, hidden),
    and what it shows on screen is what Qt paints (demo frames: points of the test rig moved by hand)."""
    from solver.haul_result import HaulFrame

    doc, sched, view = fifty_rope_window(main_window)
    layer, ghost = view.drag_layer, main_window.haul_plan.ghost
    drag_steps(doc, sched, view, "H4", 4)
    scans = layer.scans
    drag_steps(doc, sched, view, "H4", 4, start=4)
    assert layer.scans == scans  # the hidden preview is in the scene and costs no full read
    rig = doc.rig
    frames = layer.frames
    for i in range(4):
        moved = {p.id: (p.x + 0.3 * (i + 1), p.y - 0.2 * (i + 1)) for p in rig.points[:6]}
        ghost.show(rig, HaulFrame(i + 1, "stroke", 0.5 * i, 0.1 * i, 900.0, moved), "H4", f"stroke {i + 1}")
        drag_steps(doc, sched, view, "H4", 2, start=8 + 2 * i)
        box = view.mapFromScene(ghost.ropes.sceneBoundingRect()).boundingRect()
        assert box.intersects(view.viewport().rect())  # the preview is on screen, drawn in the layer's frames
        check_against_full_scan(view)
        assert_screen_fresh(view)
    assert all(it.isVisible() for it in ghost.items) and layer.frames >= frames + 6
    scans = layer.scans
    drag_steps(doc, sched, view, "H4", 3, start=16)
    assert layer.scans == scans  # shown and still: no full read
    ghost.hide()
    drag_steps(doc, sched, view, "H4", 3, start=19)
    assert layer.scans <= scans + 1  # hiding restacks once
    check_against_full_scan(view)
    assert_screen_fresh(view)


@pytest.mark.parametrize("pid", ["A2", "H4"])
def test_the_water_layer_is_kept_or_drawn_live_by_the_drag_layer_as_qt_paints_it(main_window, pid):
    """The plan's water items (sketchpad.water_layer) are versioned and change only when what they draw changes: in
    the tethered-boat sample a drag of the tether anchor A2 redraws its bowed rope (``bows``, at the overlay's z)
    while the current's arrows stay in the still image, and in the dry fifty-rope rig both stay still; either way
    the layer builds, reads the scene once and shows what Qt paints."""
    from pathlib import Path

    from solver.rigfile import load_rig

    if pid == "A2":
        doc, view, sched = main_window.document, main_window.view, main_window.live.scheduler
        doc.replace_all(load_rig(Path(__file__).resolve().parents[2] / "samples" / "tethered-boat-eddy.rig.json"))
        view.zoom_to_fit()
        sched.background, sched.background_after_ms = False, float("inf")
        sched.settle_timer.setInterval(600_000)
        assert sched.solve_now().ok
    else:
        doc, sched, view = fifty_rope_window(main_window)
    water, layer = main_window.live.overlay.water_item, view.drag_layer
    wet = bool(main_window.canvas.bows)
    assert wet == (pid == "A2")
    drag_steps(doc, sched, view, pid, 4)
    scans, version, bows = layer.scans, water._ver, water.bows._ver
    drag_steps(doc, sched, view, pid, 6, start=4)
    assert layer.builds >= 1 and layer.scans == scans
    assert water._ver == version  # the current's arrows: the same drawing all drag long
    assert (water.bows._ver != bows) == wet  # a bowed rope moves with the anchor; a dry plan's item is untouched
    assert water not in [it for kind, it in layer._steps if kind == "live"]  # in the still image
    assert water.bows in layer._stack[1]  # with the force overlay: drawn in every frame
    check_against_full_scan(view)
    assert_screen_fresh(view)
    assert_same(frame(view, True, through_layer=True), frame(view, False))
