"""Typed input fields for panels: a line edit that reads a force, length or number in the rig's display units.

Bad input never raises and never touches the model: the field shows a red
message under itself naming the problem in words, keeps the keyboard focus and
waits; Esc puts the model's value back.  A good entry emits ``committed`` with
the SI value (newtons, metres, or the plain number), or None when the field is
optional and was cleared.

Numbers are read and shown with the decimal mark of the user's locale (QLocale);
what a decimal-point and a decimal-comma reader would take a thousand times apart
is refused in words (:func:`solver.units.plain_number`).  A field tied to a field
of the rig format (``limit=("point", "capacity_N")``) refuses what the file could
not hold, with the same limits the reader and writer use (:mod:`solver.limits`).
"""

from __future__ import annotations

import math
from typing import Callable

from PySide6.QtCore import QLocale, QSignalBlocker, Qt, QTimer, Signal
from PySide6.QtGui import QFocusEvent, QKeyEvent
from PySide6.QtWidgets import QLineEdit, QPlainTextEdit, QSizePolicy, QVBoxLayout, QWidget

from sketchpad.plain_text import plain_label
from solver import limits, units
from solver.errors import UnitError

ERROR_STYLE = "color: #c62828;"  # red that reads on light and dark panel backgrounds


class _CommitLineEdit(QLineEdit):
    """A QLineEdit that reports Return/Enter and losing focus as one 'commit', Esc as 'revert'."""

    commit = Signal()
    revert = Signal()

    def keyPressEvent(self, event: QKeyEvent) -> None:  # noqa: N802 - Qt's name
        if event.key() in (Qt.Key.Key_Return, Qt.Key.Key_Enter):
            self.commit.emit()
            return
        if event.key() == Qt.Key.Key_Escape:
            self.revert.emit()
            return
        super().keyPressEvent(event)

    def focusOutEvent(self, event: QFocusEvent) -> None:  # noqa: N802 - Qt's name
        super().focusOutEvent(event)
        if event.reason() not in (Qt.FocusReason.PopupFocusReason, Qt.FocusReason.ActiveWindowFocusReason):
            self.commit.emit()


class CommitTextEdit(QPlainTextEdit):
    """Multi-line notes: commits when focus leaves (Ctrl+Return too)."""

    commit = Signal()

    def keyPressEvent(self, event: QKeyEvent) -> None:  # noqa: N802
        if event.key() in (Qt.Key.Key_Return, Qt.Key.Key_Enter) and event.modifiers() & Qt.KeyboardModifier.ControlModifier:
            self.commit.emit()
            return
        super().keyPressEvent(event)

    def focusOutEvent(self, event: QFocusEvent) -> None:  # noqa: N802
        super().focusOutEvent(event)
        self.commit.emit()

    def set_text_quietly(self, text: str) -> None:
        if self.toPlainText() != text:
            with QSignalBlocker(self):
                self.setPlainText(text)


def decimal_mark() -> str:
    """The decimal mark of the user's locale: "." or "," (anything else is read as ".")."""
    mark = QLocale().decimalPoint()
    return mark if mark in (".", ",") else "."


def _parse_number(text: str, suffixes: tuple[str, ...], what: str, decimal: str = ".") -> float:
    """A plain number, optionally followed by one of ``suffixes`` (e.g. kg, °); UnitError in words."""
    raw = text.strip()
    cleaned = raw.replace("\u2212", "-")
    for s in sorted(suffixes, key=len, reverse=True):
        if s and cleaned.lower().endswith(s.lower()):
            cleaned = cleaned[: -len(s)].strip()
            break
    try:
        return units.read_plain_number(cleaned, decimal, what)
    except UnitError as exc:
        raise UnitError(exc.message.replace(repr(cleaned), repr(raw))) from None


class QuantityField(QWidget):
    """One typed value: ``kind`` is "force", "length", "number", "integer" or "text".

    ``unit`` is a callable giving the current display unit (forces and lengths).
    ``minimum`` with ``strict`` bounds the value (strict: must be more than it);
    ``optional`` fields may be cleared (commits None).  ``what`` names the
    quantity in messages ("capacity", "slack").
    """

    committed = Signal(object)

    def __init__(
        self,
        what: str,
        kind: str = "number",
        *,
        unit: Callable[[], str] | None = None,
        minimum: float | None = None,
        strict: bool = False,
        maximum: float | None = None,
        optional: bool = False,
        suffixes: tuple[str, ...] = (),
        placeholder: str = "",
        limit: tuple[str, str] | None = None,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.what = what
        self.kind = kind
        self.unit = unit or (lambda: "")
        self.minimum = minimum
        self.strict = strict
        self.maximum = maximum
        self.optional = optional
        self.suffixes = suffixes
        #: (object, field) of the rig format whose limits this field keeps (solver.limits)
        self.limit = limit
        self.edit = _CommitLineEdit(self)
        self.edit.setObjectName(f"field:{what}")
        self.edit.setPlaceholderText(placeholder or ("not set" if optional else ""))
        self.error = plain_label(parent=self)
        self.error.setStyleSheet(ERROR_STYLE)
        self.error.setWordWrap(True)
        self.error.setVisible(False)
        self.error.setObjectName(f"error:{what}")
        self.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Maximum)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(1)
        lay.addWidget(self.edit)
        lay.addWidget(self.error)
        self._shown_text = ""
        self._value: object = None
        self.edit.commit.connect(self._on_commit)
        self.edit.revert.connect(self.revert)

    # --- model -> widget ------------------------------------------------------------
    def format(self, value) -> str:
        if value is None:
            return ""
        mark = decimal_mark()
        if self.kind == "force":  # the precision the plan, dock and reports show (an untouched field keeps the exact value)
            return units.format_force(float(value), self.unit()).replace(".", mark)
        if self.kind == "length":
            return units.format_length(float(value), self.unit()).replace(".", mark)
        if self.kind == "integer":
            return str(int(value))
        if self.kind == "number":
            return f"{float(value):g}".replace(".", mark)
        return str(value)

    def set_value(self, value) -> None:
        """Show the model's value (no signal); clears any pending error unless the user is mid-edit."""
        self._value = value
        text = self.format(value)
        if self.edit.hasFocus() and (self.has_error or self.edit.text() != self._shown_text):
            return  # keep what the user is typing (or their rejected text) in front of them
        with QSignalBlocker(self.edit):
            self.edit.setText(text)
            self.edit.setCursorPosition(0)  # show the start of long text
        self._shown_text = text
        self.clear_error()

    def value(self):
        return self._value

    def is_untouched(self) -> bool:
        """True while the field holds a model value and shows exactly its text in the current unit.

        Then :meth:`value` is the exact stored value to use, not a re-read of its rounded display text.
        """
        return self._value is not None and self.edit.text() == self.format(self._value)

    def revert(self) -> None:
        self.clear_error()
        with QSignalBlocker(self.edit):
            self.edit.setText(self._shown_text)

    # --- widget -> model ------------------------------------------------------------
    def parse(self, text: str):
        """The SI value typed in ``text``; raises UnitError naming the problem."""
        raw = text.strip()
        if not raw:
            if self.optional:
                return None
            raise UnitError(f"{self.what} cannot be empty")
        if self.kind == "text":
            if self.limit is not None:
                problem = limits.text_problem(*self.limit, raw)
                if problem:
                    raise UnitError(f"{self.what} {problem}")
            return raw
        mark = decimal_mark()
        if self.kind == "force":
            value = units.parse_force(raw, self.unit(), decimal=mark)
        elif self.kind == "length":
            value = units.parse_length(raw, self.unit(), decimal=mark)
        else:
            value = _parse_number(raw, self.suffixes, self.what, mark)
            if self.kind == "integer":
                if value != int(value):
                    raise UnitError(f"{self.what} must be a whole number (you typed {raw!r})")
                value = int(value)
        self._check_bounds(value, raw)
        return value

    def _check_bounds(self, value: float, raw: str) -> None:
        lo = self.minimum
        if lo is not None:
            if self.strict and not value > lo:
                bound = "zero" if lo == 0 else self._fmt_bound(lo)
                raise UnitError(f"{self.what} must be more than {bound} (you typed {raw!r})")
            if not self.strict and value < lo:
                bound = "zero" if lo == 0 else self._fmt_bound(lo)
                raise UnitError(f"{self.what} cannot be less than {bound} (you typed {raw!r})")
        if self.maximum is not None and value > self.maximum:
            raise UnitError(f"{self.what} cannot be more than {self._fmt_bound(self.maximum)} (you typed {raw!r})")
        if self.limit is not None and self.kind != "text":
            span = limits.number_range(*self.limit)
            if value > span.high:
                raise UnitError(f"{self.what} cannot be more than {self._fmt_bound(span.high)}, the most a rig "
                                f"file holds (you typed {raw!r})")
            if value < span.low or (span.low_open and value == span.low):
                raise UnitError(f"{self.what} cannot be less than {self._fmt_bound(span.low)}, the least a rig "
                                f"file holds (you typed {raw!r})")

    def _fmt_bound(self, v: float) -> str:
        if self.kind == "force":
            return units.format_force(v, self.unit())
        if self.kind == "length":
            return units.format_length(v, self.unit())
        return f"{v:g}"

    def _on_commit(self) -> None:
        text = self.edit.text()
        if text == self._shown_text and not self.error.isVisible():
            return
        try:
            value = self.parse(text)
        except UnitError as exc:
            self.show_error(exc.message)
            return
        self.clear_error()
        if value == self._value or (value is not None and self._value is not None and self.kind in ("force", "length", "number") and math.isclose(float(value), float(self._value), rel_tol=1e-12, abs_tol=0.0)):
            self.revert()
            return
        self._shown_text = text
        self.committed.emit(value)

    def show_error(self, message: str) -> None:
        if not message.lower().startswith(self.what.lower()):
            message = f"{self.what}: {message}"  # name the field the problem is in
        self.error.setText(message[:1].upper() + message[1:])
        self.error.setVisible(True)
        QTimer.singleShot(0, self._refocus)

    def _refocus(self) -> None:
        if self.error.isVisible() and self.isVisible():
            self.edit.setFocus(Qt.FocusReason.OtherFocusReason)

    def clear_error(self) -> None:
        self.error.setVisible(False)
        self.error.setText("")

    @property
    def has_error(self) -> bool:
        return not self.error.isHidden()


def _edit_number(v: float, mark: str = ".") -> str:
    """A number for an editable field: five significant digits, no exponent, no trailing zeros, no grouping."""
    if abs(v) >= 1e5:
        return f"{v:.0f}"
    text = f"{v:.5g}"
    if "e" in text:  # tiny values
        text = f"{v:.6f}".rstrip("0").rstrip(".")
    return text.replace(".", mark)
