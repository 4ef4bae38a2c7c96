"""The hint strip over the top of the canvas: what the sketch still needs and what the active tool does next.

The status bar cuts a long hint off at the default window width (the rope tool's hint showed
only its last words); here it wraps to the canvas width.  Two parts: the sketch's state (the
empty sketch's first message, or "sketch incomplete: ..." from :func:`solver.completeness.sketch_gap`,
in a calm colour, never the failure banner's red) and the active tool's latest message (hidden for
the select tool, whose messages stay in the status bar).  It sits under the failure banner when
that is shown, and lets mouse events through to the canvas.
"""

from __future__ import annotations

import html

from PySide6.QtCore import QEvent, QObject, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QLabel, QWidget

from sketchpad import theme


def top_strip_width(viewport_width: int) -> int:
    """Width (px) of a strip across the top of the canvas (the hint, the failure banner), clear of the north arrow."""
    right = theme.NORTH_ARROW_PX + 2 * theme.HUD_MARGIN_PX
    return max(160, viewport_width - theme.BANNER_MARGIN_PX - right)


class HintBar(QLabel):
    """A word-wrapped strip at the top of the viewport with the sketch state and the tool's hint."""

    def __init__(self, viewport: QWidget, banner: QWidget | None = None) -> None:
        super().__init__(viewport)
        self.banner = banner
        self.state = ""
        self.tool_text = ""
        self.state_muted = False  # True while a tool's own prompt leads (picking a system's points)
        self.setWordWrap(True)
        self.setTextFormat(Qt.RichText)
        self.setFont(theme.font(theme.LABEL_POINT_SIZE + 1))
        self.setStyleSheet(f"QLabel {{ background: {theme.HINT_BACK.name(QColor.HexArgb)}; "
                           f"color: {theme.HINT_TEXT.name()}; border: 1px solid {theme.HINT_EDGE.name()}; "
                           "padding: 5px 9px; border-radius: 4px; }")
        self.setAttribute(Qt.WA_TransparentForMouseEvents, True)
        self.setObjectName("hint_bar")
        viewport.installEventFilter(self)
        self.hide()

    def set_state(self, text: str | None) -> None:
        """The sketch's state line (None or "" when the sketch is complete)."""
        text = text or ""
        if text != self.state:
            self.state = text
            self._refresh()

    def set_tool_text(self, text: str | None) -> None:
        """The active tool's latest hint or message (None or "" hides it)."""
        text = text or ""
        if text != self.tool_text:
            self.tool_text = text
            self._refresh()

    def shown_text(self) -> str:
        """The strip's words as a reader sees them (empty when hidden)."""
        if self.isHidden():
            return ""
        return "\n".join(t for t in ("" if self.state_muted else self.state, self.tool_text) if t)

    def _refresh(self) -> None:
        parts = []
        if self.state and not self.state_muted:
            parts.append(f"<b style='color:{theme.HINT_STATE_TEXT.name()}'>{html.escape(self.state)}</b>")
        if self.tool_text:
            parts.append(html.escape(self.tool_text))
        if not parts:
            self.hide()
            return
        self.setText("<br>".join(parts))
        self.place()
        self.show()

    def place(self) -> None:
        """Top left of the canvas, clear of the north arrow, below the failure banner when it is shown."""
        w = top_strip_width(self.parentWidget().rect().width())
        self.resize(w, self.heightForWidth(w))
        top = theme.BANNER_MARGIN_PX
        if self.banner is not None and not self.banner.isHidden():
            top = self.banner.geometry().bottom() + 4
        self.move(theme.BANNER_MARGIN_PX, top)

    def eventFilter(self, obj: QObject, event) -> bool:  # noqa: N802 - Qt override
        if event.type() == QEvent.Resize and obj is self.parentWidget() and not self.isHidden():
            self.place()
        return False


def install_hints(window) -> HintBar:
    """Put a hint strip on ``window``'s canvas (a MainWindow with live forces) and keep it current."""
    from solver.completeness import sketch_gap

    view, document = window.view, window.document
    bar = HintBar(view.viewport(), window.live.overlay.banner)

    def on_message(text: str) -> None:
        tool = view.tool
        bar.set_tool_text("" if tool is None or tool.name == "select" else text)
        bar.state_muted = tool is not None and tool.name == "place-system"  # its own prompt says what comes next
        bar._refresh()

    def on_rig(rig) -> None:
        if document.sketching:
            bar.set_state("")  # a rope half clicked through: the tool's own line says what comes next
        elif not document.previewing:  # a drag moves points only: what the sketch lacks stays the same
            gap = sketch_gap(rig)
            bar.set_state(gap.message if gap else "")

    view.message.connect(on_message)
    document.changed.connect(on_rig)
    on_rig(document.rig)
    on_message(window.statusBar().currentMessage())
    return bar
