"""The About box with the full safety caution, and the one-line caution always visible in the status bar.

The wording lives in :mod:`solver.cautions` so the app, the README and every
exported report say the same thing.
"""

from __future__ import annotations

from PySide6.QtCore import QRect, QSize, Qt, Signal
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
    """The short caution for the status bar, in two lines; a click opens the About box with the full text.

    On one line the caution took more than half the status bar at the default window width and the
    select tool's hint beside it was cut off; in two lines the whole caution stays readable and the
    hint fits.  A narrower window elides it (the tooltip and the About box keep all of it).
    """

    clicked = Signal()

    #: lines the caution is wrapped into
    LINES = 2

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__("⚠ " + SHORT_CAUTION, parent)
        self.setObjectName("caution_banner")
        self.setStyleSheet(CAUTION_STYLE)
        self.setToolTip(FULL_CAUTION)
        self.setCursor(Qt.CursorShape.PointingHandCursor)
        self.full_text = "⚠ " + SHORT_CAUTION
        self.setWordWrap(True)
        self.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Fixed)
        self.setMinimumWidth(240)

    def text_width(self) -> int:
        """Narrowest text width (px) that holds the whole caution in :attr:`LINES` lines, words unbroken."""
        fm = self.fontMetrics()
        lo, hi = 1, fm.horizontalAdvance(self.full_text) + 1
        while lo < hi:  # the wrapped height only shrinks as the width grows: bisect for the first that fits
            mid = (lo + hi) // 2
            lines = fm.boundingRect(QRect(0, 0, mid, 10_000), Qt.TextFlag.TextWordWrap, self.full_text).height()
            if lines <= self.LINES * fm.lineSpacing():
                hi = mid
            else:
                lo = mid + 1
        return lo

    def sizeHint(self):  # noqa: N802 - Qt's name
        return QSize(self.text_width() + 16, self.LINES * self.fontMetrics().lineSpacing() + 4)

    def minimumSizeHint(self):  # noqa: N802 - Qt's name
        return QSize(self.minimumWidth(), self.sizeHint().height())

    def resizeEvent(self, event) -> None:  # noqa: N802 - Qt's name
        super().resizeEvent(event)
        room = max(0, self.width() - 14)
        if room >= self.text_width():
            self.setText(self.full_text)
        else:  # too narrow for the whole caution in its lines: elided, about a line's worth less than it holds
            self.setText(self.fontMetrics().elidedText(self.full_text, Qt.TextElideMode.ElideRight,
                                                       self.LINES * room - room // 3))

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
