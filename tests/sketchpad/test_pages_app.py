"""The app's side of the pages: role, carried length and tails in the property panel (undoable), the print frame,
the schematic panel, the Forces dock's rope-length and gear tabs, and File ▸ Export briefing / manual."""

from __future__ import annotations

import pypdf
import pytest
from PySide6.QtCore import QRectF, Qt

from solver.rigfile import load_rig
from tests.conftest import SAMPLES
from tests.sketchpad.test_properties import type_into

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


@pytest.fixture
def raft_window(main_window, qtbot):
    doc = main_window.document
    doc.load(load_rig(RAFT), RAFT) if hasattr(doc, "load") else doc.apply(load_rig(RAFT), "Open")
    sched = main_window.live.scheduler
    qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == doc.revision, timeout=10000)
    return main_window


def test_role_is_chosen_in_the_panel_and_undone(raft_window, qtbot):
    w = raft_window
    panel = w.properties_dock.panel
    panel.show_subject("point", "P1")
    box = w.pages.fields.role
    assert box.isVisibleTo(panel) and box.currentData() == "safety officer"
    box.setCurrentIndex(box.findData("edge attendant"))
    assert w.document.rig.point("P1").role == "edge attendant"
    w.undo()
    assert w.document.rig.point("P1").role == "safety officer"
    assert box.currentData() == "safety officer"
    panel.show_subject("point", "A1")
    assert not box.isVisibleTo(panel)  # only people have a role


def test_carried_length_and_tails_are_typed_and_the_dock_warns(raft_window, qtbot):
    w = raft_window
    panel = w.properties_dock.panel
    panel.show_subject("rope", "main")
    type_into(qtbot, w.pages.fields.carried, "30")
    assert w.document.rig.rope("main").length_m == 30.0
    sched = w.live.scheduler
    qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == w.document.revision, timeout=10000)
    model = w.pages.tabs.lengths_model
    assert model.rowCount() == 1
    assert model.item(0, 5).text().startswith("SHORT by")
    panel.show_subject(None)
    type_into(qtbot, w.pages.fields.tail, "2")
    assert w.document.rig.settings.tail_m == 2.0
    w.undo()
    w.undo()
    assert w.document.rig.rope("main").length_m == 60.0 and w.document.rig.settings.tail_m == 1.0
    assert w.pages.tabs.gear_model.rowCount() >= 5


def test_print_frame_is_set_to_the_view_drawn_and_undone(raft_window):
    w = raft_window
    frame = w.pages.frame
    frame.set_to_view(QRectF(-20.0, -25.0, 40.0, 30.0))
    assert w.document.rig.print_frame == (-20.0, -5.0, 20.0, 25.0)
    assert frame.item.isVisible() and frame.item.rect() == QRectF(-20.0, -25.0, 40.0, 30.0)
    w.undo()
    assert w.document.rig.print_frame is None and not frame.item.isVisible()
    w.document.undo_stack.redo()
    frame.action_clear.trigger()
    assert w.document.rig.print_frame is None


def test_schematic_panel_shows_the_strands(raft_window, qtbot):
    w = raft_window
    w.pages.action_schematic.trigger()
    assert w.pages.schematic_dock.isVisible()
    view = w.pages.schematic
    view.repaint()
    qtbot.waitUntil(lambda: view.layout_drawn is not None, timeout=5000)
    assert len(view.layout_drawn.strands) == 5 and len(view.layout_drawn.sheaves) == 3


def test_export_manual_writes_a_book_with_progress(raft_window, tmp_path):
    w = raft_window
    out = tmp_path / "book.pdf"
    others = [SAMPLES / "vector-pull.rig.json", SAMPLES / "compound-2on3.rig.json"]
    assert w.pages.books.export_manual(out, others) == out
    reader = pypdf.PdfReader(out)
    assert len(reader.pages) == w.pages.books.last_manual.pages
    seen = [d for d, _ in w.pages.books.progress_seen]
    assert seen == sorted(seen) and seen[-1] == 2 * (1 + len(others))
    contents = " ".join(reader.pages[1].extract_text().split())
    for title in ("vector pull", "compound 2:1"):
        assert title in contents


def test_export_briefing_from_the_menu(raft_window, tmp_path):
    out = raft_window.pages.books.export_brief(tmp_path / "b.pdf")
    assert out is not None and len(pypdf.PdfReader(out).pages) == 1
