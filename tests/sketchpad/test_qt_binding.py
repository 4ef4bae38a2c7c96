"""The pinned Qt binding keeps Python's reference counts straight (PySide6 6.12.0 on CPython 3.11 did not)."""

import sys

from PySide6.QtWidgets import QWidget


def test_void_qt_calls_do_not_leak_references_to_none(qapp):
    widget = QWidget()
    before = sys.getrefcount(None)
    for _ in range(5000):
        widget.setToolTip("x")
        widget.isVisible()
    after = sys.getrefcount(None)
    # a correct binding leaves the count where it was, give or take a few temporaries
    assert abs(after - before) < 50, (before, after)
