"""File ▸ Export report, briefing sheet and manual compute on the solve worker, then write (sketchpad.export_scan).

Each export's failure scan (and the report's haul sweep) is replaced by a stand-in that holds the worker until
the test lets it go; it calls the real computation, so the pages are the real ones. The action must return to
the event loop first, the status bar must say what runs until the export ends, and the PDF must read the same
(pdftotext, poppler) as the one the synchronous writers make from the same rig.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import threading

import pytest
from PySide6.QtCore import QTimer

from solver.rigfile import load_rig
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"
VECTOR = SAMPLES / "vector-pull.rig.json"
BOAT = SAMPLES / "tethered-boat-eddy.rig.json"
KINDS = ("drawing", "report", "briefing", "manual")

needs_poppler = pytest.mark.skipif(shutil.which("pdftotext") is None, reason="pdftotext (poppler-utils) not installed")


def _held(monkeypatch, events: list, gate: threading.Event) -> None:
    """solver.failures.scan, solver.sweep.sweep and solver.haul_plan.plan_haul wait for ``gate`` (at most 20 s) and
    note the thread they ran on."""
    from sketchpad import haul_report
    from solver import failures, sweep

    real_scan, real_sweep, real_plan = failures.scan, sweep.sweep, haul_report.plan_haul

    def scan(rig, intact=None, by_parts=True):
        events.append(("scan", threading.current_thread() is threading.main_thread()))
        gate.wait(timeout=20.0)
        events.append(("scan ends", None))
        return real_scan(rig, intact, by_parts)

    def swept(*a, **k):
        events.append(("sweep", threading.current_thread() is threading.main_thread()))
        gate.wait(timeout=20.0)
        return real_sweep(*a, **k)

    def planned(*a, **k):
        events.append(("haul plan", threading.current_thread() is threading.main_thread()))
        gate.wait(timeout=20.0)
        return real_plan(*a, **k)

    monkeypatch.setattr(failures, "scan", scan)
    monkeypatch.setattr(sweep, "sweep", swept)
    monkeypatch.setattr(haul_report, "plan_haul", planned)  # as haul_report imported it


def _open(window, qtbot, path=RAFT) -> None:
    window.document.replace_all(load_rig(path), path)
    sched = window.live.scheduler
    qtbot.waitUntil(lambda: sched.result is not None and sched.settled and not sched.pending
                    and sched.result.revision == window.document.revision, timeout=30000)


def _export(window, kind: str, path, others=()):
    if kind == "drawing":
        return window.exports.export_drawing(path)
    if kind == "report":
        return window.exports.export_report(path)
    if kind == "briefing":
        return window.pages.books.export_brief(path)
    return window.pages.books.export_manual(path, list(others))


def _synchronous(window, kind: str, path, others=()) -> None:
    """The same export written the old way: every computation on this thread, inside the writer."""
    from sketchpad.pages.brief import write_brief
    from sketchpad.pages.manual import chapters_of, load_chapters, write_manual
    from sketchpad.report import write_report

    rig, src, folder = window.document.rig, str(window.document.path), window.document.path.parent
    if kind == "report":
        write_report(rig, path, rig_dir=folder, source=src)
    elif kind == "briefing":
        write_brief(rig, path, rig_dir=folder, source=src)
    else:
        chapters = chapters_of([(rig, src, folder)]) + (load_chapters(list(others)) if others else [])
        write_manual(chapters, path, "Rigging manual")


def _text(pdf) -> str:
    """The PDF's text with the minute it was made taken out (the two files are made a moment apart)."""
    out = subprocess.run(["pdftotext", "-layout", str(pdf), "-"], check=True, capture_output=True, text=True).stdout
    return re.sub(r"\d{4}-\d{2}-\d{2} \d{2}:\d{2}", "<when>", out)


def _status_calls(window, monkeypatch) -> list:
    """Record every status bar message with its timeout (ms; 0 stays until the next message)."""
    calls: list = []
    bar = window.statusBar()
    real = bar.showMessage
    monkeypatch.setattr(bar, "showMessage", lambda text, ms=0: (calls.append((text, ms)), real(text, ms)))
    return calls


@pytest.mark.parametrize("kind", KINDS)
def test_each_export_returns_to_the_event_loop_while_its_scan_runs(kind, main_window, qtbot, tmp_path, monkeypatch):
    _open(main_window, qtbot)
    monkeypatch.setattr(main_window.what_if, "run_scan", lambda *a, **k: None)  # the dock has no scan to lend
    events: list = []
    gate = threading.Event()
    _held(monkeypatch, events, gate)
    calls = _status_calls(main_window, monkeypatch)
    out = tmp_path / f"raft-{kind}.pdf"
    exports = main_window.exports
    ticks: list = []
    timer = QTimer()
    timer.timeout.connect(lambda: ticks.append(1))
    timer.start(10)
    try:
        assert _export(main_window, kind, out) == out
        events.append(("returned", None))
        qtbot.waitUntil(lambda: any(e[0] == "scan" for e in events), timeout=20000)
        qtbot.wait(100)  # the event loop runs while the scan is held
        assert ticks, "the window's timers did not run while the export's scan was under way"
        assert not out.exists() and exports.busy
        waiting = [(t, ms) for t, ms in calls if t.startswith("Exporting the")]
        assert waiting and waiting[-1][1] == 0  # the status bar keeps saying so until the export ends ...
        assert main_window.statusBar().currentMessage() == waiting[-1][0]
        gate.set()
        qtbot.waitUntil(lambda: not exports.busy, timeout=120000)
    finally:
        gate.set()
        timer.stop()
    assert events.index(("returned", None)) < events.index(("scan ends", None))
    assert all(not on_gui for what, on_gui in events if what in ("scan", "sweep", "haul plan"))  # on the worker
    if kind in ("report", "manual"):
        assert ("sweep", False) in events and ("haul plan", False) in events
    assert out.exists() and "saved to" in exports.last_message
    assert calls[-1][0] == exports.last_message and calls[-1][1] > 0  # ... then says it is done


@needs_poppler
@pytest.mark.parametrize("kind", ("report", "briefing", "manual"))
def test_the_exported_pdf_reads_the_same_as_the_synchronous_writers(kind, main_window, qtbot, tmp_path):
    _open(main_window, qtbot)
    others = [VECTOR] if kind == "manual" else []
    app, old = tmp_path / "app.pdf", tmp_path / "old.pdf"
    assert _export(main_window, kind, app, others) == app
    qtbot.waitUntil(lambda: not main_window.exports.busy, timeout=120000)
    _synchronous(main_window, kind, old, others)
    new_text, old_text = _text(app), _text(old)
    assert "If something lets go" in new_text or kind == "briefing"
    assert new_text == old_text


@pytest.mark.parametrize("kind", ("report", "briefing", "manual"))
def test_a_file_that_cannot_be_written_is_refused_before_any_scan(kind, main_window, qtbot, tmp_path, monkeypatch):
    _open(main_window, qtbot)
    events: list = []
    gate = threading.Event()
    gate.set()
    _held(monkeypatch, events, gate)
    shown = []
    main_window.exports.show = lambda parent, title, text, error: shown.append(text)
    target = tmp_path / "no-such-folder" / "x.pdf"
    assert _export(main_window, kind, target) is None
    assert shown and f"the folder {target.parent} does not exist" in shown[0]
    assert not events and not main_window.exports.busy


@pytest.mark.parametrize("kind", KINDS)
def test_a_scan_that_stops_is_told_in_a_box_and_nothing_is_lost(kind, main_window, qtbot, tmp_path, monkeypatch):
    from solver import failures

    _open(main_window, qtbot)
    monkeypatch.setattr(main_window.what_if, "run_scan", lambda *a, **k: None)

    def broken(*a, **k):
        raise ValueError("a test fault in the scan")

    monkeypatch.setattr(failures, "scan", broken)
    rig, undo_count = main_window.document.rig, main_window.document.undo_stack.count()
    shown = []
    main_window.exports.show = lambda parent, title, text, error: shown.append((text, error))
    out = tmp_path / f"x-{kind}.pdf"
    _export(main_window, kind, out)
    qtbot.waitUntil(lambda: not main_window.exports.busy, timeout=60000)
    assert len(shown) == 1 and shown[0][1]
    text = shown[0][0]
    assert f"Could not write the {kind if kind != 'briefing' else 'briefing sheet'} to {out}" in text
    assert "a test fault in the scan" in text and "rig is unchanged" in text
    assert not out.exists()
    assert main_window.document.rig is rig and main_window.document.undo_stack.count() == undo_count


def test_an_export_during_the_docks_scan_runs_one_scan_and_the_dock_adopts_it(main_window, qtbot, tmp_path,
                                                                               monkeypatch):
    from solver import failures

    _open(main_window, qtbot)
    what_if, sched = main_window.what_if, main_window.live.scheduler
    what_if.timer.stop()
    what_if.ticks.stop()
    what_if.scan, what_if._steps = None, None
    dock_steps = []
    real_steps = failures.scan_steps

    def counted(rig, intact, *a, **k):  # one generator per scan begun; note who began it
        dock_steps.append(threading.current_thread() is threading.main_thread())
        return real_steps(rig, intact, *a, **k)

    monkeypatch.setattr(failures, "scan_steps", counted)
    assert what_if.run_scan(budget_ms=0.0) is None  # the dock lets one component go, then waits for its next slice
    assert what_if._steps is not None and dock_steps == [True]
    events: list = []
    gate = threading.Event()
    _held(monkeypatch, events, gate)
    out = tmp_path / "raft-report.pdf"
    try:
        main_window.exports.export_report(out)
        assert what_if._steps is None and what_if.awaited is sched.result  # the dock stood down at once
        qtbot.waitUntil(lambda: any(e[0] == "scan" for e in events), timeout=20000)
        qtbot.wait(300)  # the dock's slices and its delay timer would have run by now
        what_if.timer.timeout.emit()  # even its own timer firing scans nothing while the export's scan is out
        assert what_if.scan is None and what_if._steps is None and dock_steps == [True]
        gate.set()
        qtbot.waitUntil(lambda: not main_window.exports.busy, timeout=120000)
    finally:
        gate.set()
    assert out.exists()
    assert [e for e in events if e[0] == "scan"] == [("scan", False)]  # one scan, on the worker
    assert what_if.scan is not None and what_if.scan.intact is sched.result and what_if.awaited is None
    assert what_if.panel.table.rowCount() == len(what_if.scan.failures) > 0


@needs_poppler
def test_the_held_boats_report_prints_one_plain_line_for_its_missing_plot(tmp_path):
    from sketchpad.report import NO_PLOT, write_report

    out = tmp_path / "boat.pdf"
    write_report(load_rig(BOAT), out, rig_dir=BOAT.parent, source=str(BOAT))
    lines = [ln.strip() for ln in _text(out).splitlines() if ln.strip()]
    at = next(i for i, ln in enumerate(lines) if ln.startswith(NO_PLOT))
    assert "no haul force" in lines[at]
    assert not any("against the pulling force (" in ln for ln in lines)  # the plot section's heading is gone
    assert "Mechanical advantage" not in lines[at - 1]


def test_a_manual_cancelled_while_the_worker_scans_writes_nothing_and_asks_nothing(main_window, qtbot, tmp_path,
                                                                                  monkeypatch):
    _open(main_window, qtbot)
    monkeypatch.setattr(main_window.what_if, "run_scan", lambda *a, **k: None)
    events: list = []
    gate = threading.Event()
    _held(monkeypatch, events, gate)
    shown = []
    main_window.exports.show = lambda parent, title, text, error: shown.append(text)
    books = main_window.pages.books
    out = tmp_path / "book.pdf"
    try:
        assert books.export_manual(out, [VECTOR]) == out
        qtbot.waitUntil(lambda: any(e[0] == "scan" for e in events), timeout=20000)
        from PySide6.QtWidgets import QPushButton

        books.dialog.findChild(QPushButton).click()  # the user presses Cancel while the open rig is scanned
        gate.set()
        qtbot.waitUntil(lambda: not main_window.exports.busy, timeout=120000)
    finally:
        gate.set()
    assert not out.exists() and not shown
    assert "cancelled" in main_window.exports.last_message and not books.dialog.isVisible()
    assert [e for e in events if e[0] == "scan"] == [("scan", False)]  # the next rig was never started
