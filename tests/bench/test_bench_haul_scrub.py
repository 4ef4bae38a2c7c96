"""Speed of one haul scrubber step: the preview moved over the canvas, the canvas and the plot repainted.

Goal (issue "Haul it stroke by stroke"): each scrubber step redraws within the 16 ms frame budget on
the samples.  Correctness is asserted, never time; measure with
``python -m pytest tests/bench/test_bench_haul_scrub.py --benchmark-enable --benchmark-only``.
"""

from __future__ import annotations

import pathlib

import pytest
from PySide6.QtWidgets import QApplication

from sketchpad.main_window import MainWindow
from solver.rigfile import load_rig

SAMPLES = pathlib.Path(__file__).resolve().parents[2] / "samples"


@pytest.mark.parametrize("name", ["raft-three-strokes.rig.json", "raft-3to1-redirect.rig.json"])
def test_scrubber_step_on_a_sample(benchmark, qtbot, name):
    w = MainWindow()
    w.resize(1400, 900)
    w.show()
    qtbot.waitExposed(w)
    w.document.replace_all(load_rig(SAMPLES / name))
    w.view.zoom_to_fit()
    w.live.scheduler.solve_now()
    panel = w.haul_plan
    w.action_plan_haul.trigger()  # Tools > Plan the haul: opens the dock and plans
    plan = panel.plan
    n = len(plan.frames)
    assert n > 50
    step = {"i": 0}
    QApplication.processEvents()

    def scrub_one_step():
        # as a drag of the handle: the value changes, then the event loop paints what changed
        # (the preview's region of the canvas and the plot)
        step["i"] = (step["i"] + 7) % n
        panel.slider.setValue(step["i"])
        QApplication.processEvents()

    benchmark.pedantic(scrub_one_step, rounds=60, iterations=1, warmup_rounds=3)
    assert panel.plot.cursor == panel.slider.value()
    w.close()
