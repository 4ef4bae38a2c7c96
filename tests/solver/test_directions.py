"""Bearings from north and side-view words: the one direction convention every surface writes.

Hand-worked values (geometry; the 16-point compass rose has points every 22.5°, each owning
±11.25° about its centre — common practice, e.g. any navigation primer; no source needed
beyond the arithmetic 360 / 16 = 22.5).  The rig file's ``direction_deg`` is counter-clockwise
from east (rig-format.md); a bearing is clockwise from north, so bearing = 90 − direction (mod 360).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings, strategies as st

from solver.directions import (
    COMPASS_16,
    bearing_deg,
    bearing_of,
    bearing_text,
    compass_point,
    direction_from_bearing,
    direction_heading,
    direction_text,
    elevation_words,
    shown_bearing,
)


@pytest.mark.parametrize(
    "dx, dy, bearing, word",
    [
        (1.0, 0.0, 90.0, "E"),  # east
        (0.0, 1.0, 0.0, "N"),  # north
        (0.0, -1.0, 180.0, "S"),  # south
        (-1.0, 0.0, 270.0, "W"),  # west
        (-1.0, -1.0, 225.0, "SW"),  # south-west: equal parts south and west
        (1.0, 1.0, 45.0, "NE"),
        # 103° (ESE): tan(13°) = 0.2309 south for each unit east -> atan2(1, -0.2309) = 103.0°
        (1.0, -math.tan(math.radians(13.0)), 103.0, "ESE"),
    ],
)
def test_bearing_of_known_vectors_worked_by_hand(dx, dy, bearing, word):
    assert bearing_of(dx, dy) == pytest.approx(bearing, abs=1e-9)
    # the same vector as the file's angle (atan2(dy, dx), counter-clockwise from east)
    direction = math.degrees(math.atan2(dy, dx))
    assert bearing_deg(direction) == pytest.approx(bearing, abs=1e-9)
    assert direction_text(direction, "plan", 1.0) == f"{round(bearing) % 360:03d}° ({word})"


def test_the_forces_dock_bug_reads_right_now():
    # The case: a maths angle of 347° (from east, anticlockwise) is bearing 90 - 347 + 360 = 103°,
    # ESE; the old dock printed "347° (ESE)", a number from one convention and a word from the other.
    assert direction_text(347.0, "plan", 1.0) == "103° (ESE)"


@pytest.mark.parametrize(
    "bearing, word",
    [
        (0.0, "N"), (11.24, "N"), (11.25, "NNE"), (33.74, "NNE"), (33.75, "NE"),
        (348.74, "NNW"), (348.75, "N"), (359.99, "N"), (180.0, "S"), (191.25, "SSW"), (258.75, "W"),
    ],
)
def test_sixteen_point_boundaries_at_odd_multiples_of_11_25(bearing, word):
    # sector k covers [22.5 k - 11.25, 22.5 k + 11.25): the boundary belongs to the next point clockwise
    assert compass_point(bearing) == word


def test_every_compass_centre_names_itself():
    assert [compass_point(22.5 * k) for k in range(16)] == list(COMPASS_16)


def test_a_bearing_is_shown_000_to_359_never_360():
    assert shown_bearing(359.6) == 0 and bearing_text(359.6) == "000° (N)"
    assert bearing_text(5.0) == "005° (N)"
    # the word belongs to the degree shown: 11.4 reads 011°, which is N (below 11.25 after rounding)
    assert bearing_text(11.4) == "011° (N)" and bearing_text(11.6) == "012° (NNE)"


@given(st.floats(min_value=-1e4, max_value=1e4, allow_nan=False))
@settings(max_examples=200, deadline=None)
def test_bearing_and_file_angle_convert_both_ways(direction):
    b = bearing_deg(direction)
    assert 0.0 <= b < 360.0
    back = direction_from_bearing(b)
    assert math.isclose(math.cos(math.radians(back)), math.cos(math.radians(direction)), abs_tol=1e-9)
    assert math.isclose(math.sin(math.radians(back)), math.sin(math.radians(direction)), abs_tol=1e-9)


def test_a_zero_force_has_no_direction():
    assert direction_text(0.0, "plan", 0.0) == "—"
    assert direction_text(123.0, "elevation", 0.0) == "—"


@pytest.mark.parametrize(
    "direction, words",
    [
        (0.0, "level, to the right"),
        (180.0, "level, to the left"),
        (90.0, "straight up"),
        (270.0, "straight down"),
        (215.0, "down and left, 35° below horizontal"),  # 180 + 35: left, 35° under the horizon
        (-30.0, "down and right, 30° below horizontal"),
        (150.0, "up and left, 30° above horizontal"),
        (60.0, "up and right, 60° above horizontal"),
    ],
)
def test_side_view_directions_in_plain_words(direction, words):
    assert elevation_words(direction) == words
    assert direction_text(direction, "elevation", 5.0) == words


def test_each_table_names_the_convention_once():
    assert direction_heading("plan") == "direction (bearing from north)"
    assert direction_heading("elevation") == "direction (side view)"
