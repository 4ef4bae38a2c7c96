"""Shared set-up of the canvas benchmarks: a shown main window with a rig (the 50-rope rig by default) solved once."""

from __future__ import annotations

import pytest
from PySide6.QtWidgets import QApplication

from sketchpad.main_window import MainWindow
from tests.bench.fifty_ropes import fifty_rope_rig


def shown_window(qtbot, rig) -> MainWindow:
    """A 1400 x 900 main window showing ``rig`` zoomed to fit, its first solve done (close it with :func:`closed`)."""
    w = MainWindow()
    w.resize(1400, 900)
    w.show()
    qtbot.waitExposed(w)
    w.document.replace_all(rig)
    w.view.zoom_to_fit()
    sched = w.live.scheduler
    # solve in the GUI thread, as a quick drag step does: the window's first solve (an empty rig,
    # paying the scipy/shapely imports) can exceed ``background_after_ms`` and would otherwise send
    # every step to the worker thread, leaving the measured step without its solve
    sched.background, sched.background_after_ms = False, float("inf")
    first = sched.solve_now()
    assert first.ok, first.message
    return w


def closed(w: MainWindow) -> None:
    w.close()
    w.deleteLater()
    QApplication.processEvents()


@pytest.fixture
def window(qtbot):
    """A 1400 x 900 main window showing :func:`fifty_rope_rig` zoomed to fit, its first solve done."""
    rig = fifty_rope_rig()
    assert len(rig.ropes) == 50
    w = shown_window(qtbot, rig)
    yield w
    closed(w)


@pytest.fixture
def water_window(qtbot):
    """A 1400 x 900 main window showing ``test_bench_water.boat_across_the_current`` zoomed to fit, solved once."""
    from tests.bench.test_bench_water import boat_across_the_current

    w = shown_window(qtbot, boat_across_the_current())
    yield w
    closed(w)
