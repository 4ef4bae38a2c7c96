"""The safety caution is always on screen and the About box carries it in full (solver.cautions)."""

from __future__ import annotations

from PySide6.QtWidgets import QApplication

from sketchpad.about import AboutDialog, CautionLabel
from solver.cautions import CAUTION_PARAGRAPHS, FULL_CAUTION, SHORT_CAUTION


def test_the_status_bar_always_shows_the_short_caution(main_window):
    labels = main_window.statusBar().findChildren(CautionLabel)
    assert len(labels) == 1
    label = labels[0]
    assert label.isVisible() and label.width() >= 240
    assert label.full_text.endswith(SHORT_CAUTION)
    assert label.toolTip() == FULL_CAUTION
    main_window.statusBar().showMessage("a long temporary message " * 10)
    QApplication.processEvents()
    assert label.isVisible()  # status messages never cover it


def test_about_box_has_the_full_caution(main_window, qtbot):
    dlg = AboutDialog(main_window)
    qtbot.addWidget(dlg)
    text = dlg.caution.text()
    for paragraph in CAUTION_PARAGRAPHS:
        assert paragraph in text
    assert dlg.caution_text() == FULL_CAUTION
    assert any("About" in a.text() for a in main_window.menu_help.actions())
