"""The report's "Moving water" table: currents, river sides, bowed ropes, bodies (rows: solver.water_text)."""

from __future__ import annotations

from solver.model import Rig
from solver.result import Result
from solver.water_text import WATER_HEADER, WATER_TITLE, water_note, water_rows


def water_table(rig: Rig, result: Result):
    """A report Table of what the current does to the rig, or None for a rig not in moving water."""
    from sketchpad.report import Table

    if result.water is None:
        return None
    rows = water_rows(rig, result, rig.display.length, rig.display.force)
    return Table(WATER_TITLE, WATER_HEADER, rows, (1.2, 3.0, 3.6, 2.2), note=water_note())
