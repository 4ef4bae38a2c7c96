"""The rig file's field tables, and which optional keys a loaded object had (rig-format.md v1).

Each table lists an object's JSON keys (the same as its dataclass attributes), their kind and
default; reading (:mod:`solver.rigfile_build`) and writing (:mod:`solver.rigfile_write`) share
them, so a key is spelled once.  Saving writes back exactly the optional keys a file gave
(``_remember`` / ``_present``), keyed by object identity for as long as the immutable object lives.
"""

from __future__ import annotations

import weakref
from typing import Any, Iterable

FORMAT = "ropewright-rig"
#: The version this module reads and writes.
VERSION = 1
_REQUIRED = object()  # marks a field every file must have

# (json key == attribute name, kind, default); kinds: str, float, int, bool, pair, pairs
_Spec = tuple[tuple[str, str, Any], ...]
_POINT: _Spec = (
    ("id", "str", _REQUIRED), ("kind", "str", _REQUIRED), ("x", "float", _REQUIRED), ("y", "float", _REQUIRED),
    ("label", "str", ""), ("fixed", "bool", None), ("capacity_N", "float", None), ("anchor_type", "str", None),
    ("required_N", "float", None), ("mass_kg", "float", None), ("force_N", "float", None), ("team", "int", None),
    ("force_per_person_N", "float", None), ("capacity_kind", "str", "strength"), ("role", "str", None),
    ("wetted_area_m2", "float", None), ("drag_shape", "str", None),
)
_PASS: _Spec = (("at", "str", _REQUIRED), ("how", "str", "tied"), ("hardware", "str", None), ("termination", "str", None),
          ("grab", "str", None))
_RIGGING: _Spec = (("slack_m", "float", 0.0), ("pretension_N", "float", None))
_ROPE: _Spec = (("id", "str", _REQUIRED), ("material", "str", _REQUIRED), ("label", "str", ""),
                 ("length_m", "float", None))
_MATERIAL: _Spec = (
    ("id", "str", _REQUIRED), ("kind", "str", _REQUIRED), ("mbs_N", "float", _REQUIRED),
    ("stretch", "pairs", _REQUIRED), ("diameter_mm", "float", None), ("label", "str", ""), ("source", "str", ""),
    ("diameter_m", "float", None),
)
_HARDWARE: _Spec = (
    ("id", "str", _REQUIRED), ("kind", "str", _REQUIRED), ("efficiency", "float", None), ("mbs_N", "float", None),
    ("friction_coefficient", "float", None), ("size_m", "float", None), ("label", "str", ""), ("source", "str", ""),
    ("slip_N", "float", None),
)
_FORCE: _Spec = (
    ("at", "str", _REQUIRED), ("magnitude_N", "float", _REQUIRED), ("direction_deg", "float", _REQUIRED),
    ("label", "str", ""),
)
_IMAGE: _Spec = (
    ("file", "str", None), ("data_base64", "str", None), ("origin", "pair", (0.0, 0.0)),
    ("metres_per_pixel", "float", 0.01), ("rotation_deg", "float", 0.0), ("opacity", "float", 1.0),
)
_FEATURE: _Spec = (("id", "str", _REQUIRED), ("kind", "str", _REQUIRED), ("polygon", "pairs", None),
                   ("line", "pairs", None), ("label", "str", ""), ("flow", "flow", None))
_SETTINGS: _Spec = (("motion", "str", "haul"), ("min_safety_factor", "float", 10.0), ("tail_m", "float", 1.0))
_DISPLAY: _Spec = (("length", "str", "m"), ("force", "str", "kN"))
_SITE_KEYS = ("image", "features")
_TOP_KEYS = ("format", "version", "display", "view", "title", "notes", "settings", "site",
             "materials", "hardware", "points", "forces", "ropes", "print_frame")
_FRAME_KEYS = ("x0", "y0", "x1", "y1")

# --------------------------------------------------------------------------------------
# Which optional keys a loaded object had, so that saving writes back exactly those
# (plus anything changed away from its default).  Keyed by object identity; an entry
# lives as long as its (immutable) object.
_PRESENT: dict[int, frozenset[str]] = {}


def _remember(obj: Any, keys: Iterable[str]) -> Any:
    _PRESENT[id(obj)] = frozenset(keys)
    weakref.finalize(obj, _PRESENT.pop, id(obj), None)
    return obj


def _present(obj: Any) -> frozenset[str]:
    return _PRESENT.get(id(obj), frozenset())
