"""A Rig as the JSON-ready dict of rig-format.md v1: what the rig holds, and only that.

A key the loaded file had is written back, a key still at its default that the file did not
have is left out, unknown keys are written back; saving embeds every library spec the rig uses.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any, Mapping, Sequence

from solver import materials
from solver import model as m
from solver.rigfile_fields import (
    _DISPLAY, _FEATURE, _FORCE, _FRAME_KEYS, _HARDWARE, _IMAGE, _MATERIAL, _PASS, _POINT, _REQUIRED, _RIGGING,
    _SETTINGS, _SITE_KEYS, _TOP_KEYS, FORMAT, VERSION, _present, _remember, _Spec,
)


def rig_to_dict(rig: m.Rig, *, embed: bool = True) -> dict[str, Any]:
    """The rig as a JSON-ready dict (rig-format.md v1); ``embed`` adds library specs the rig uses."""
    if embed:
        rig = embed_specs(rig)
    pres = _present(rig)
    out: dict[str, Any] = {"format": FORMAT, "version": VERSION}
    if "display" in pres or rig.display != m.Display():
        out["display"] = _to_simple(rig.display, _DISPLAY)
    if "view" in pres or rig.view != "plan":
        out["view"] = str(rig.view)
    if "title" in pres or rig.title:
        out["title"] = str(rig.title)
    if "notes" in pres or rig.notes:
        out["notes"] = str(rig.notes)
    if "settings" in pres or rig.settings != m.Settings():
        out["settings"] = _to_simple(rig.settings, _SETTINGS)
    if "site" in pres or rig.site != m.Site():
        out["site"] = _site_to(rig.site)
    if "materials" in pres or rig.materials:
        out["materials"] = [_to_simple(x, _MATERIAL) for x in rig.materials]
    if "hardware" in pres or rig.hardware:
        out["hardware"] = [_to_simple(x, _HARDWARE) for x in rig.hardware]
    out["points"] = [_to_simple(x, _POINT) for x in rig.points]
    if "forces" in pres or rig.forces:
        out["forces"] = [_to_simple(x, _FORCE) for x in rig.forces]
    out["ropes"] = [_rope_to(x) for x in rig.ropes]
    if rig.print_frame is not None:
        out["print_frame"] = dict(zip(_FRAME_KEYS, (float(v) for v in rig.print_frame)))
    for key, value in rig.extra.items():
        if key not in out and key not in _TOP_KEYS:
            out[key] = value
    return out


def embed_specs(rig: m.Rig) -> m.Rig:
    """The rig with every library material and hardware spec it uses embedded (first use first)."""
    lib_materials, lib_hardware = materials.LIBRARY_MATERIALS, materials.LIBRARY_HARDWARE
    have_m = {x.id for x in rig.materials}
    have_h = {x.id for x in rig.hardware}
    add_m: list[m.Material] = []
    add_h: list[m.Hardware] = []
    for rope in rig.ropes:
        if rope.material not in have_m and rope.material in lib_materials:
            add_m.append(lib_materials[rope.material])
            have_m.add(rope.material)
        for hid in (h for ps in rope.path for h in (ps.hardware, ps.grab) if h):
            if hid not in have_h and hid in lib_hardware:
                add_h.append(lib_hardware[hid])
                have_h.add(hid)
    if not add_m and not add_h:
        return rig
    new = replace(rig, materials=rig.materials + tuple(add_m), hardware=rig.hardware + tuple(add_h))
    return _remember(new, _present(rig))


def _to_simple(obj: Any, spec: _Spec) -> dict[str, Any]:
    pres = _present(obj)
    out: dict[str, Any] = {}
    for key, kind, default in spec:
        value = getattr(obj, key)
        if default is _REQUIRED or key in pres or value != default:
            if value is None and default is not _REQUIRED:
                continue  # optional and unset: JSON has no "unset", leave the key out
            out[key] = _encode(value, kind)
    _write_extra(out, obj.extra, spec)
    return out


def _write_extra(out: dict[str, Any], extra: Mapping[str, Any], spec: _Spec | Sequence[str] = ()) -> None:
    known = {s[0] if isinstance(s, tuple) else s for s in spec}
    for key, value in extra.items():
        if key not in out and key not in known:
            out[key] = value


def _encode(value: Any, kind: str) -> Any:
    if kind == "float":
        return float(value)
    if kind == "int":
        return int(value)
    if kind == "bool":
        return bool(value)
    if kind == "pair":
        return [float(value[0]), float(value[1])]
    if kind == "pairs":
        return [[float(a), float(b)] for a, b in value]
    if kind == "flow":
        return {"speed_m_s": float(value.speed_m_s), "bearing_deg": float(value.bearing_deg)}
    return str(value)


def _site_to(site: m.Site) -> dict[str, Any]:
    pres = _present(site)
    out: dict[str, Any] = {}
    if site.image is not None:
        out["image"] = _to_simple(site.image, _IMAGE)
    if "features" in pres or site.features:
        out["features"] = [_to_simple(f, _FEATURE) for f in site.features]
    _write_extra(out, site.extra, _SITE_KEYS)
    return out


def _rope_to(rope: m.Rope) -> dict[str, Any]:
    pres = _present(rope)
    out: dict[str, Any] = {"id": str(rope.id), "material": str(rope.material)}
    if "label" in pres or rope.label:
        out["label"] = str(rope.label)
    if rope.length_m is not None:
        out["length_m"] = float(rope.length_m)
    if "rigged" in pres or rope.rigged != m.Rigging():
        out["rigged"] = _to_simple(rope.rigged, _RIGGING)
    out["path"] = [_to_simple(ps, _PASS) for ps in rope.path]
    _write_extra(out, rope.extra, ("id", "material", "label", "length_m", "rigged", "path"))
    return out
