"""Speed of painting the canvas of a 50-rope rig with its force overlay (offscreen viewport repaint).

One frame of the drag benchmark (``test_bench_drag_repaint.py``) without the model change and the
solve: what Qt and our items cost per frame.  "Still" repaints with nothing changed (every item
can come from its pixmap cache); "after zoom" changes the zoom first, so every item is drawn again
(the worst frame, as on each wheel notch).  Correctness is asserted, never time; measure with
``python -m pytest tests/bench/test_bench_canvas_repaint.py --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

from PySide6.QtCore import QPoint

from sketchpad.items import PointItem, RopeItem


def _painted(window) -> dict[str, int]:
    """How many items of each kind the last frame showed (visible and inside the viewport)."""
    view = window.view
    shown = view.items(view.viewport().rect())
    return {"ropes": sum(isinstance(i, RopeItem) for i in shown), "points": sum(isinstance(i, PointItem) for i in shown)}


def test_still_frame_of_a_50_rope_rig(benchmark, window):
    vp = window.view.viewport()
    benchmark.pedantic(vp.repaint, rounds=60, iterations=1, warmup_rounds=3)
    assert _painted(window) == {"ropes": 50, "points": 100}  # the whole rig was in the frame
    placed = {lab.kind for lab in window.live.overlay.labels if lab.placed}
    assert {"anchor", "haul"} <= placed and placed & {"tension", "angle"}  # the overlay's labels were in the frame too


def test_frame_after_a_zoom_step_on_a_50_rope_rig(benchmark, window):
    view, vp = window.view, window.view.viewport()
    centre = vp.rect().center()
    step = {"i": 0}

    def zoom_and_paint():
        step["i"] += 1
        view.zoom_at(1.02 if step["i"] % 2 else 1 / 1.02, QPoint(centre))  # as a wheel notch does, both ways
        vp.repaint()

    benchmark.pedantic(zoom_and_paint, rounds=40, iterations=1, warmup_rounds=2)
    assert _painted(window)["ropes"] == 50
