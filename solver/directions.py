"""Directions for people: one convention on every surface (plan labels, dock, CLI, JSON, reports).

Inside, a direction is the rig file's maths angle (``direction_deg``: degrees
counter-clockwise from +x, east in plan, right in elevation; rig-format.md).  A
person reads a plan direction as a **bearing**: degrees clockwise from north,
``000``-``359``, with its 16-point compass word (``103° (ESE)``).  An elevation
direction reads as plain words and an angle above or below horizontal
("down and left, 35° below horizontal").  A force of (practically) nothing has no
direction and reads "—".  Pure functions, no Qt.
"""

from __future__ import annotations

import math

#: The 16 compass points clockwise from north, each the centre of a 22.5° sector.
COMPASS_16: tuple[str, ...] = ("N", "NNE", "NE", "ENE", "E", "ESE", "SE", "SSE",
                               "S", "SSW", "SW", "WSW", "W", "WNW", "NW", "NNW")
#: Force (N) at or below which a resultant has no direction worth showing.
NO_DIRECTION_N = 1e-6
#: What a table says once about its plan directions.
BEARING_NOTE = "bearing from north"
NO_DIRECTION = "—"


def bearing_deg(direction_deg: float) -> float:
    """Bearing clockwise from north in [0, 360) of a plan direction given counter-clockwise from east."""
    return (90.0 - float(direction_deg)) % 360.0


def direction_from_bearing(bearing: float) -> float:
    """The rig file's angle (counter-clockwise from east, [0, 360)) of a bearing clockwise from north."""
    return (90.0 - float(bearing)) % 360.0


def bearing_of(dx: float, dy: float) -> float:
    """Bearing clockwise from north in [0, 360) of a site vector (dx east, dy north)."""
    return math.degrees(math.atan2(dx, dy)) % 360.0


def shown_bearing(bearing: float) -> int:
    """The whole-degree bearing a person reads, 0..359 (359.6 reads 000, never 360)."""
    return int(round(float(bearing))) % 360


def compass_point(bearing: float) -> str:
    """The 16-point compass word of a bearing: each word owns ±11.25° about its centre (N owns 348.75..11.25)."""
    return COMPASS_16[int(((float(bearing) % 360.0) + 11.25) // 22.5) % 16]


def bearing_text(bearing: float) -> str:
    """A bearing as people read it: ``"103° (ESE)"`` (word chosen for the degree shown)."""
    b = shown_bearing(bearing)
    return f"{b:03d}° ({compass_point(b)})"


def elevation_words(direction_deg: float) -> str:
    """A side-view direction in words: ``"down and left, 35° below horizontal"``, ``"level, to the right"``."""
    rad = math.radians(float(direction_deg))
    across, up = math.cos(rad), math.sin(rad)
    side = "right" if across >= 0 else "left"
    elev = math.degrees(math.atan2(up, abs(across)))  # -90..90, above horizontal positive
    if abs(elev) < 0.5:
        return f"level, to the {side}"
    if abs(elev) > 89.5:
        return "straight up" if elev > 0 else "straight down"
    return f"{'up' if elev > 0 else 'down'} and {side}, {abs(elev):.0f}° {'above' if elev > 0 else 'below'} horizontal"


def direction_text(direction_deg: float, view: str = "plan", force_N: float | None = None) -> str:
    """The one way a direction is written for people: a bearing in plan, words in elevation, "—" for no force."""
    if force_N is not None and not (math.isfinite(force_N) and abs(force_N) > NO_DIRECTION_N):
        return NO_DIRECTION
    if not math.isfinite(direction_deg):
        return NO_DIRECTION
    if view == "elevation":
        return elevation_words(direction_deg)
    return bearing_text(bearing_deg(direction_deg))


def bearing_or_none(direction_deg: float, view: str, force_N: float | None = None) -> float | None:
    """``bearing_deg`` for the result JSON: the plan bearing, or None in elevation or for no force."""
    if view != "plan" or not math.isfinite(direction_deg):
        return None
    if force_N is not None and not (math.isfinite(force_N) and abs(force_N) > NO_DIRECTION_N):
        return None
    return bearing_deg(direction_deg)


def direction_heading(view: str, what: str = "direction") -> str:
    """A table column heading that says the convention once: ``"direction (bearing from north)"`` in plan."""
    return f"{what} ({BEARING_NOTE})" if view == "plan" else f"{what} (side view)"
