"""Showing text from a rig file or a field as text, never as Qt rich text.

Qt guesses that a string starting like HTML is rich text (``Qt::AutoText``), and rich text
loads ``<img src=...>`` from disk: a label such as ``<img src="/some/file">`` would make the
app read any local file.  Every label, tool tip and message box that can show a rig's ids,
labels, titles, notes, file names or error messages (which quote them) goes through here:
labels are ``Qt.PlainText``, and where bold is wanted the rig's part is escaped.
"""

from __future__ import annotations

import html

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLabel, QMessageBox, QWidget


def plain_label(text: str = "", parent: QWidget | None = None) -> QLabel:
    """A QLabel that always shows ``text`` (and whatever is set later) literally."""
    label = QLabel(parent)
    label.setTextFormat(Qt.PlainText)
    label.setText(text)
    return label


def rich_label(text: str = "", parent: QWidget | None = None) -> QLabel:
    """A QLabel for our own markup (build its text with :func:`bold` / :func:`escaped`); loads no resources."""
    label = QLabel(parent)
    label.setTextFormat(Qt.RichText)
    label.setText(text)
    return label


def escaped(text: str) -> str:
    """``text`` made safe inside our own rich text: shown literally, never read as markup."""
    return html.escape(str(text), quote=False)


def bold(text: str) -> str:
    """``text`` in bold, as rich text, with its own characters escaped."""
    return f"<b>{escaped(text)}</b>"


def tip(text: str) -> str:
    """A tool tip that shows ``text`` literally: Qt shows tool tips as rich text when they look like it."""
    text = str(text)
    if "<" not in text and "&" not in text:
        return text  # cannot look like markup: keep it as it is
    return "<p style='white-space:pre-wrap'>" + escaped(text) + "</p>"


def make_plain(widget: QWidget) -> QWidget:
    """Every QLabel inside ``widget`` (a message box's text, informative text, details) set to plain text."""
    for label in widget.findChildren(QLabel):
        label.setTextFormat(Qt.PlainText)
    return widget


def message_box(parent: QWidget | None, icon: QMessageBox.Icon, title: str, text: str, informative: str = "",
                buttons: QMessageBox.StandardButton = QMessageBox.StandardButton.Ok,
                default: QMessageBox.StandardButton | None = None) -> QMessageBox:
    """A QMessageBox whose texts are all plain text (not yet shown: call ``exec()``)."""
    box = QMessageBox(parent)
    box.setIcon(icon)
    box.setTextFormat(Qt.PlainText)
    box.setWindowTitle(title)
    box.setText(text)
    if informative:
        box.setInformativeText(informative)
    box.setStandardButtons(buttons)
    if default is not None:
        box.setDefaultButton(default)
    make_plain(box)
    return box


def warn(parent: QWidget | None, title: str, text: str, informative: str = "") -> None:
    """Show a warning with plain texts and wait for OK."""
    message_box(parent, QMessageBox.Icon.Warning, title, text, informative).exec()


def inform(parent: QWidget | None, title: str, text: str) -> None:
    """Show an information box with plain text and wait for OK."""
    message_box(parent, QMessageBox.Icon.Information, title, text).exec()
