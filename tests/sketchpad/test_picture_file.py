"""A site picture is read only from a regular file of a sane size, without ever blocking.

A FIFO named as ``site.image.file`` used to block ``render`` and the window for ever (opening a
FIFO for reading waits for a writer); a device such as /dev/zero reads without end.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import threading

import pytest
from PySide6.QtGui import QColor, QImage

from sketchpad import picture_file
from sketchpad.background import read_qimage
from solver.model import SiteImage
from tests.conftest import ROOT, SAMPLES


def _rig_naming(tmp_path, name: str):
    d = json.loads((SAMPLES / "vector-pull.rig.json").read_text(encoding="utf-8"))
    d.setdefault("site", {})["image"] = {"file": name, "origin": [0, 0], "metres_per_pixel": 0.05}
    path = tmp_path / "site.rig.json"
    path.write_text(json.dumps(d), encoding="utf-8")
    return path


def test_render_of_a_rig_whose_picture_is_a_fifo_finishes_and_says_why(tmp_path):
    os.mkfifo(tmp_path / "plan.png")
    rig = _rig_naming(tmp_path, "plan.png")
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen")
    try:
        run = subprocess.run([sys.executable, "-m", "solver.cli", "render", str(rig), "-o", str(tmp_path / "o.png")],
                             env=env, capture_output=True, text=True, timeout=60)
    except subprocess.TimeoutExpired:
        pytest.fail("render blocked on a FIFO named as the site picture")
    assert run.returncode == 0, run.stderr
    assert (tmp_path / "o.png").stat().st_size > 0
    assert "not a regular file" in run.stderr


@pytest.mark.parametrize("make", ["fifo", "folder", "device", "null", "link-to-fifo", "socket"])
def test_only_regular_files_are_read_as_pictures(tmp_path, make):
    target = tmp_path / "plan.png"
    if make in ("fifo", "link-to-fifo"):
        os.mkfifo(tmp_path / "pipe")
        if make == "fifo":
            target = tmp_path / "pipe"
        else:
            target.symlink_to(tmp_path / "pipe")
    elif make == "folder":
        target.mkdir()
    elif make == "socket":
        import socket

        sock = socket.socket(socket.AF_UNIX)
        sock.bind(str(target))
    else:
        target = "/dev/zero" if make == "device" else "/dev/null"
    with pytest.raises(picture_file.PictureFileError) as info:
        picture_file.read_picture_bytes(target)
    assert "not a regular file" in info.value.message or "cannot be read" in info.value.message
    assert read_qimage(SiteImage(file=os.path.basename(target)), pathlib_parent(target)) is None


def pathlib_parent(target):
    import pathlib

    return pathlib.Path(target).parent


def test_a_picture_larger_than_the_cap_is_refused_in_words(tmp_path, monkeypatch):
    monkeypatch.setattr(picture_file, "MAX_PICTURE_BYTES", 1000)
    (tmp_path / "big.png").write_bytes(b"\0" * 1001)
    with pytest.raises(picture_file.PictureFileError) as info:
        picture_file.read_picture_bytes(tmp_path / "big.png")
    assert "MB" in info.value.message and "at most" in info.value.message


def test_a_regular_picture_still_reads(tmp_path):
    image = QImage(6, 4, QImage.Format_RGB32)
    image.fill(QColor("blue"))
    image.save(str(tmp_path / "plan.png"))
    q = read_qimage(SiteImage(file="plan.png"), tmp_path)
    assert q is not None and (q.width(), q.height()) == (6, 4)


def test_opening_a_pipe_as_a_rig_is_refused_in_words_without_blocking(qtbot, tmp_path):
    from PySide6.QtWidgets import QMainWindow

    from sketchpad.document import Document
    from sketchpad.files import FileController
    from tests.sketchpad.test_files import FakeDialogs

    os.mkfifo(tmp_path / "rig.rig.json")
    window = QMainWindow()
    qtbot.addWidget(window)
    dialogs = FakeDialogs()
    ctl = FileController(window, Document(parent=window), dialogs=dialogs, autosave_seconds=3600.0)
    unblock = threading.Timer(10.0, _free_a_blocked_reader, (tmp_path / "rig.rig.json",))
    unblock.start()  # should the read block after all, the test fails instead of hanging the suite
    try:
        assert not ctl.open(tmp_path / "rig.rig.json")
    finally:
        unblock.cancel()
    assert dialogs.asked[0][0] == "error" and "pipe" in dialogs.asked[0][3]


def _free_a_blocked_reader(fifo) -> None:
    try:
        os.close(os.open(fifo, os.O_WRONLY | os.O_NONBLOCK))  # a writer that goes at once: the reader sees EOF
    except OSError:
        pass  # no reader is waiting
