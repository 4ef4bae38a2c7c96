"""Garbage collection waits while a drag previews and runs again when the drag ends."""

from __future__ import annotations

import gc

import pytest

from sketchpad.document import Document
from sketchpad.frame_gc import FramePacedCollector
from tests.sketchpad.test_live_solve import redirect_rig


@pytest.fixture
def collector(qtbot):
    assert gc.isenabled()
    doc = Document(redirect_rig())
    fgc = FramePacedCollector(doc)
    yield doc, fgc
    fgc.resume()
    gc.enable()


def test_a_preview_pauses_collection_and_the_edit_that_ends_the_drag_resumes_it(collector):
    doc, fgc = collector
    start = doc.rig
    doc.preview(start.moved("H", 10.0, 10.5))
    assert not gc.isenabled() and fgc.paused
    doc.preview(start.moved("H", 10.0, 11.0))
    assert not gc.isenabled()
    doc.apply(start.moved("H", 10.0, 11.0), "move haul", before=start)  # the release
    assert gc.isenabled() and not fgc.paused


def test_undo_and_a_new_document_resume_collection_too(collector):
    doc, fgc = collector
    doc.apply(doc.rig.moved("H", 10.0, 10.5), "move haul")
    doc.preview(doc.rig.moved("H", 10.0, 11.0))
    assert not gc.isenabled()
    doc.undo_stack.undo()
    assert gc.isenabled()
    doc.preview(doc.rig.moved("H", 10.0, 11.5))
    doc.replace_all(redirect_rig())
    assert gc.isenabled()


def test_a_long_preview_still_collects_its_young_objects(collector):
    doc, fgc = collector
    fgc.young_limit = 1000
    doc.preview(doc.rig.moved("H", 10.0, 10.5))
    junk = []
    for _ in range(5000):  # cyclic garbage, as a drag can leave
        a: list = []
        a.append(a)
        junk.append(a)
    del junk
    doc.preview(doc.rig.moved("H", 10.0, 11.0))
    assert fgc.young_collections == 1 and not gc.isenabled()
    assert gc.get_count()[0] < 1000


def test_collection_switched_off_by_someone_else_is_left_alone(collector):
    doc, fgc = collector
    gc.disable()
    try:
        doc.preview(doc.rig.moved("H", 10.0, 10.5))
        assert not fgc.paused
        doc.apply(doc.rig.moved("H", 10.0, 11.0), "move haul")
        assert not gc.isenabled()  # not ours to switch back on
    finally:
        gc.enable()


def test_closing_the_window_mid_drag_leaves_collection_on(qtbot):
    from sketchpad.main_window import MainWindow

    w = MainWindow()
    qtbot.addWidget(w)
    w.document.preview(w.document.rig)
    assert not gc.isenabled()
    w.close()
    assert gc.isenabled()
