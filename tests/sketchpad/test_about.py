"""The safety caution is always on screen and the About box carries it in full (solver.cautions)."""

from __future__ import annotations

import pytest
from PySide6.QtWidgets import QApplication, QWidget

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


def _message_room(window) -> int:
    """Px the status bar leaves its message: from its left edge to the first permanent widget shown."""
    bar = window.statusBar()
    lefts = [w.geometry().left() for w in bar.findChildren(QWidget) if w.isVisible() and w.parent() is bar
             and w.geometry().left() > 0]
    return min(lefts) - 8  # (the message's own left margin)


@pytest.mark.parametrize("size", [None, (1200, 800)])
def test_the_select_tools_hint_and_the_whole_caution_both_fit_in_the_status_bar(qtbot, size):
    # at the default window size the caution on one line left the select tool's hint 397 px of its 559
    from sketchpad.main_window import MainWindow

    window = MainWindow()
    if size:
        window.resize(*size)
    window.show()
    qtbot.waitExposed(window)
    QApplication.processEvents()
    try:
        bar = window.statusBar()
        hint = bar.currentMessage()
        assert hint.startswith("Click to select"), hint  # the select tool's hint, as the app opens
        assert bar.fontMetrics().horizontalAdvance(hint) <= _message_room(window)
        caution = bar.findChildren(CautionLabel)[0]
        assert caution.text() == caution.full_text  # whole, in its two lines, not elided
        assert caution.height() >= CautionLabel.LINES * caution.fontMetrics().lineSpacing()
    finally:
        window.close()
        window.deleteLater()
        QApplication.processEvents()


def test_the_caution_stays_whole_in_the_narrowest_window_and_a_squeezed_label_elides_it(main_window, qtbot):
    main_window.resize(500, 600)  # narrower than the window can go
    QApplication.processEvents()
    caution = main_window.statusBar().findChildren(CautionLabel)[0]
    assert caution.isVisible() and caution.text() == caution.full_text
    alone = CautionLabel()  # squeezed below its two lines' width (a layout could): elided, all of it in the tooltip
    qtbot.addWidget(alone)
    alone.show()
    alone.resize(260, alone.sizeHint().height())
    QApplication.processEvents()
    assert alone.text() != alone.full_text and alone.text().endswith("…") and alone.toolTip() == FULL_CAUTION
