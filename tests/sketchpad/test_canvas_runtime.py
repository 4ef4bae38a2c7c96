"""The app survives long sessions: PySide6 6.12.0 on CPython 3.11 drops a reference to None on every
void Qt call (measured with sys.getrefcount); ``sketchpad`` gives None a reserve so a long drag
cannot abort Python with "deallocating None"."""

import sys

import sketchpad  # noqa: F401 - importing it installs the reserve


def test_200k_void_qt_calls_leave_none_alive(main_window):
    view = main_window.view
    for _ in range(200_000):  # far more than None's natural refcount (a few thousand)
        view.setToolTip("")  # a void Qt method
    assert sys.getrefcount(None) > 1_000_000, "None's refcount is running out"
