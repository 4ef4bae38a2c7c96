"""Text from a rig file is shown as plain text everywhere: a hostile label can never make the app open a file.

Qt shows a string that looks like HTML as rich text unless told otherwise, and rich text loads
``<img src=...>`` from disk: a label ``<img src="/any/file">`` would read any local file (and
``/dev/zero`` until memory runs out).  These tests give every id, label, title and note such a
tag pointing at a picture in a folder outside the rig's, then drive the window the way a user
would (open, select each thing, hover for tool tips, the pass chooser, the docks, the legend,
exports and the report) and ask the kernel (inotify) whether anything opened that picture.
"""

from __future__ import annotations

import json

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtGui import QColor, QImage, QTextDocument
from PySide6.QtWidgets import QApplication, QLabel, QToolTip, QWidget

from solver.rigfile import load_rig
from tests.conftest import SAMPLES
from tests.sketchpad.opened_files import OpenWatch


#: a tag short enough for an id or a file name: the tests run in the outside folder, so it resolves there
SHORT_TAG = '<img src="secret.png">'


@pytest.fixture
def outside(tmp_path, monkeypatch):
    """A folder outside the rig's with a picture in it, watched for opens (checked to work first).

    The tests run in that folder, so a relative ``<img src="secret.png">`` resolves to the picture.
    """
    folder = tmp_path / "outside"
    folder.mkdir()
    monkeypatch.chdir(folder)
    image = QImage(8, 8, QImage.Format_RGB32)
    image.fill(QColor("red"))
    image.save(str(folder / "secret.png"))
    image.save(str(folder / "canary.png"))
    watch = OpenWatch(folder)
    assert not QImage(str(folder / "canary.png")).isNull()
    assert "canary.png" in watch.opened(), "the open watch does not see opens: the test would prove nothing"
    yield folder, watch
    watch.close()


def hostile_rig(tmp_path, secret) -> tuple:
    """The raft sample with every id, label, title and note carrying an <img> tag to ``secret``."""
    tag = f'<img src="{secret}">'
    d = json.loads((SAMPLES / "raft-3to1-redirect.rig.json").read_text(encoding="utf-8"))
    d["title"] = tag + "<b>title</b>"
    d["notes"] = tag + " notes"
    renamed = {p["id"]: f"<i>{p['id']}</i>{SHORT_TAG}" for p in d["points"]}
    for p in d["points"]:
        p["id"] = renamed[p["id"]]
        p["label"] = tag + p.get("label", "")
    for r in d["ropes"]:
        r["id"] = f"<u>{r['id']}</u>"
        r["label"] = tag + r.get("label", "")
        for ps in r["path"]:
            ps["at"] = renamed[ps["at"]]
    for f in d.get("forces", []):
        f["at"] = renamed[f["at"]]
        f["label"] = tag
    for f in d.get("site", {}).get("features", []):
        f["label"] = tag + f.get("label", "")
    folder = tmp_path / "rig"
    folder.mkdir()
    path = folder / (SHORT_TAG + ".rig.json")
    path.write_text(json.dumps(d), encoding="utf-8")
    return path, tag


def _show_every_tooltip(window) -> int:
    """Show every widget's and scene item's tool tip, as hovering would; the number shown."""
    shown = 0
    for w in window.findChildren(QWidget):
        if w.toolTip():
            QToolTip.showText(QPoint(40, 40), w.toolTip(), w)
            shown += 1
    for item in window.canvas.items():
        if item.toolTip():
            QToolTip.showText(QPoint(40, 40), item.toolTip(), window.view)
            shown += 1
    QApplication.processEvents()
    QToolTip.hideText()
    return shown


def _shown(label: QLabel) -> str:
    """What a label shows a reader: its text, or its rich text's characters."""
    if label.textFormat() == Qt.PlainText:
        return label.text()
    doc = QTextDocument()
    doc.setHtml(label.text())
    return doc.toPlainText()


def _rich_labels_with(window, text: str) -> list[str]:
    return [lab.text() for lab in window.findChildren(QLabel)
            if text in lab.text() and lab.textFormat() != Qt.PlainText]


@pytest.mark.qt_log_ignore("This plugin does not support raise")  # offscreen tool tips
def test_hostile_labels_open_nothing_outside_the_rig_folder(main_window, outside, tmp_path, qtbot):
    folder, watch = outside
    path, tag = hostile_rig(tmp_path, folder / "secret.png")
    window = main_window
    assert window.files.open(path)
    window.resize(1400, 900)
    rig = window.document.rig
    keys = ([("point", p.id) for p in rig.points] + [("rope", r.id) for r in rig.ropes]
            + [("feature", f.id) for f in rig.site.features])
    rich = []
    for key in keys:
        window.canvas.select_keys([key])
        QApplication.processEvents()
        window.grab()
        rich += _rich_labels_with(window, "<img")
    window.canvas.select_keys([])
    QApplication.processEvents()
    window.grab()
    assert _show_every_tooltip(window) > 5
    assert watch.opened() == ["canary.png"], "a label made the app open a file outside the rig's folder"
    assert not rich + _rich_labels_with(window, "<img")


def test_the_pass_chooser_shows_a_hostile_point_name_as_text(qtbot, outside, tmp_path):
    from sketchpad.pass_chooser import PassMenu, PassRequest

    folder, watch = outside
    tag = f'<img src="{folder / "secret.png"}">'
    menu = PassMenu(PassRequest("A1", tag, "pulley", "pulley-large", "edge-rock",
                                (("pulley-large", tag),), (("edge-rock", tag),)))
    qtbot.addWidget(menu)
    menu.grab()
    title = next(lab for lab in menu.findChildren(QLabel) if "Rope at" in lab.text())
    assert tag not in title.text() or title.textFormat() == Qt.PlainText
    assert tag in _shown(title)  # the name is still there to read, as text
    assert watch.opened() == ["canary.png"]


def test_exports_and_report_of_a_hostile_rig_open_nothing_outside(qapp, outside, tmp_path):
    from sketchpad.export import export_drawing
    from sketchpad.report import write_report

    folder, watch = outside
    path, _tag = hostile_rig(tmp_path, folder / "secret.png")
    rig = load_rig(path)
    for name in ("d.png", "d.svg", "d.pdf"):
        export_drawing(rig, tmp_path / name, rig_dir=path.parent)
    write_report(rig, tmp_path / "r.pdf", rig_dir=path.parent)
    assert watch.opened() == ["canary.png"]


def test_message_boxes_show_file_names_and_errors_as_text(main_window, outside, tmp_path, monkeypatch):
    """A refused file's name and the error (which quotes the file) are put in a box as plain text."""
    from sketchpad import files

    folder, watch = outside
    bad = tmp_path / f"{SHORT_TAG}.rig.json"
    bad.write_text('{"format": "ropewright-rig", "version": 1, "points": [{"id": "%s"}], "ropes": []}'
                   % SHORT_TAG.replace('"', '\\"'))
    boxes = []
    monkeypatch.setattr(files, "_headless", lambda: False)
    monkeypatch.setattr(files.QMessageBox, "exec", lambda box: boxes.append(box) or 0)
    assert not main_window.files.open(bad)
    assert boxes
    for box in boxes:
        box.grab()
        labels = [lab for lab in box.findChildren(QLabel) if "<img" in lab.text()]
        assert labels and all(lab.textFormat() == Qt.PlainText for lab in labels)
    assert watch.opened() == ["canary.png"]
