"""The pass chooser: a small menu beside the cursor asking how a rope being drawn passes a point.

The rope tool opens it when a plain click (no modifier key) lands on a point that
already exists and is not the rope's start or a haul team: tied (knot or rope
grab), pulley (with the toolbar's pulley, or another), sliding (ring or hand),
edge (with the toolbar's edge, or another), or end the rope there.  Keys 1-4 or
T P S E choose, F ends the rope, Enter takes the highlighted choice (the
toolbar's default when it opens), Esc or a click elsewhere drops that click.

A chooser is any callable ``chooser(request, done)`` that eventually calls
``done(PassChoice)`` or ``done(None)`` exactly once; tests inject one that
answers at once.  :class:`PopupChooser` is the real one: non-blocking, so no
nested event loop runs inside a mouse handler.
"""

from __future__ import annotations

import logging
from collections.abc import Callable
from dataclasses import dataclass

from PySide6.QtCore import QPoint, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QKeyEvent
from PySide6.QtWidgets import QLabel, QMenu, QWidget, QWidgetAction

from sketchpad import theme
from sketchpad.plain_text import bold, rich_label

log = logging.getLogger(__name__)

#: (how, digit key, letter key, name, what it means on site) in menu order
PASS_OPTIONS: tuple[tuple[str, int, int, str, str], ...] = (
    ("tied", Qt.Key_1, Qt.Key_T, "Tied", "knot or rope grab"),
    ("pulley", Qt.Key_2, Qt.Key_P, "Pulley", ""),
    ("sliding", Qt.Key_3, Qt.Key_S, "Sliding", "ring or hand, no friction"),
    ("edge", Qt.Key_4, Qt.Key_E, "Edge", ""),
    ("capture", Qt.Key_6, Qt.Key_C, "Capture", "pulley that holds the rope when the team lets go"),
)
END_KEYS = (Qt.Key_5, Qt.Key_F)
CURSOR_OFFSET_PX = 14  # the menu opens below-right of the click so the point stays in sight


@dataclass(frozen=True)
class PassChoice:
    """The answer: how the rope passes (and over which hardware), or ``end`` = the rope ends here, tied."""

    how: str = "tied"
    hardware: str | None = None
    end: bool = False


@dataclass(frozen=True)
class PassRequest:
    """What the chooser shows: the point, the default pass and the hardware on offer ((id, name) pairs)."""

    point_id: str
    point_name: str
    default_how: str
    pulley_hardware: str
    edge_hardware: str
    pulley_options: tuple[tuple[str, str], ...] = ()
    edge_options: tuple[tuple[str, str], ...] = ()
    global_pos: QPoint | None = None


Done = Callable[[PassChoice | None], None]
Chooser = Callable[[PassRequest, Done], None]


def _name_of(options: tuple[tuple[str, str], ...], hw_id: str) -> str:
    return next((name for i, name in options if i == hw_id), hw_id)


class PassMenu(QMenu):
    """The chooser's menu; emits ``chosen`` once, with a PassChoice or None (dismissed), after it hides."""

    chosen = Signal(object)

    def __init__(self, request: PassRequest, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("pass_chooser")
        self.request = request
        self._choice: PassChoice | None = None
        self._emitted = False
        self.choice_actions: dict[str, QAction] = {}
        self.setFont(theme.font(theme.LABEL_POINT_SIZE + 1))
        title = rich_label(f"Rope at {bold(request.point_name)}: how does it pass?")
        title.setContentsMargins(10, 6, 10, 4)
        title.setStyleSheet("QLabel:disabled { color: palette(window-text); }")  # a heading, not a greyed item
        header = QWidgetAction(self)
        header.setDefaultWidget(title)
        header.setEnabled(False)
        self.addAction(header)
        self.addSeparator()
        for how, digit, letter, name, meaning in PASS_OPTIONS:
            hw = {"pulley": request.pulley_hardware, "edge": request.edge_hardware,
                  "capture": request.pulley_hardware}.get(how)
            if hw is not None and how != "capture":
                meaning = _name_of(request.pulley_options if how == "pulley" else request.edge_options, hw)
            key_hint = f"{chr(digit)}  {chr(letter)}" + ("  Enter" if how == request.default_how else "")
            act = self.addAction(f"{name} — {meaning}\t{key_hint}")
            act.triggered.connect(lambda _c=False, c=PassChoice(how, hw): self.choose(c))
            self.choice_actions[how] = act
        # not QMenu.setDefaultAction: its bold text overruns the key column the menu measured in plain text
        self.default_action = self.choice_actions.get(request.default_how)
        self._add_other("pulley", "Other pulley or carabiner", request.pulley_options, request.pulley_hardware)
        self._add_other("edge", "Other edge", request.edge_options, request.edge_hardware)
        self.addSeparator()
        end = self.addAction("End the rope here, tied\t5  F")
        end.triggered.connect(lambda _c=False: self.choose(PassChoice("tied", None, end=True)))
        self.choice_actions["end"] = end
        hint = QLabel("Arrows and Enter also choose · Esc drops this click")
        hint.setContentsMargins(10, 2, 10, 6)
        hint.setStyleSheet("color: palette(mid);")
        footer = QWidgetAction(self)
        footer.setDefaultWidget(hint)
        footer.setEnabled(False)
        self.addAction(footer)

    def _add_other(self, how: str, title: str, options: tuple[tuple[str, str], ...], current: str) -> None:
        others = [(i, name) for i, name in options if i != current]
        if not others:
            return
        sub = self.addMenu(title)
        sub.setFont(self.font())
        for hw_id, name in others:
            act = sub.addAction(f"{name}  ({hw_id})")
            act.triggered.connect(lambda _c=False, c=PassChoice(how, hw_id): self.choose(c))

    def showEvent(self, event) -> None:  # noqa: N802
        super().showEvent(event)
        if self.default_action is not None:
            self.setActiveAction(self.default_action)  # Enter takes the default until the user moves

    def choose(self, choice: PassChoice) -> None:
        """Take ``choice`` and close (the answer is emitted once the menu has hidden)."""
        self._choice = choice
        self.hide()

    def keyPressEvent(self, event: QKeyEvent) -> None:  # noqa: N802
        key = event.key()
        for how, digit, letter, _name, _m in PASS_OPTIONS:
            if key in (digit, letter):
                self.choice_actions[how].trigger()
                return
        if key in END_KEYS:
            self.choice_actions["end"].trigger()
            return
        if key in (Qt.Key_Return, Qt.Key_Enter):
            act = self.activeAction() or self.default_action
            if act is not None and act.menu() is None and act.isEnabled():
                act.trigger()
                return
        super().keyPressEvent(event)  # arrows, Esc (closes: the click is dropped)

    def hideEvent(self, event) -> None:  # noqa: N802
        super().hideEvent(event)
        # QMenu hides before it emits triggered: answer on the next turn of the event loop
        QTimer.singleShot(0, self._emit)

    def _emit(self) -> None:
        if self._emitted or self.isVisible():
            return
        self._emitted = True
        self.chosen.emit(self._choice)


class PopupChooser:
    """The real chooser: opens a :class:`PassMenu` beside the cursor without blocking; ``close()`` drops it."""

    def __init__(self, parent: QWidget) -> None:
        self.parent = parent
        self.menu: PassMenu | None = None

    def __call__(self, request: PassRequest, done: Done) -> None:
        self.close()
        menu = PassMenu(request, self.parent)
        menu.setAttribute(Qt.WA_NoMouseReplay, True)  # a click elsewhere only closes it: the click is dropped

        def answer(choice: PassChoice | None) -> None:
            if self.menu is menu:
                self.menu = None
            menu.deleteLater()
            done(choice)

        menu.chosen.connect(answer)
        self.menu = menu
        pos = request.global_pos if request.global_pos is not None else self.parent.mapToGlobal(self.parent.rect().center())
        menu.popup(pos + QPoint(CURSOR_OFFSET_PX, CURSOR_OFFSET_PX))

    def close(self) -> None:
        """Close an open menu without answering (the tool already moved on)."""
        menu, self.menu = self.menu, None
        if menu is not None:
            menu._emitted = True
            menu.hide()
            menu.deleteLater()
