"""The right-hand panels at the default window size: every column of the Forces tables in view, History a tab."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from sketchpad.table_fit import is_quantity
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
        model, fm = table.model(), table.fontMetrics()
        for c in range(header.count()):  # wrapped at spaces, never a word cut: each column holds its widest word
            texts = [table.source.headerData(c, Qt.Horizontal)] + [model.index(r, c).data() for r in range(model.rowCount())]
            widest = max(fm.horizontalAdvance(w) for t in texts for w in str(t).split(" ") if w)
            numbers = [str(t) for t in texts[1:] if is_quantity(str(t))]  # "41 %", "2.37 kN": one piece
            widest = max([widest] + [fm.horizontalAdvance(t) for t in numbers])
            assert header.sectionSize(c) >= widest, (i, c, texts)


def test_history_is_a_tab_beside_forces_not_a_third_of_the_column(main_window):
    w = main_window
    tabbed = w.tabifiedDockWidgets(w.live.dock)
    assert w.history_dock in tabbed
    assert not w.history_dock.isHidden()  # still there, one click away


def test_shrink_keeps_natural_widths_that_fit_and_never_goes_below_the_widest_word():
    from sketchpad.table_fit import shrink

    assert shrink([50, 60], [20, 30], 200) == [50, 60]
    got = shrink([100, 60, 40], [40, 50, 40], 170)  # 30 px to find in 60 + 10 px of room, in proportion
    assert got == pytest.approx([100 - 60 * 30 / 70, 60 - 10 * 30 / 70, 40])
    assert all(g >= m for g, m in zip(got, [40, 50, 40]))
    assert shrink([100, 60], [90, 55], 100) == [90, 55]  # not enough room to give: the widest words, then scroll


def test_a_number_and_its_unit_stay_on_one_line():
    assert is_quantity("41 %") and is_quantity("2.37 kN") and is_quantity("1,250 lbf")
    assert not is_quantity("bank boulder") and not is_quantity("40.0 kN strength") and not is_quantity("250° (WSW)")
