"""Ropewright sketchpad: the PySide6 application, a thin view over the solver.

PySide6 is pinned to 6.11.3: 6.12.0 on CPython 3.11 drops a reference to ``None``
on every Qt call returning ``void`` and aborts the interpreter after a few
thousand calls (checked with ``sys.getrefcount(None)`` around a loop of
``QWidget.setToolTip``); ``tests/sketchpad/test_qt_binding.py`` guards it.
"""
