"""File handling keeps the user's work safe: save/open round trip, refusing broken files, autosave and recovery,
the unsaved-changes prompt, recent files and the window title.

The dialogs are replaced by a recorder with canned answers (no modal boxes);
autosaves and settings go to a temporary ``ROPEWRIGHT_DATA_DIR``.
"""

from __future__ import annotations

import json
import pathlib
from dataclasses import replace

import pytest
from PySide6.QtWidgets import QMainWindow, QMenu

from sketchpad.document import Document
from sketchpad.files import FileController, make_settings, sample_files
from solver import rigfile
from solver.model import Point, Rig
from tests.conftest import SAMPLES

SAMPLE = SAMPLES / "raft-3to1-redirect.rig.json"


class FakeDialogs:
    """Canned answers, and a record of every question asked."""

    def __init__(self) -> None:
        self.save_answer = "cancel"
        self.open_answer: pathlib.Path | None = None
        self.save_path_answer: pathlib.Path | None = None
        self.recover_answer = True
        self.asked: list[tuple] = []

    def ask_save_changes(self, parent, name):
        self.asked.append(("save_changes", name))
        return self.save_answer

    def open_path(self, parent, start):
        self.asked.append(("open_path", start))
        return self.open_answer

    def save_path(self, parent, start):
        self.asked.append(("save_path", start))
        return self.save_path_answer

    def error(self, parent, title, text, detail=""):
        self.asked.append(("error", title, text, detail))

    def ask_recover(self, parent, description):
        self.asked.append(("recover", description))
        return self.recover_answer

    def kinds(self) -> list[str]:
        return [a[0] for a in self.asked]


@pytest.fixture
def data_dir(tmp_path, monkeypatch):
    d = tmp_path / "data"
    monkeypatch.setenv("ROPEWRIGHT_DATA_DIR", str(d))
    return d


@pytest.fixture
def make_window(qtbot, data_dir):
    """A bare main window + document + controller (the real MainWindow is wired the same way)."""

    def make(autosave_seconds: float = 3600.0):
        window = QMainWindow()
        qtbot.addWidget(window)
        document = Document(parent=window)
        dialogs = FakeDialogs()
        ctl = FileController(window, document, dialogs=dialogs, autosave_seconds=autosave_seconds)
        menu = QMenu("File", window)
        ctl.install_menu(menu)
        window.file_menu = menu
        return window, document, ctl, dialogs

    return make


def _crash(ctl) -> None:
    """What a crash leaves: the copy on disk, no timer, and the lock let go (the kernel drops it)."""
    ctl.timer.stop()
    if ctl._lock is not None:
        ctl._lock.drop()


def _edited(rig: Rig) -> Rig:
    """The rig with one anchor added (what a user would draw)."""
    return rig.with_point(Point(id=rig.new_id("A"), kind="anchor", x=3.0, y=7.5, label="new tree", capacity_N=12000.0))


def test_save_then_reopen_gives_an_equal_rig(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    assert ctl.open(SAMPLE)
    doc.apply(_edited(doc.rig), "Add anchor")
    target = tmp_path / "site" / "kestrel.rig.json"
    target.parent.mkdir()
    dialogs.save_path_answer = target
    assert ctl.save_as()  # asks where
    assert dialogs.kinds() == ["save_path"]
    saved = doc.rig
    window2, doc2, ctl2, _ = make_window()
    assert ctl2.open(target)
    # saving embeds every spec the rig uses (rig-format.md), so compare with the embedded form
    assert doc2.rig == rigfile.embed_specs(saved)
    assert not doc2.is_modified
    assert doc.path == target and not doc.is_modified


def test_saving_an_untitled_sketch_asks_where_and_clears_the_star(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    doc.apply(_edited(doc.rig), "Add anchor")
    assert ctl.shown_title() == "Untitled* — Ropewright"
    dialogs.save_path_answer = tmp_path / "mine.rig.json"
    assert ctl.save()
    assert "save_path" in dialogs.kinds()
    assert ctl.shown_title() == "mine — Ropewright"
    assert rigfile.load_rig(tmp_path / "mine.rig.json").points == doc.rig.points


def test_a_broken_file_is_refused_in_words_and_the_sketch_survives(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    assert ctl.open(SAMPLE)
    doc.apply(_edited(doc.rig), "Add anchor")
    before = doc.rig
    broken = tmp_path / "broken.rig.json"
    text = SAMPLE.read_text(encoding="utf-8")
    broken.write_text(text[: len(text) // 2], encoding="utf-8")  # cut off half way, as a failed copy would
    dialogs.save_answer = "discard"  # the user agrees to leave the edited sketch ...
    assert not ctl.open(broken)  # ... but the file is refused
    errors = [a for a in dialogs.asked if a[0] == "error"]
    assert len(errors) == 1
    _, title, text_, detail = errors[0]
    assert "broken.rig.json" in text_ and "left as it was" in text_
    assert "Traceback" not in detail and len(detail) > 10
    assert doc.rig == before and doc.path == SAMPLE
    # and a wrong field is named in words with its place
    wrong = json.loads(text)
    wrong["points"][0]["x"] = "far"
    broken.write_text(json.dumps(wrong), encoding="utf-8")
    assert not ctl.open(broken)
    detail = [a for a in dialogs.asked if a[0] == "error"][-1][3]
    assert "points[0]" in detail
    assert doc.rig == before


def test_a_missing_file_is_refused_cleanly(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    assert not ctl.open(tmp_path / "nowhere.rig.json")
    assert dialogs.kinds() == ["error"]
    assert doc.rig == Rig()


def test_closing_with_unsaved_changes_asks_and_cancel_keeps_the_window_open(make_window, qtbot):
    window, doc, ctl, dialogs = make_window()
    window.show()
    doc.apply(_edited(doc.rig), "Add anchor")
    dialogs.save_answer = "cancel"
    assert not window.close()
    assert dialogs.kinds() == ["save_changes"]
    assert window.isVisible()
    dialogs.save_answer = "discard"
    assert window.close()
    assert dialogs.kinds() == ["save_changes", "save_changes"]


def test_closing_a_saved_sketch_asks_nothing(make_window):
    window, doc, ctl, dialogs = make_window()
    window.show()
    assert ctl.open(SAMPLE)
    assert window.close()
    assert dialogs.asked == []


def test_new_with_unsaved_changes_can_save_first(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    doc.apply(_edited(doc.rig), "Add anchor")
    drawn = doc.rig
    dialogs.save_answer = "save"
    dialogs.save_path_answer = tmp_path / "kept.rig.json"
    assert ctl.new()
    assert doc.rig == Rig() and doc.path is None
    assert rigfile.load_rig(tmp_path / "kept.rig.json").points == drawn.points


def test_autosave_writes_a_file_and_recovery_restores_it_after_a_crash(make_window, data_dir):
    window, doc, ctl, dialogs = make_window(autosave_seconds=0.05)
    assert ctl.open(SAMPLE)
    doc.apply(_edited(doc.rig), "Add anchor")
    drawn = doc.rig
    path = ctl.autosave_now()
    assert path is not None and path.exists() and data_dir in path.parents
    assert rigfile.load_rig(path).points == drawn.points
    # "crash": the window is never closed cleanly and the kernel drops its lock; a new session starts
    _crash(ctl)
    window2, doc2, ctl2, dialogs2 = make_window()
    assert ctl2.offer_recovery()
    assert dialogs2.kinds() == ["recover"]
    assert "raft-3to1-redirect" in dialogs2.asked[0][1]
    assert doc2.rig.points == drawn.points
    assert doc2.path == SAMPLE and doc2.is_modified  # still needs saving
    doc2.undo_stack.undo()  # one undo returns to the file on disk
    assert doc2.rig == rigfile.load_rig(SAMPLE)
    assert not path.exists()  # the old copy is gone once offered


def test_the_autosave_timer_fires_on_its_own(make_window, qtbot):
    window, doc, ctl, dialogs = make_window(autosave_seconds=0.05)
    doc.apply(_edited(doc.rig), "Add anchor")
    qtbot.waitUntil(lambda: ctl.autosave_path.exists(), timeout=3000)


def test_a_clean_save_and_a_clean_close_remove_the_autosave(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    window.show()
    doc.apply(_edited(doc.rig), "Add anchor")
    assert ctl.autosave_now().exists()
    assert ctl.save_as(tmp_path / "a.rig.json")
    assert not ctl.autosave_path.exists()
    doc.apply(_edited(doc.rig), "Add another anchor")
    assert ctl.autosave_now().exists()
    dialogs.save_answer = "discard"
    assert window.close()
    assert not ctl.autosave_path.exists()
    window2, doc2, ctl2, dialogs2 = make_window()
    assert not ctl2.offer_recovery()
    assert dialogs2.asked == []


def test_declining_recovery_keeps_the_empty_sketch_and_removes_the_copy(make_window):
    window, doc, ctl, dialogs = make_window()
    doc.apply(_edited(doc.rig), "Add anchor")
    path = ctl.autosave_now()
    _crash(ctl)
    window2, doc2, ctl2, dialogs2 = make_window()
    dialogs2.recover_answer = False
    assert not ctl2.offer_recovery()
    assert doc2.rig == Rig() and not path.exists()


def test_recent_files_remember_opened_rigs_newest_first(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    other = tmp_path / "other.rig.json"
    rigfile.save_rig(rigfile.load_rig(SAMPLE), other)
    assert ctl.open(SAMPLE)
    assert ctl.open(other)
    assert ctl.recent_files()[:2] == [other.resolve(), SAMPLE.resolve()]
    # stored in the settings file, so a new session sees them
    assert make_settings().value("files/recent")[0] == str(other.resolve())
    texts = [a.text() for a in ctl.recent_menu.actions()]
    assert texts[:2] == ["other", "raft-3to1-redirect"]


def test_samples_menu_lists_every_sample_and_opens_it_untitled(make_window):
    window, doc, ctl, dialogs = make_window()
    files = sample_files()
    assert {p.name for p in files} == {p.name for p in SAMPLES.glob("*.rig.json")} and files
    actions = ctl.samples_menu.actions()
    assert len(actions) == len(files)
    actions[0].trigger()
    assert doc.rig == rigfile.load_rig(files[0])
    assert doc.path is None  # saving will ask where, never overwrite the sample


def test_title_shows_the_file_name_and_a_star_when_modified(make_window):
    window, doc, ctl, dialogs = make_window()
    assert ctl.shown_title() == "Untitled — Ropewright"
    ctl.open(SAMPLE)
    assert window.windowTitle() == "raft-3to1-redirect[*] — Ropewright"
    assert ctl.shown_title() == "raft-3to1-redirect — Ropewright"
    doc.apply(replace(doc.rig, title="changed"), "Retitle")
    assert window.isWindowModified()
    assert ctl.shown_title() == "raft-3to1-redirect* — Ropewright"
    doc.undo_stack.undo()
    assert ctl.shown_title() == "raft-3to1-redirect — Ropewright"


def test_a_failed_save_says_why_and_keeps_the_sketch_modified(make_window, tmp_path):
    window, doc, ctl, dialogs = make_window()
    doc.apply(_edited(doc.rig), "Add anchor")
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("x")
    assert not ctl.save_as(blocker / "rig.rig.json")
    assert dialogs.kinds() == ["error"]
    assert doc.is_modified and doc.path is None
