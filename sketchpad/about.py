"""The About box with the full safety caution, and the one-line caution always visible in the status bar.

The wording lives in :mod:`solver.cautions` so the app, the README and every
exported report say the same thing.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QMouseEvent
from PySide6.QtWidgets import QDialog, QDialogButtonBox, QLabel, QMainWindow, QSizePolicy, QVBoxLayout, QWidget

from solver.cautions import CAUTION_PARAGRAPHS, FULL_CAUTION, SHORT_CAUTION

try:  # the installed version, if the package is installed
    from importlib.metadata import PackageNotFoundError, version as _version

    try:
        VERSION = _version("ropewright")
    except PackageNotFoundError:
        VERSION = "development"
except ImportError:  # pragma: no cover
    VERSION = "development"

CAUTION_STYLE = "color: #7a4a00; background: #fff3d6; padding: 1px 6px; border-radius: 3px;"
ABOUT_TEXT = (
    "A sketchpad for planning rope-rescue and swiftwater rigging: draw the site to scale, "
    "place anchors, the load, pulleys and ropes, and see the tensions, angles, anchor "
    "forces and safety margins a static model of stretching ropes predicts."
)


class AboutDialog(QDialog):
    """Name, version, what the program is for, and the full caution."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("About Ropewright")
        lay = QVBoxLayout(self)
        title = QLabel(f"<h2>Ropewright</h2><p>Version {VERSION}</p>")
        title.setTextFormat(Qt.TextFormat.RichText)
        lay.addWidget(title)
        what = QLabel(ABOUT_TEXT)
        what.setWordWrap(True)
        lay.addWidget(what)
        head = QLabel("<b>Read before you rely on any number</b>")
        head.setTextFormat(Qt.TextFormat.RichText)
        lay.addWidget(head)
        self.caution = QLabel("".join(f"<p>{p}</p>" for p in CAUTION_PARAGRAPHS))
        self.caution.setTextFormat(Qt.TextFormat.RichText)
        self.caution.setWordWrap(True)
        self.caution.setObjectName("full_caution")
        self.caution.setStyleSheet(CAUTION_STYLE.replace("padding: 1px 6px", "padding: 6px 10px"))
        self.caution.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        lay.addWidget(self.caution)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok)
        buttons.accepted.connect(self.accept)
        lay.addWidget(buttons)
        self.setMinimumWidth(480)
        self.resize(520, self.sizeHint().height())

    def caution_text(self) -> str:
        """The caution exactly as :data:`solver.cautions.FULL_CAUTION` (for tests and copying)."""
        return FULL_CAUTION


def show_about(parent: QWidget | None = None) -> AboutDialog:
    """Open the About box (modal) and return it."""
    dlg = AboutDialog(parent)
    dlg.open()
    return dlg


class CautionLabel(QLabel):
    """The short caution for the status bar; a click opens the About box with the full text."""

    clicked = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__("⚠ " + SHORT_CAUTION, parent)
        self.setObjectName("caution_banner")
        self.setStyleSheet(CAUTION_STYLE)
        self.setToolTip(FULL_CAUTION)
        self.setCursor(Qt.CursorShape.PointingHandCursor)
        self.full_text = "⚠ " + SHORT_CAUTION
        # full width when there is room; shrinks with a narrow window (text elided, tooltip keeps all of it)
        self.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Preferred)
        self.setMinimumWidth(240)

    def sizeHint(self):  # noqa: N802 - Qt's name
        hint = super().sizeHint()
        hint.setWidth(self.fontMetrics().horizontalAdvance(self.full_text) + 16)
        return hint

    def minimumSizeHint(self):  # noqa: N802 - Qt's name
        hint = super().minimumSizeHint()
        hint.setWidth(self.minimumWidth())
        return hint

    def resizeEvent(self, event) -> None:  # noqa: N802 - Qt's name
        super().resizeEvent(event)
        room = max(0, self.width() - 14)
        self.setText(self.fontMetrics().elidedText(self.full_text, Qt.TextElideMode.ElideRight, room))

    def mouseReleaseEvent(self, event: QMouseEvent) -> None:  # noqa: N802 - Qt's name
        if event.button() == Qt.MouseButton.LeftButton:
            self.clicked.emit()
        super().mouseReleaseEvent(event)


def install_caution(window: QMainWindow, menu_help=None) -> CautionLabel:
    """Put the short caution permanently in ``window``'s status bar and "About Ropewright" in the Help menu."""
    label = CautionLabel(window)
    label.clicked.connect(lambda: show_about(window))
    window.statusBar().addPermanentWidget(label)
    if menu_help is not None:
        act = menu_help.addAction("About Ropewright and safety")
        act.triggered.connect(lambda _c=False: show_about(window))
        window._about_action = act  # keep a reference for tests
    return label
