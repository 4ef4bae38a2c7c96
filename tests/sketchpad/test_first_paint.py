"""Start-up: the window paints the drawing before the first solve, which runs in the worker thread.

The first solve of a session imports and warms up the numerical libraries; the rigger
sees the site at once and the forces follow (live_solve.SolveScheduler.first_solve_after_paint).
"""

from __future__ import annotations

import threading

from PySide6.QtCore import QEvent, QObject
from PySide6.QtWidgets import QApplication

from sketchpad import live_solve
from sketchpad.app import start_window
from tests.conftest import SAMPLES


class _PaintSpy(QObject):
    """Notes how many solves had run when the viewport first painted."""

    def __init__(self, scheduler) -> None:
        super().__init__()
        self.scheduler = scheduler
        self.solves_at_first_paint: int | None = None

    def eventFilter(self, watched, event) -> bool:  # noqa: N802 - Qt's name
        if event.type() == QEvent.Paint and self.solves_at_first_paint is None:
            self.solves_at_first_paint = self.scheduler.solve_count
        return False


def test_the_drawing_paints_before_the_first_solve_which_runs_in_the_worker(qtbot, monkeypatch):
    threads: list[str] = []
    real = live_solve._default_analyse

    def noting(rig, start=None):
        threads.append(threading.current_thread().name)
        return real(rig, start=start)

    monkeypatch.setattr(live_solve, "_default_analyse", noting)
    spy = None
    original_show = None
    window = None
    try:
        # watch the viewport from before the window is shown
        from sketchpad.main_window import MainWindow

        original_show = MainWindow.show

        def show_with_spy(self):
            nonlocal spy
            spy = _PaintSpy(self.live.scheduler)
            self.view.viewport().installEventFilter(spy)
            original_show(self)

        monkeypatch.setattr(MainWindow, "show", show_with_spy)
        window = start_window(SAMPLES / "raft-3to1-redirect.rig.json")
        qtbot.waitExposed(window)
        sched = window.live.scheduler
        qtbot.waitUntil(lambda: sched.result is not None, timeout=20000)
        assert spy is not None and spy.solves_at_first_paint == 0
        assert sched.result.ok, sched.result.message
        assert sched.result.revision == window.document.revision
        assert threads and threads[0] != threading.main_thread().name
        qtbot.waitUntil(lambda: len(window.live.overlay.labels) > 0, timeout=5000)  # the forces are drawn
    finally:
        if window is not None:
            window.close()
            window.deleteLater()
            QApplication.processEvents()
