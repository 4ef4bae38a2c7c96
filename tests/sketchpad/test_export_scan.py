"""File ▸ Export drawing keeps the window answering while the failure scan runs (sketchpad.export_scan).

The scan is replaced by a stand-in that holds the worker until the test lets it go (it calls the
real scan, so the drawing is the real one); the export action must return to the event loop first.
"""

from __future__ import annotations

import threading

from PySide6.QtCore import QTimer

from solver.rigfile import load_rig
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def _held_scan(monkeypatch, events: list, gate: threading.Event):
    """Replace solver.failures.scan with one that waits for ``gate`` (at most 10 s) and notes where it ran."""
    from solver import failures

    real = failures.scan

    def held(rig, intact=None, by_parts=True):
        events.append(("scan starts", threading.current_thread() is threading.main_thread()))
        gate.wait(timeout=10.0)
        events.append(("scan ends", None))
        return real(rig, intact, by_parts)

    monkeypatch.setattr(failures, "scan", held)


def test_export_drawing_returns_to_the_event_loop_while_the_scan_runs(main_window, qtbot, tmp_path, monkeypatch):
    events: list = []
    gate = threading.Event()
    _held_scan(monkeypatch, events, gate)
    main_window.document.replace_all(load_rig(RAFT), RAFT)
    exports = main_window.exports
    out = tmp_path / "raft.png"
    exports.ask_path = lambda *a: out
    ticks = []
    timer = QTimer()
    timer.timeout.connect(lambda: ticks.append(1))
    timer.start(10)
    try:
        exports.action_drawing.trigger()  # as the menu does
        events.append(("action returned", None))
        qtbot.waitUntil(lambda: any(e[0] == "scan starts" for e in events), timeout=10000)
        qtbot.wait(100)  # the event loop runs while the scan is held
        assert ticks, "the window's timers did not run while the scan was under way"
        assert not out.exists() and exports.busy
        assert "failure scan runs first" in exports.last_message
        gate.set()
        qtbot.waitUntil(lambda: not exports.busy, timeout=60000)
    finally:
        gate.set()
        timer.stop()
    order = [e[0] for e in events]
    assert order.index("action returned") < order.index("scan ends")
    assert ("scan starts", False) in events  # in the solve worker, not on the GUI thread
    assert out.exists() and "Drawing saved" in exports.last_message


def test_the_export_reuses_the_what_if_docks_finished_scan(main_window, qtbot, tmp_path, monkeypatch):
    main_window.document.replace_all(load_rig(RAFT), RAFT)
    main_window.live.scheduler.solve_now()
    finished = main_window.what_if.run_scan()
    assert finished is not None and finished.ok and finished.rig is main_window.document.rig
    events: list = []
    gate = threading.Event()
    gate.set()
    _held_scan(monkeypatch, events, gate)
    out = tmp_path / "raft.svg"
    assert main_window.exports.export_drawing(out) == out
    assert out.exists() and not events  # written at once from the dock's scan: nothing scanned again
    assert "failure area" in out.read_text(encoding="utf-8")  # the computed areas are named in the drawing


def test_a_drawing_refused_up_front_starts_no_scan(main_window, tmp_path, monkeypatch):
    events: list = []
    gate = threading.Event()
    gate.set()
    _held_scan(monkeypatch, events, gate)
    main_window.document.replace_all(load_rig(RAFT), RAFT)
    shown = []
    main_window.exports.show = lambda parent, title, text, error: shown.append(text)
    assert main_window.exports.export_drawing(tmp_path / "x.bmp") is None
    assert shown and ".png, .svg or .pdf" in shown[0] and not events and not main_window.exports.busy


def test_the_worker_scans_the_settled_result_on_screen_and_the_what_if_dock_adopts_that_scan(
        main_window, qtbot, tmp_path, monkeypatch):
    from solver import analysis

    main_window.document.replace_all(load_rig(RAFT), RAFT)
    what_if = main_window.what_if
    monkeypatch.setattr(what_if, "run_scan", lambda *a, **k: None)  # the dock has not scanned yet
    sched = main_window.live.scheduler
    sched.solve_now()
    qtbot.waitUntil(lambda: not sched.pending, timeout=30000)
    on_screen = sched.result
    assert on_screen.ok and sched.settled and what_if.scan is None
    worker_analyses = []
    real = analysis.analyse

    def counted(rig, start=None):
        if threading.current_thread() is not threading.main_thread():
            worker_analyses.append(rig)
        return real(rig, start)

    monkeypatch.setattr(analysis, "analyse", counted)
    out = tmp_path / "raft.png"
    assert main_window.exports.export_drawing(out) == out
    qtbot.waitUntil(lambda: not main_window.exports.busy, timeout=60000)
    assert out.exists() and not worker_analyses  # the worker scanned the result on screen, not a fresh analysis
    assert what_if.scan is not None and what_if.scan.intact is on_screen  # the dock shows that scan: no second one
    assert main_window.live.overlay.zones and all(z.kind != "bight" for z in main_window.live.overlay.zones)
