"""Test set-up: Qt runs offscreen, before any QApplication exists (shared/design/qt-headless.md)."""

import os
import pathlib

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("QT_API", "pyside6")

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "samples"
