"""The one set of limits a rig must keep: read by the file reader, the writer and the app's fields.

Every limit lives in the JSON Schema of the rig format (``schema/rig-v1.schema.json``):
text lengths (``maxLength``), number ranges (``minimum``/``maximum``) and list sizes
(``maxItems``).  This module reads them from there, so the reader (which validates
with that schema), the writer (which loads its own text back before replacing a file)
and the panels' fields (which refuse a typed value outside the range) can never
disagree: a file that opens can be saved, and a value a field accepts can be saved.

The sizes are what the solver handles in reasonable time on a small laptop (ours, measured;
not from a standard): at most 20,000 points, 40,000 ropes of 200 passes, 20,000 forces, 1,000
site features of 10,000 corners, 500 materials and 500 hardware specs; in all at most 100,000
passes, 100,000 feature corners and 1,000,000 values.  The window and the drawings (PNG, SVG,
PDF, report) draw at most :data:`DRAWN_POINTS` points and :data:`DRAWN_ROPES` ropes: a bigger
rig is refused there in words (``ropewright solve`` still reads it).  Ids are at most 100
characters, labels and titles 200, spec sources 2,000 and notes 20,000.  Forces are at most
1e12 N (a sanity bound that keeps every sum finite), coordinates within 100 km of the site origin.
Units are the file's: metres, newtons, kilograms.
"""

from __future__ import annotations

import json
import math
from functools import lru_cache
from importlib import resources
from typing import Any, NamedTuple

#: Largest rig file read or written, bytes, embedded background image included.
MAX_FILE_BYTES = 20 * 1024 * 1024
#: Most passes of all ropes together, and most corners of all site features together: totals a
#: schema cannot state (each list alone is capped there).
MAX_PASSES_IN_ALL = 100_000
MAX_CORNERS_IN_ALL = 100_000
#: Most numbers, texts and lists in one file, unknown fields included (each is a Python object to check).
MAX_VALUES = 1_000_000
#: Most points and ropes the window and the drawings draw (measured: a 1,000-rope rig with labels as long as
#: the format allows opens in about 3 s and makes a PDF in about 6 s on a 2-core laptop; both grow linearly).
DRAWN_POINTS = 2_000
DRAWN_ROPES = 1_000


@lru_cache(maxsize=1)
def schema() -> dict[str, Any]:
    """The rig format's JSON Schema as a dict (read once; treat it as read-only)."""
    text = resources.files("solver").joinpath("schema/rig-v1.schema.json").read_text(encoding="utf-8")
    return json.loads(text)


class Range(NamedTuple):
    """The values a number field may take: ``low < v`` when ``low_open`` else ``low <= v``; ``v <= high``."""

    low: float
    high: float
    low_open: bool = False
    whole: bool = False

    def problem(self, value: float) -> str | None:
        """Why ``value`` is outside the range (words), or None when it is fine."""
        if not math.isfinite(value):
            return "must be a finite number"
        if self.whole and value != int(value):
            return "must be a whole number"
        if self.low_open and not value > self.low:
            return f"must be more than {self.low:g}"
        if not self.low_open and value < self.low:
            return f"must be at least {self.low:g}"
        if value > self.high:
            return f"must be at most {self.high:g}"
        return None


_OBJECTS = {"point": "point", "rope": "rope", "force": "force", "material": "material", "hardware": "hardware",
            "feature": "feature", "image": "image", "settings": "settings", "rigged": "rigged", "pass": "pass"}


def _resolve(node: dict[str, Any]) -> dict[str, Any]:
    ref = node.get("$ref")
    if isinstance(ref, str) and ref.startswith("#/$defs/"):
        return _resolve(schema()["$defs"][ref[len("#/$defs/"):]])
    return node


def _field(obj: str, field: str) -> dict[str, Any]:
    if obj == "rig":
        node = schema()["properties"][field]
    else:
        node = schema()["$defs"][_OBJECTS[obj]]["properties"][field]
    return _resolve(node)


@lru_cache(maxsize=None)
def number_range(obj: str, field: str) -> Range:
    """The allowed range of number field ``field`` of a ``obj`` ("point", "force", ..., "rig")."""
    node = _field(obj, field)
    if "exclusiveMinimum" in node:
        low, low_open = float(node["exclusiveMinimum"]), True
    else:
        low, low_open = float(node.get("minimum", -math.inf)), False
    return Range(low, float(node.get("maximum", math.inf)), low_open, node.get("type") == "integer")


@lru_cache(maxsize=None)
def max_chars(obj: str, field: str) -> int:
    """The most characters text field ``field`` of a ``obj`` may hold ("point", "label"; "rig", "notes")."""
    return int(_field(obj, field)["maxLength"])


@lru_cache(maxsize=None)
def max_items(obj: str, field: str) -> int:
    """The most entries list ``field`` of a ``obj`` may hold ("rig", "points"; "rope", "path")."""
    if obj == "site":
        node = _resolve(schema()["$defs"]["site"]["properties"][field])
    else:
        node = _field(obj, field)
    return int(node["maxItems"])


def drawing_problem(points: int, ropes: int) -> str | None:
    """Why a rig of ``points`` points and ``ropes`` ropes is too big to draw (words), or None."""
    if points <= DRAWN_POINTS and ropes <= DRAWN_ROPES:
        return None
    return (f"this rig has {points:,} points and {ropes:,} ropes; the window and its drawings handle at most "
            f"{DRAWN_POINTS:,} points and {DRAWN_ROPES:,} ropes (ropewright solve reads it; split the site "
            "into several rigs to draw it)")


def text_problem(obj: str, field: str, text: str) -> str | None:
    """Why ``text`` cannot be the ``field`` of a ``obj`` (too long), or None."""
    limit = max_chars(obj, field)
    if len(text) > limit:
        return f"is {len(text):,} characters long; at most {limit:,} fit"
    return None


#: Largest distance of any point or site coordinate from the site origin, m.
MAX_COORDINATE_M = float(_resolve(schema()["$defs"]["coordinate"])["maximum"])
