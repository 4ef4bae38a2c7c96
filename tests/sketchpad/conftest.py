"""GUI fixtures: a MainWindow driven through its viewport, failing the test if it leaks windows.

Drag helpers send press, at least one move, and release to ``view.viewport()`` at
``view.mapFromScene(...)`` positions, as a user's mouse would (qt-headless.md).
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import QEvent, QPoint, QPointF, Qt
from PySide6.QtGui import QFont, QFontMetrics, QMouseEvent
from PySide6.QtWidgets import QApplication

from sketchpad import theme
from sketchpad.geometry import to_scene


@pytest.fixture(scope="session", autouse=True)
def decimal_point_locale():
    """Fields read numbers by the user's locale; tests type with a decimal point unless one sets another."""
    from PySide6.QtCore import QLocale

    QLocale.setDefault(QLocale(QLocale.English, QLocale.UnitedStates))


@pytest.fixture(scope="session", autouse=True)
def font_renders_text(qapp):
    """Missing fonts fail silently (empty boxes): make sure the theme's face has an "A"."""
    assert QFontMetrics(QFont(theme.FONT_FAMILY)).inFont("A"), f"font {theme.FONT_FAMILY!r} cannot draw 'A'"


def _visible_top_levels() -> set:
    return {w for w in QApplication.topLevelWidgets() if w.isVisible()}


@pytest.fixture
def main_window(qtbot):
    """A shown MainWindow (1200x800, empty sketch) fitted around the origin at 20 px per metre."""
    from sketchpad.main_window import MainWindow

    before = _visible_top_levels()
    window = MainWindow()
    window.resize(1200, 800)
    window.show()
    qtbot.waitExposed(window)
    view = window.view
    view.resetTransform()
    view.scale(20.0, 20.0)
    view.centerOn(0.0, 0.0)
    view._scale_changed()
    yield window
    window.view.set_tool(None)
    window.close()
    window.deleteLater()
    QApplication.processEvents()
    leaked = [w for w in _visible_top_levels() - before if w is not window]
    for w in leaked:
        w.close()
    assert not leaked, f"the test left windows open: {[type(w).__name__ + ':' + w.windowTitle() for w in leaked]}"


class Mouse:
    """Drives a SketchView's viewport at site coordinates (metres)."""

    def __init__(self, view, qtbot):
        self.view = view
        self.qtbot = qtbot

    def at(self, x: float, y: float) -> QPoint:
        return self.view.mapFromScene(to_scene(x, y))

    def _send(self, kind, pos: QPoint, button, buttons, modifiers=Qt.NoModifier) -> None:
        vp = self.view.viewport()
        ev = QMouseEvent(kind, QPointF(pos), QPointF(vp.mapToGlobal(pos)), button, buttons, modifiers)
        QApplication.sendEvent(vp, ev)

    def press(self, x, y, modifiers=Qt.NoModifier, button=Qt.LeftButton):
        self._send(QEvent.MouseButtonPress, self.at(x, y), button, button, modifiers)

    def move(self, x, y, modifiers=Qt.NoModifier, buttons=Qt.LeftButton):
        self._send(QEvent.MouseMove, self.at(x, y), Qt.NoButton, buttons, modifiers)

    def release(self, x, y, modifiers=Qt.NoModifier, button=Qt.LeftButton):
        self._send(QEvent.MouseButtonRelease, self.at(x, y), button, Qt.NoButton, modifiers)

    def click(self, x, y, modifiers=Qt.NoModifier):
        self.press(x, y, modifiers)
        self.release(x, y, modifiers)

    def double_click(self, x, y, modifiers=Qt.NoModifier):
        self.press(x, y, modifiers)
        self.release(x, y, modifiers)
        self._send(QEvent.MouseButtonDblClick, self.at(x, y), Qt.LeftButton, Qt.LeftButton, modifiers)
        self.release(x, y, modifiers)

    def drag(self, x0, y0, x1, y1, steps: int = 4, modifiers=Qt.NoModifier, release: bool = True):
        self.press(x0, y0, modifiers)
        for i in range(1, steps + 1):
            t = i / steps
            self.move(x0 + (x1 - x0) * t, y0 + (y1 - y0) * t, modifiers)
        if release:
            self.release(x1, y1, modifiers)

    def drag_pixels(self, start: QPoint, end: QPoint, steps: int = 4, button=Qt.LeftButton):
        """A drag between fixed viewport pixels (for pans, where site positions move under the mouse)."""
        self._send(QEvent.MouseButtonPress, start, button, button)
        for i in range(1, steps + 1):
            t = i / steps
            p = QPoint(round(start.x() + (end.x() - start.x()) * t), round(start.y() + (end.y() - start.y()) * t))
            self._send(QEvent.MouseMove, p, Qt.NoButton, button)
        self._send(QEvent.MouseButtonRelease, end, button, Qt.NoButton)

    def key(self, key, modifiers=Qt.NoModifier):
        self.qtbot.keyClick(self.view, key, modifiers)


@pytest.fixture
def mouse(main_window, qtbot):
    return Mouse(main_window.view, qtbot)
