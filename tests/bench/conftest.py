"""Shared set-up of the canvas benchmarks: a shown main window with the 50-rope rig solved once."""

from __future__ import annotations

import pytest
from PySide6.QtWidgets import QApplication

from sketchpad.main_window import MainWindow
from tests.bench.fifty_ropes import fifty_rope_rig


@pytest.fixture
def window(qtbot):
    """A 1400 x 900 main window showing :func:`fifty_rope_rig` zoomed to fit, its first solve done."""
    w = MainWindow()
    w.resize(1400, 900)
    w.show()
    qtbot.waitExposed(w)
    rig = fifty_rope_rig()
    assert len(rig.ropes) == 50
    w.document.replace_all(rig)
    w.view.zoom_to_fit()
    sched = w.live.scheduler
    # solve in the GUI thread, as a quick drag step does: the window's first solve (an empty rig,
    # paying the scipy/shapely imports) can exceed ``background_after_ms`` and would otherwise send
    # every step to the worker thread, leaving the measured step without its solve
    sched.background, sched.background_after_ms = False, float("inf")
    first = sched.solve_now()
    assert first.ok, first.message
    yield w
    w.close()
    w.deleteLater()
    QApplication.processEvents()
