"""Crash protection never loses work: recovery after kill -9 whoever has the pid, copies kept unless the
user answered, and an autosave that fails is told to the user at once, in words, in the window.
"""

from __future__ import annotations

import errno
import os
import signal
import subprocess
import sys
import tempfile
import textwrap
from dataclasses import replace

import pytest
from PySide6.QtWidgets import QMainWindow

from sketchpad.document import Document
from sketchpad.files import AUTOSAVE_PREFIX, Dialogs, FileController
from solver.model import Pass, Point, Rig, Rope
from tests.conftest import ROOT
from tests.sketchpad.test_files import FakeDialogs, _crash, _edited

#: a session that draws an anchor, autosaves, says so and waits to be killed
_SESSION = textwrap.dedent("""
    import sys, time
    from PySide6.QtWidgets import QApplication, QMainWindow
    from sketchpad.document import Document
    from sketchpad.files import FileController
    from solver.model import Point
    app = QApplication([])
    window = QMainWindow()
    doc = Document(parent=window)
    ctl = FileController(window, doc, autosave_seconds=3600)
    doc.apply(doc.rig.with_point(Point("A1", "anchor", 1.0, 2.0, label="killed tree")), "Add anchor")
    print(ctl.autosave_now(), flush=True)
    time.sleep(60)
""")


@pytest.fixture
def data_dir_env(tmp_path, monkeypatch):
    d = tmp_path / "data"
    monkeypatch.setenv("ROPEWRIGHT_DATA_DIR", str(d))
    return d


def _controller(qtbot, dialogs=None):
    window = QMainWindow()
    qtbot.addWidget(window)
    document = Document(parent=window)
    return FileController(window, document, dialogs=dialogs or FakeDialogs(), autosave_seconds=3600.0)


def test_after_kill_9_recovery_is_offered_even_if_a_live_process_has_the_dead_runs_pid(qtbot, tmp_path,
                                                                                       monkeypatch):
    data = tmp_path / "data"
    monkeypatch.setenv("ROPEWRIGHT_DATA_DIR", str(data))
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen", ROPEWRIGHT_DATA_DIR=str(data))
    child = subprocess.Popen([sys.executable, "-c", _SESSION], env=env, stdout=subprocess.PIPE, text=True)
    try:
        copy = child.stdout.readline().strip()
    finally:
        child.send_signal(signal.SIGKILL)
        child.wait(timeout=30)
    assert copy.endswith(".rig.json") and os.path.exists(copy), copy
    # after a reboot an unrelated process often has the dead run's id: give the copy a living one
    live_pid = os.getppid()
    name = os.path.basename(copy)
    renamed = {}
    for suffix in (".rig.json", ".meta.json", ".lock"):
        old = copy[: -len(".rig.json")] + suffix
        new = old.replace(f"{AUTOSAVE_PREFIX}{child.pid}-", f"{AUTOSAVE_PREFIX}{live_pid}-")
        if os.path.exists(old):
            os.rename(old, new)
            renamed[suffix] = new
    assert name != os.path.basename(renamed[".rig.json"]) and ".lock" in renamed
    ctl = _controller(qtbot)
    assert ctl.offer_recovery(), "recovery was not offered"
    assert ctl.document.rig.point("A1").label == "killed tree"
    assert not any(os.path.exists(p) for p in renamed.values())  # answered: the old copy goes


def test_a_copy_whose_session_still_runs_is_not_offered(qtbot, data_dir_env):
    running = _controller(qtbot)
    running.document.apply(_edited(running.document.rig), "Add anchor")
    assert running.autosave_now() is not None
    other = _controller(qtbot)
    assert other.leftover_autosaves() == []
    _crash(running)
    assert other.leftover_autosaves() == [running.autosave_path]


def test_starting_without_a_screen_keeps_the_recovery_copies(qtbot, data_dir_env):
    crashed = _controller(qtbot)
    crashed.document.apply(_edited(crashed.document.rig), "Add anchor")
    copy = crashed.autosave_now()
    _crash(crashed)
    headless = _controller(qtbot, dialogs=Dialogs())  # the real dialogs: offscreen, nobody to ask
    assert not headless.offer_recovery()
    assert copy.exists(), "a start without a screen deleted the crash-recovery copy"
    asked = _controller(qtbot)
    assert asked.offer_recovery()  # still there for the next start with a screen


def _unsaveable(rig: Rig) -> Rig:
    """A rig the file format refuses (a rope passing the same point twice in a row)."""
    rig = rig.with_point(Point("A9", "anchor", 0.0, 0.0)).with_point(Point("L9", "load", 5.0, 0.0))
    return replace(rig, ropes=rig.ropes + (Rope("R9", "kern-11", (Pass("L9"), Pass("A9"), Pass("A9"))),))


def test_an_autosave_that_cannot_write_the_rig_is_shown_at_once(main_window):
    window = main_window
    window.document.apply(_unsaveable(window.document.rig), "Break it")
    assert window.files.autosave_now() is None
    label = window.protection_label
    assert label.isVisible() and "Crash protection has stopped" in label.text() and "twice" in label.text()
    window.document.undo_stack.undo()
    window.document.apply(_edited(window.document.rig), "Add anchor")
    assert window.files.autosave_now() is not None
    assert not label.isVisible()


def test_a_full_disk_stops_crash_protection_visibly(main_window, monkeypatch):
    window = main_window
    window.document.apply(_edited(window.document.rig), "Add anchor")

    def full(*_a, **_k):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(tempfile, "mkstemp", full)
    assert window.files.autosave_now() is None
    label = window.protection_label
    assert label.isVisible() and os.strerror(errno.ENOSPC) in label.text()
