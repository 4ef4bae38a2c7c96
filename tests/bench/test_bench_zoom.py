"""Speed of a wheel-zoom frame: zoom one notch at the cursor and repaint, on each sample and the 50-rope rig.

Goals (issue 18): a zoom frame <= 16 ms on the samples and <= 25 ms on the 50-rope rig (on an idle machine).
Correctness is asserted, never time; measure with
``python -m pytest tests/bench/test_bench_zoom.py --benchmark-enable --benchmark-only``.
The notches come as a wheel gesture does (one after another, both ways); the labels are placed again when
the gesture stops (``sketchpad.zoom_pacing``), which the last assertion checks.
"""

from __future__ import annotations

import pathlib

import pytest
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtGui import QWheelEvent
from PySide6.QtWidgets import QApplication

from solver.rigfile import load_rig

SAMPLES = sorted((pathlib.Path(__file__).resolve().parents[2] / "samples").glob("*.rig.json"))


def wheel(view, up: bool) -> None:
    """One wheel notch (15 degrees) at the viewport's centre, sent as the mouse wheel sends it."""
    vp = view.viewport()
    centre = QPointF(vp.rect().center())
    delta = QPoint(0, 120 if up else -120)
    QApplication.sendEvent(vp, QWheelEvent(centre, QPointF(vp.mapToGlobal(centre.toPoint())), QPoint(), delta,
                                           Qt.NoButton, Qt.NoModifier, Qt.NoScrollPhase, False))


def _notches(window):
    view, vp = window.view, window.view.viewport()
    step = {"i": 0}

    def zoom_and_paint():
        step["i"] += 1
        wheel(view, step["i"] % 2 == 1)  # in and out, as a hand on the wheel does
        vp.repaint()

    return zoom_and_paint


def _ends_placed(window, qtbot):
    ov = window.live.overlay
    notch = _notches(window)
    for _ in range(3):  # a gesture's notches (the benchmark runs the frame once when timing is off)
        notch()
    qtbot.waitUntil(lambda: not ov.zoom_pacer.pending, timeout=5000)
    assert ov.zoom_pacer.deferred > 0  # the gesture's notches kept the placement
    assert any(lab.placed for lab in ov.labels)


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_zoom_frame_on_a_sample(benchmark, window, qtbot, path):
    window.document.replace_all(load_rig(path))
    window.view.zoom_to_fit()
    assert window.live.scheduler.solve_now().ok
    QApplication.processEvents()
    benchmark.pedantic(_notches(window), rounds=40, iterations=1, warmup_rounds=2)
    _ends_placed(window, qtbot)


def test_zoom_frame_on_the_50_rope_rig(benchmark, window, qtbot):
    benchmark.pedantic(_notches(window), rounds=40, iterations=1, warmup_rounds=2)
    assert sum(1 for r in window.live.overlay.pieces) >= 50
    _ends_placed(window, qtbot)
