"""A checked rig-file dict built into the frozen dataclasses of :mod:`solver.model` (SI units, as in the file).

Objects are read key by key through the field tables of :mod:`solver.rigfile_fields`; unknown keys
go to ``extra`` (or are refused in strict mode), and optional keys given at their default are
remembered so saving writes them back.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Any, Mapping

from solver import model as m
from solver.bulk_build import object_reader, read_all, rope_reader
from solver.bulk_read import filled
from solver.errors import RigFileError
from solver.rigfile_fields import (
    _DISPLAY, _FEATURE, _FORCE, _FRAME_KEYS, _HARDWARE, _IMAGE, _MATERIAL, _PASS, _POINT, _REQUIRED, _RIGGING,
    _ROPE, _SETTINGS, _SITE_KEYS, _TOP_KEYS, _remember, _Spec,
)


@lru_cache(maxsize=None)
def _spec_fields(spec: _Spec) -> dict[str, tuple[str, Any]]:
    """A spec as {json key: (kind, default)}, for reading an object key by key."""
    return {key: (kind, default) for key, kind, default in spec}


def _from_simple(d: dict[str, Any], spec: _Spec, where: str, strict: bool,
                 at_default: list[str] | None = None) -> tuple[dict[str, Any], dict[str, Any]]:
    """kwargs for a dataclass from a checked dict, and its unknown keys (``extra``).

    ``at_default`` collects the optional keys the file gave at their default value.
    """
    fields = _spec_fields(spec)
    kwargs: dict[str, Any] = {}
    extra: dict[str, Any] = {}
    for key, value in d.items():
        field = fields.get(key)
        if field is None:
            extra[key] = value
            continue
        kind, default = field
        if kind != "str":
            value = _convert(value, kind)
        kwargs[key] = value
        if at_default is not None and default is not _REQUIRED and value == default:
            at_default.append(key)
    if strict and extra:
        key = next(iter(extra))
        raise RigFileError(f'unknown field "{key}" (strict mode allows only the fields of rig-format.md)',
                           where=f"{where}.{key}")
    kwargs["extra"] = extra
    return kwargs, extra


def _convert(value: Any, kind: str) -> Any:
    if kind == "float":
        return float(value)
    if kind == "int":
        return int(value)
    if kind == "bool":
        return bool(value)
    if kind == "pair":
        return (float(value[0]), float(value[1]))
    if kind == "pairs":
        return tuple((float(a), float(b)) for a, b in value)
    if kind == "flow":
        return m.Flow(speed_m_s=float(value["speed_m_s"]), bearing_deg=float(value["bearing_deg"]))
    return value


def _make(cls: type, d: dict[str, Any], spec: _Spec, where: str, strict: bool, **more: Any) -> Any:
    """The dataclass read from ``d``, remembering the optional keys the file gave at their default.

    Saving writes a required key, a key whose value differs from its default, and a remembered
    key (``_to_simple``); so only a key given at its default needs remembering, and most
    objects of a big rig (a pass ``{"at": "n1"}``) need no entry at all.
    """
    read = None if more else object_reader(cls, spec, _REQUIRED)
    got = read(d) if read is not None else None
    if got is not None:  # known keys only: built in one step (solver.bulk_build)
        obj, at_default = got
        return _remember(obj, at_default) if at_default else obj
    at_default: list[str] = []
    kwargs, _ = _from_simple(d, spec, where, strict, at_default)
    kwargs.update(more)
    obj = filled(cls, kwargs)
    return _remember(obj, at_default) if at_default else obj


def _build_rig(d: dict[str, Any], strict: bool) -> m.Rig:
    kw: dict[str, Any] = {}
    if "display" in d:
        kw["display"] = _make(m.Display, d["display"], _DISPLAY, "display", strict)
    if "settings" in d:
        kw["settings"] = _make(m.Settings, d["settings"], _SETTINGS, "settings", strict)
    if "site" in d:
        kw["site"] = _build_site(d["site"], strict)
    for key in ("view", "title", "notes"):
        if key in d:
            kw[key] = d[key]
    if "print_frame" in d:
        kw["print_frame"] = _print_frame(d["print_frame"])
    # spec sheets stay open to extension even in strict mode: the built-in library
    # itself carries extra properties (e.g. a webbing's width_mm) that saving embeds
    kw["materials"] = tuple(_make(m.Material, x, _MATERIAL, f"materials[{i}]", False)
                            for i, x in enumerate(d.get("materials", ())))
    kw["hardware"] = tuple(_make(m.Hardware, x, _HARDWARE, f"hardware[{i}]", False)
                           for i, x in enumerate(d.get("hardware", ())))
    # the many points, forces and ropes: known keys read in one step (solver.bulk_build), the rest one by one
    kw["points"] = read_all(d["points"], object_reader(m.Point, _POINT, _REQUIRED), _remember,
                            lambda i, x: _make(m.Point, x, _POINT, f"points[{i}]", strict))
    kw["forces"] = read_all(d.get("forces", ()), object_reader(m.Force, _FORCE, _REQUIRED), _remember,
                            lambda i, x: _make(m.Force, x, _FORCE, f"forces[{i}]", strict))
    kw["ropes"] = read_all(d["ropes"], _ROPE_FAST, _remember, lambda i, x: _build_rope(x, f"ropes[{i}]", strict))
    kw["extra"] = {k: v for k, v in d.items() if k not in _TOP_KEYS}
    return _remember(m.Rig(**kw), d.keys())


def _print_frame(d: Mapping[str, Any]) -> tuple[float, float, float, float]:
    """The print frame rectangle (x0, y0, x1, y1), site metres, corners in any order; an empty one is an error."""
    x0, y0, x1, y1 = (float(d[k]) for k in _FRAME_KEYS)
    frame = (min(x0, x1), min(y0, y1), max(x0, x1), max(y0, y1))
    if frame[2] - frame[0] <= 0 or frame[3] - frame[1] <= 0:
        raise RigFileError("the print frame has no area: give two opposite corners that differ in x and in y",
                           where="print_frame")
    return frame


def _build_site(d: dict[str, Any], strict: bool) -> m.Site:
    kw: dict[str, Any] = {}
    if "image" in d:
        kw["image"] = _make(m.SiteImage, d["image"], _IMAGE, "site.image", strict)
    kw["features"] = tuple(_make(m.Feature, x, _FEATURE, f"site.features[{i}]", strict)
                           for i, x in enumerate(d.get("features", ())))
    extra = {k: v for k, v in d.items() if k not in _SITE_KEYS}
    if strict and extra:
        key = next(iter(extra))
        raise RigFileError(f'unknown field "{key}" (strict mode allows only the fields of rig-format.md)',
                           where=f"site.{key}")
    return _remember(m.Site(extra=extra, **kw), d.keys())


_PASS_KEYS = frozenset(key for key, _, _ in _PASS)


def _read_pass(x: dict[str, Any], where: str, j: int, strict: bool) -> m.Pass:
    """One pass of a rope's path; a pass with only known keys (all text) is built directly."""
    if x.keys() <= _PASS_KEYS:
        ps = filled(m.Pass, {**x, "extra": {}})
        at_default = [key for key in ("how", "hardware") if key in x and x[key] == (None if key == "hardware"
                                                                                   else "tied")]
        return _remember(ps, at_default) if at_default else ps
    return _make(m.Pass, x, _PASS, f"{where}.path[{j}]", strict)


def _build_rope(d: dict[str, Any], where: str, strict: bool) -> m.Rope:
    path = tuple(_read_pass(x, where, j, strict) for j, x in enumerate(d["path"]))
    more: dict[str, Any] = {"path": path}
    if "rigged" in d:
        rg = d["rigged"]
        if "slack_m" in rg and "pretension_N" in rg:
            raise RigFileError("give slack_m or pretension_N, not both: a run is either hand-tight plus slack, "
                               "or tensioned", where=f"{where}.rigged")
        more["rigged"] = _make(m.Rigging, rg, _RIGGING, f"{where}.rigged", strict)
    kwargs, _ = _from_simple(d, _ROPE_READ, where, strict)
    kwargs.update(more)  # path and rigged as read above
    kwargs.setdefault("rigged", m.Rigging())
    rope = filled(m.Rope, kwargs)
    # saving writes label and rigged when set; remember them only when the file gave them at their default
    at_default = [key for key in ("label", "rigged") if key in d and getattr(rope, key) == _ROPE_DEFAULTS[key]]
    return _remember(rope, at_default) if at_default else rope


_ROPE_DEFAULTS: dict[str, Any] = {"label": "", "rigged": m.Rigging()}
#: A rope's keys as _from_simple reads them: path and rigged known (not extra), each read on its own.
_ROPE_READ: _Spec = _ROPE + (("path", "str", _REQUIRED), ("rigged", "str", None))
#: Whole ropes with known keys only, read in one step (solver.bulk_build); None: every rope the general way.
_ROPE_FAST = rope_reader(_ROPE, _PASS, _RIGGING, _REQUIRED, _remember)
