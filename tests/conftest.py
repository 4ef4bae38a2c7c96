"""Test set-up: Qt runs offscreen, before any QApplication exists (shared/design/qt-headless.md).

Autosaves and settings go to a throw-away folder, never the user's real data folder.
"""

import os
import pathlib
import tempfile

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("QT_API", "pyside6")
os.environ.setdefault("ROPEWRIGHT_DATA_DIR", tempfile.mkdtemp(prefix="ropewright-test-data-"))

# In CI every property test draws the same examples (derandomize), so a submission lands or
# fails on its own merits, never on the luck of the draw; locally they stay random to find bugs.
if os.environ.get("CI"):
    from hypothesis import settings

    settings.register_profile("ci", derandomize=True, database=None, print_blob=True)
    settings.load_profile("ci")

ROOT = pathlib.Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "samples"
