"""Checks on a parsed rig file before anything is built: format and version, list sizes, plain data.

Each refuses with a :class:`~solver.errors.RigFileError` naming the field path, and the cheap
ones run first so a huge or hostile file is turned away before any slow step.
"""

from __future__ import annotations

import math
from typing import Any

from solver import limits
from solver.bulk_read import plain_data_ok
from solver.errors import RigFileError
from solver.rigfile_fields import _REQUIRED, FORMAT, VERSION
from solver.rigfile_json import _DUPLICATE
from solver.rigfile_schema import field_path as _where
from solver.rigfile_schema import show_value as _show
from solver.rigfile_schema import too_many


def _check_format_and_version(d: dict[str, Any]) -> None:
    fmt = d.get("format", _REQUIRED)
    if fmt is _REQUIRED:
        raise RigFileError(f'is missing: a rig file starts with "format": "{FORMAT}" - is this a Ropewright rig?',
                           where="format")
    if fmt != FORMAT:
        raise RigFileError(f'this is not a Ropewright rig file (format is {_show(fmt)}, expected "{FORMAT}")',
                           where="format")
    version = d.get("version", _REQUIRED)
    if version is _REQUIRED:
        raise RigFileError(f"is missing: a rig file says which version of the format it uses ({VERSION})",
                           where="version")
    if isinstance(version, float) and version.is_integer() and abs(version) < 1e9:
        version = int(version)
    if isinstance(version, bool) or not isinstance(version, int):
        raise RigFileError(f"must be a whole number, got {_show(version)}", where="version")
    if version > VERSION:
        raise RigFileError(
            f"this file was made by a newer Ropewright (format version {version}); this one reads version "
            f"{VERSION} and older - update Ropewright to open it",
            where="version",
        )
    if version < 1:
        raise RigFileError(f"there is no rig format version {version}", where="version")


#: Lists checked for size before anything else reads the file (a huge list is refused at once).
_SIZED_LISTS = (("rig", "points"), ("rig", "ropes"), ("rig", "forces"), ("rig", "materials"), ("rig", "hardware"),
                ("site", "features"))


def _check_sizes(d: dict[str, Any]) -> None:
    """Refuse, before any slow step, a rig with more entries than the app can handle (limits.py)."""
    for obj, key in _SIZED_LISTS:
        holder = d.get("site") if obj == "site" else d
        value = holder.get(key) if isinstance(holder, dict) else None
        if isinstance(value, list) and len(value) > limits.max_items(obj, key):
            path = ("site", key) if obj == "site" else (key,)
            raise RigFileError(too_many(path, len(value), limits.max_items(obj, key)), where=_where(path))
    ropes, site = d.get("ropes"), d.get("site")
    features = site.get("features") if isinstance(site, dict) else None
    passes = sum(len(r["path"]) for r in ropes if isinstance(r, dict) and isinstance(r.get("path"), list)) \
        if isinstance(ropes, list) else 0
    if passes > limits.MAX_PASSES_IN_ALL:
        raise RigFileError(f"the ropes pass points {passes:,} times in all; Ropewright handles at most "
                           f"{limits.MAX_PASSES_IN_ALL:,} passes in one rig (split the site into several rigs)",
                           where="ropes")
    corners = sum(len(f.get(k) or ()) for f in features if isinstance(f, dict) for k in ("polygon", "line")
                  if isinstance(f.get(k), list)) if isinstance(features, list) else 0
    if corners > limits.MAX_CORNERS_IN_ALL:
        raise RigFileError(f"the site features have {corners:,} corners in all; Ropewright handles at most "
                           f"{limits.MAX_CORNERS_IN_ALL:,} (simplify the outlines)", where="site.features")


def _check_plain_data(d: Any) -> None:
    """Every number finite and within float range, every text valid Unicode (iterative walk).

    A quick walk that keeps no field paths answers first; only a file it finds a problem
    in is walked again with paths, to name the place.
    """
    if plain_data_ok(d, _DUPLICATE):
        return
    stack: list[tuple[Any, tuple[Any, ...]]] = [(d, ())]
    seen = 0
    while stack:
        value, path = stack.pop()
        seen += 1
        if seen > limits.MAX_VALUES:
            raise RigFileError(f"the file holds more than {limits.MAX_VALUES:,} values (numbers, texts, lists); "
                               "Ropewright cannot handle a rig this large", where=_where(path[:1]))
        if isinstance(value, dict):
            if _DUPLICATE in value:
                key = value[_DUPLICATE]
                raise RigFileError(f'"{key}" is given twice in this object; keep only the right one',
                                   where=_where(path + (key,)))
            for k, v in value.items():
                _check_text(k, path)
                stack.append((v, path + (k,)))
        elif isinstance(value, list):
            for i, v in enumerate(value):
                stack.append((v, path + (i,)))
        elif isinstance(value, bool) or value is None:
            continue
        elif isinstance(value, float):
            if not math.isfinite(value):
                raise RigFileError(f"must be a finite number, got {_show(value)}", where=_where(path))
        elif isinstance(value, int):
            if abs(value) > 1e300:
                raise RigFileError("this number is far too large", where=_where(path))
        elif isinstance(value, str):
            _check_text(value, path)


def _check_text(s: str, path: tuple[Any, ...]) -> None:
    try:
        s.encode("utf-8")
    except UnicodeEncodeError:
        raise RigFileError("holds a broken \\u escape (half of a character pair)", where=_where(path)) from None
