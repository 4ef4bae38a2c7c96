"""The right-hand panels at the default window size: every column of the Forces tables in view, History a tab."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from tests.sketchpad.test_overlay import open_sample


def test_forces_tables_show_every_column_at_the_default_window_size(main_window, qtbot):
    from sketchpad.main_window import DEFAULT_SIZE

    w = main_window
    w.resize(*DEFAULT_SIZE)
    QApplication.processEvents()
    open_sample(w, "raft-3to1-redirect.rig.json")
    panel = w.live.panel
    for i, table in enumerate((panel.segments, panel.anchors, panel.hardware)):
        panel.tabs.setCurrentIndex(i)
        QApplication.processEvents()
        header = table.horizontalHeader()
        right = max(header.sectionViewportPosition(c) + header.sectionSize(c) for c in range(header.count()))
        assert right <= table.viewport().width() + 1, f"table {i}: columns need {right} px of {table.viewport().width()}"
        assert table.horizontalScrollBar().maximum() == 0
        for c in range(header.count()):
            assert header.sectionSize(c) >= header.fontMetrics().horizontalAdvance(
                table.model().headerData(c, Qt.Horizontal)) * 0.8  # a column never squeezed to nothing


def test_history_is_a_tab_behind_properties_not_a_third_of_the_column(main_window):
    w = main_window
    tabbed = w.tabifiedDockWidgets(w.properties_dock)
    assert w.history_dock in tabbed
    assert not w.history_dock.isHidden()  # still there, one click away
