"""A wheel gesture re-places the overlay's labels once, when it stops; the placement it then makes equals one
made afresh, and between notches every label still lies inside the overlay item's extent."""

from __future__ import annotations

from PySide6.QtCore import QPoint
from PySide6.QtWidgets import QApplication

from tests.sketchpad.test_overlay import open_sample


def placement(ov) -> dict:
    return {lab.key: (lab.placed, lab.at, lab.rect) for lab in ov.labels}


def test_notches_keep_the_placement_and_the_pause_places_afresh(main_window, qtbot):
    open_sample(main_window, "raft-3to1-redirect.rig.json")
    ov, view = main_window.live.overlay, main_window.view
    from sketchpad.zoom_pacing import STREAM_MS
    from tests.bench.test_bench_zoom import wheel

    qtbot.wait(int(STREAM_MS) + 50)
    wheel(view, True)  # the first notch of a gesture: placed at once
    assert not ov.zoom_pacer.pending
    first = placement(ov)
    for _ in range(3):  # the notches that follow it
        wheel(view, True)
    assert ov.zoom_pacer.pending and ov.zoom_pacer.deferred >= 3
    assert placement(ov) == first  # boxes keep their pixel offsets from what they name
    item = ov.force_item
    m = 1.0 / view.px_per_m
    bounds = item.boundingRect()
    for lab in ov.labels:  # every label inside the item's extent at the new scale (so Qt repaints it)
        if lab.placed:
            x, y, w, h = lab.rect
            assert bounds.contains(lab.at[0] + x * m, lab.at[1] + y * m)
            assert bounds.contains(lab.at[0] + (x + w) * m, lab.at[1] + (y + h) * m)
    qtbot.waitUntil(lambda: not ov.zoom_pacer.pending, timeout=3000)  # the wheel stops
    settled = placement(ov)
    ov.forget_placement()  # a placement made afresh at the same zoom
    ov.relayout()
    assert placement(ov) == settled
    QApplication.processEvents()


def test_a_fit_right_after_another_zoom_places_the_labels_at_once(main_window):
    open_sample(main_window, "two-point-anchor.rig.json")
    ov, view = main_window.live.overlay, main_window.view
    view.zoom_at(1.3, QPoint(view.viewport().rect().center()))
    view.zoom_to_fit()  # not a wheel notch: never deferred, however soon it follows
    assert not ov.zoom_pacer.pending
    settled = placement(ov)
    ov.forget_placement()
    ov.relayout()
    assert placement(ov) == settled


def test_zones_are_filled_unsmoothed_only_while_the_wheel_turns(main_window, qtbot):
    open_sample(main_window, "raft-3to1-redirect.rig.json")
    ov, view = main_window.live.overlay, main_window.view
    from sketchpad.zoom_pacing import STREAM_MS
    from tests.bench.test_bench_zoom import wheel

    assert ov.zones_item.paths
    qtbot.wait(int(STREAM_MS) + 50)
    wheel(view, True)  # the first notch: drawn as a still screen is
    assert not ov.zones_item.streaming
    wheel(view, True)
    wheel(view, False)
    assert ov.zones_item.streaming and ov.zoom_pacer.pending
    before = ov.zones_item._ver
    qtbot.waitUntil(lambda: not ov.zoom_pacer.pending, timeout=3000)  # the wheel stops
    assert not ov.zones_item.streaming and ov.zones_item._ver > before  # smoothed, and drawn again
    qtbot.wait(int(STREAM_MS) + 50)
    wheel(view, True)
    wheel(view, True)  # a gesture again
    assert ov.zones_item.streaming
    view.zoom_to_fit()  # any other zoom: smoothed at once
    assert not ov.zones_item.streaming
