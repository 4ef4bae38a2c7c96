"""The key put together from a cached frame and cached line pixmaps looks as the key painted whole."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QImage, QPainter
from PySide6.QtWidgets import QWidget

from sketchpad.overlay import Legend
from tests.sketchpad.test_overlay_incremental import ROUNDING, pixels

LINES = ["MA 2.71 actual / ideal when still", "Haul team: 0.60 kN", "to Raft: 1.63 kN of 1.50 kN needed",
         "safety factor 10:1 · haul"]


def whole(legend: Legend, dpr: float) -> np.ndarray:
    """The key painted in one pass (as exports paint it) at device pixel ratio ``dpr``."""
    image = QImage(round(legend.width() * dpr), round(legend.height() * dpr), QImage.Format_ARGB32_Premultiplied)
    image.setDevicePixelRatio(dpr)
    image.fill(Qt.transparent)
    p = QPainter(image)
    p.translate(-legend.x(), -legend.y())
    legend.paint_on(p, None)  # as vectors, at its place
    p.end()
    return pixels(image)


def blitted(legend: Legend, dpr: float) -> np.ndarray:
    """The key as the view lays it down on screen: the assembled pixmap, at the widget's place."""
    image = QImage(round((legend.x() + legend.width()) * dpr), round((legend.y() + legend.height()) * dpr),
                   QImage.Format_ARGB32_Premultiplied)
    image.setDevicePixelRatio(dpr)
    image.fill(Qt.transparent)
    p = QPainter(image)
    legend.paint_on(p, dpr)
    p.end()
    x, y = round(legend.x() * dpr), round(legend.y() * dpr)
    return pixels(image)[y:, x:]


@pytest.fixture
def legend(qtbot):
    host = QWidget()
    host.resize(800, 600)
    qtbot.addWidget(host)
    key = Legend(host)
    key.set_shown(True)
    yield key  # the host (parent of the key) lives as long as the test
    del host


@pytest.mark.parametrize("dpr", [1.0, 2.0])
@pytest.mark.parametrize("zones", [True, False])
def test_the_assembled_key_equals_the_key_painted_whole(legend, dpr, zones):
    legend.set_content(LINES, show_zones=zones, grey=False)
    want, got = whole(legend, dpr), blitted(legend, dpr)
    assert got.shape == want.shape
    ink = want[:, :, 3] > 0
    assert ink.sum() > 1000  # the key has a box and text to compare
    assert np.abs(got - want).max() <= ROUNDING  # compositing the lines over the box: 8-bit rounding only


def test_a_changed_line_renders_only_that_line_and_the_key_shows_the_new_text(legend):
    legend.set_content(LINES, show_zones=True, grey=False)
    blitted(legend, 1.0)
    before = dict(legend.render_counts)
    changed = ["MA 2.74 actual / ideal when still"] + LINES[1:]
    legend.set_content(changed, show_zones=True, grey=False)
    got = blitted(legend, 1.0)
    # same size, zones and colours: the frame is not drawn again, and of the lines only the changed one
    assert legend.render_counts == {"frames": before["frames"], "lines": before["lines"] + 1}
    assert np.abs(got - whole(legend, 1.0)).max() <= ROUNDING  # and it shows the new number
    legend.set_content(changed, show_zones=True, grey=True)  # greyed (a failed solve): a new frame
    got = blitted(legend, 1.0)
    assert legend.render_counts["frames"] == before["frames"] + 1
    assert np.abs(got - whole(legend, 1.0)).max() <= ROUNDING
