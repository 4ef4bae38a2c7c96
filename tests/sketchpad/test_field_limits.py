"""Fields read numbers by the user's locale and keep the rig file's own limits, with the message inline.

"1,2345" typed by a decimal-comma user was read as 12,345 kN and "1,000" as 1,000 kN: forces a
thousand times too large, without a word.  Values such as 1e308 kN (infinity once in newtons), a
coordinate beyond the file's 100 km, or a team of 309 digits made the rig unsaveable or broke the
checks.  The limits are the file format's (solver.limits), so a value a field takes always saves.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import QLocale

from solver.rigfile import dumps_rig, loads_rig
from solver.units import format_force
from tests.sketchpad.test_properties import dock, type_into  # noqa: F401 - the fixture is used by name


@pytest.fixture
def locale():
    """Set the application's default locale for one test (QLocale() follows it), then put it back."""
    before = QLocale()

    def use(language, country):
        QLocale.setDefault(QLocale(language, country))

    yield use
    QLocale.setDefault(before)


@pytest.mark.parametrize("typed, expected_N", [("1,2345", 1234.5), ("2,5 kN", 2500.0), ("1.250,5 N", 1250.5)])
def test_a_decimal_comma_user_gets_the_force_they_typed(dock, qtbot, locale, typed, expected_N):
    locale(QLocale.German, QLocale.Germany)
    panel = dock.panel
    panel.show_subject("point", "A1")
    type_into(qtbot, panel.point_page.capacity, typed)
    assert not panel.point_page.capacity.has_error, panel.point_page.capacity.error.text()
    assert panel.document.rig.point("A1").capacity_N == pytest.approx(expected_N, rel=1e-12)
    # shown at the plan's precision (solver.units.format_force) with the user's decimal comma
    assert panel.point_page.capacity.edit.text() == format_force(expected_N, "kN").replace(".", ",")


@pytest.mark.parametrize("language, country, typed, words", [
    (QLocale.German, QLocale.Germany, "1.000", "ambiguous"),
    (QLocale.English, QLocale.UnitedStates, "1,000", "ambiguous"),
    (QLocale.English, QLocale.UnitedStates, "1,2345", "point for decimals"),
    (QLocale.German, QLocale.Germany, "2.5", "comma for decimals"),
])
def test_what_two_habits_read_a_thousand_apart_is_refused_inline(dock, qtbot, locale, language, country, typed,
                                                                  words):
    locale(language, country)
    panel = dock.panel
    panel.show_subject("point", "A1")
    before = panel.document.rig
    field = panel.point_page.capacity
    type_into(qtbot, field, typed)
    assert field.has_error and words in field.error.text(), field.error.text()
    assert panel.document.rig == before


def test_a_point_locale_reads_grouped_thousands_and_decimals(dock, qtbot, locale):
    locale(QLocale.English, QLocale.UnitedStates)
    panel = dock.panel
    panel.show_subject("point", "A1")
    type_into(qtbot, panel.point_page.capacity, "1,250.5 N")
    assert panel.document.rig.point("A1").capacity_N == 1250.5


@pytest.mark.parametrize("page, field, typed, words", [
    ("point", "capacity", "1e308", "cannot be more than"),  # 1e308 kN is infinity in newtons
    ("point", "required", "1e308 kN", "cannot be more than"),
    ("point", "x", "101000", "cannot be more than"),  # beyond the file's 100 km
    ("point", "team", "1" + "0" * 308, "cannot be more than 1000"),  # 309 digits, still a finite float
    ("point", "team", "9" * 309, "not a finite number"),
    ("point", "label", "x" * 201, "at most 200"),
])
def test_fields_refuse_what_the_file_could_not_hold(dock, qtbot, locale, page, field, typed, words):
    locale(QLocale.English, QLocale.UnitedStates)
    panel = dock.panel
    panel.show_subject(page, "A1" if field != "team" else "H1")
    before = panel.document.rig
    widget = getattr(panel.point_page, field)
    type_into(qtbot, widget, typed)
    assert widget.has_error and words in widget.error.text(), widget.error.text()
    assert panel.document.rig == before
    loads_rig(dumps_rig(panel.document.rig))


def test_notes_longer_than_the_file_holds_are_refused_inline(dock, qtbot):
    panel = dock.panel
    panel.show_subject(None)
    page = panel.rig_page
    before = panel.document.rig
    page.notes.setPlainText("n" * 20_001)
    page.notes.commit.emit()
    assert page.notes_error.isVisible() and "20,001 characters" in page.notes_error.text()
    assert panel.document.rig == before
    page.notes.setPlainText("fits")
    page.notes.commit.emit()
    assert not page.notes_error.isVisible() and panel.document.rig.notes == "fits"
