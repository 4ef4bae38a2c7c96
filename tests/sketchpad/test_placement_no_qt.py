"""The overlay's label placement is pure geometry: it imports and places labels with no Qt loaded.

Run in a fresh interpreter (as tests/solver/test_no_qt.py does), so that the PySide6 the test session
already imported cannot hide an import of Qt.
"""

from __future__ import annotations

from tests.solver.test_no_qt import _probe

_PLACE = r"""
from dataclasses import dataclass
from sketchpad.overlay.placement import place_labels

@dataclass
class Label:  # what the placer reads and sets (sketchpad.overlay.placement.Placeable)
    kind: str
    key: object
    lines: tuple
    priority: float
    base: tuple
    end: tuple | None = None
    prefer: tuple = (0.0, -1.0)
    placed: bool = False
    at: tuple = (0.0, 0.0)
    rect: tuple = (0.0, 0.0, 0.0, 0.0)
    leader: bool = False

labels = [Label("anchor", "A", ("A 2.0 kN",), 90.0, (0.0, 0.0)), Label("anchor", "B", ("B 1.0 kN",), 80.0, (0.1, 0.0))]
skipped = place_labels(labels, lambda xy: (100.0 * xy[0], 100.0 * xy[1]), lambda lab: (60.0, 14.0), markers=[(0.0, 0.0)])
a, b = labels
assert skipped == 0 and a.placed and b.placed, (skipped, labels)
ra = (100.0 * a.at[0] + a.rect[0], 100.0 * a.at[1] + a.rect[1], a.rect[2], a.rect[3])
rb = (100.0 * b.at[0] + b.rect[0], 100.0 * b.at[1] + b.rect[1], b.rect[2], b.rect[3])
assert not (ra[0] < rb[0] + rb[2] and rb[0] < ra[0] + ra[2] and ra[1] < rb[1] + rb[3] and rb[1] < ra[1] + ra[3])
"""


def test_the_placement_engine_imports_and_places_labels_without_qt():
    out = _probe(["sketchpad.overlay.placement"], [], prelude=_PLACE)
    assert out["qt"] == [], f"Qt modules loaded by the placement engine: {out['qt']}"


def test_the_probe_sees_qt_when_the_overlay_items_are_imported():
    # the check above could not fail if importing any of the overlay left Qt out
    out = _probe(["sketchpad.overlay.force_item"], [])
    assert "PySide6.QtGui" in out["qt"]
