"""Test set-up: Qt runs offscreen, before any QApplication exists (shared/design/qt-headless.md).

Autosaves and settings go to a throw-away folder, never the user's real data folder.
"""

import os
import pathlib
import tempfile

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("QT_API", "pyside6")
os.environ.setdefault("ROPEWRIGHT_DATA_DIR", tempfile.mkdtemp(prefix="ropewright-test-data-"))

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "samples"
