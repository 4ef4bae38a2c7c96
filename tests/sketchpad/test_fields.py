"""QuantityField.is_untouched: an unedited field hands back its exact stored value, not its rounded display."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt

from sketchpad.fields import QuantityField


@pytest.fixture
def force_field(qtbot):
    unit = {"u": "kN"}
    field = QuantityField("capacity", "force", unit=lambda: unit["u"])
    qtbot.addWidget(field)
    field.show()
    qtbot.waitExposed(field)
    field.set_value(1234.5678)  # demo value with more digits than the field shows
    return field, unit


def test_a_field_showing_its_stored_value_is_untouched_and_its_text_is_rounded(force_field):
    field, _unit = force_field
    # the precision the plan and the dock show for a force (solver.units.format_force): 1.2345678 kN -> 1.23 kN
    assert field.edit.text() == "1.23 kN"  # 1 kN = 1000 N, SI brochure
    assert field.is_untouched()
    assert field.value() == 1234.5678  # the exact stored value, kept while the text is not edited
    assert field.parse(field.edit.text()) == pytest.approx(1230.0, abs=1e-9)  # what re-reading the text would give


def test_typing_another_value_makes_the_field_touched(force_field, qtbot):
    field, _unit = force_field
    qtbot.mouseClick(field.edit, Qt.LeftButton)
    field.edit.selectAll()
    qtbot.keyClicks(field.edit, "1.3 kN")
    assert not field.is_untouched()


def test_a_field_with_no_value_or_shown_in_an_older_unit_is_not_untouched(force_field):
    field, unit = force_field
    unit["u"] = "lbf"  # display unit switched; the text still reads kN
    assert not field.is_untouched()
    unit["u"] = "kN"
    field.set_value(None)
    assert field.edit.text() == ""
    assert not field.is_untouched()
