"""The built-in rope and hardware library, and the look-up of every spec a rig uses.

The built-in specs live in ``solver/data/library.json`` and are read once at
import through the same validating reader a team's own library goes through
(:func:`library_from_json`), so shipped data and imported data obey one set of
rules: those of ``rig-format.md``, "Materials and hardware".  Units: forces in
newtons, strain as a fraction (0.05 = 5 %), diameters in millimetres, hardware
size in metres.  A rig's embedded spec always wins over the library, so a rig
file solves to the same numbers wherever it is opened.
"""

from __future__ import annotations

import json
import logging
import math
from dataclasses import replace
from importlib import resources
from typing import Any, Iterable, Mapping

from solver.errors import RigFileError, RigModelError
from solver.model import HARDWARE_KINDS, MATERIAL_KINDS, Hardware, Material, Rig

log = logging.getLogger(__name__)

#: The ``format`` tag of a library file (built-in or a team's export).
LIBRARY_FORMAT = "ropewright-library"
#: The library file version this module reads and writes.
LIBRARY_VERSION = 1

#: Hardware kinds whose friction is an efficiency (tension out / tension in).
EFFICIENCY_KINDS: frozenset[str] = frozenset({"pulley", "carabiner", "ring"})
#: Largest friction coefficient accepted for an edge; rope on any real edge is well below 1.
MAX_FRICTION_COEFFICIENT = 2.0

_MATERIAL_KEYS = ("id", "kind", "label", "diameter_mm", "diameter_m", "mbs_N", "source", "stretch")
_HARDWARE_KEYS = ("id", "kind", "label", "efficiency", "friction_coefficient", "mbs_N", "size_m", "source", "slip_N")


# --- reading one spec from plain JSON data ---------------------------------------------


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _spec_name(d: Mapping[str, Any], what: str) -> str:
    sid = d.get("id")
    return f'{what} "{sid}"' if isinstance(sid, str) and sid else what


def _number(d: Mapping[str, Any], key: str, where: str, name: str, *, required: bool) -> float | None:
    """The finite number ``d[key]`` (None if absent and optional), else a RigFileError."""
    if key not in d or d[key] is None:
        if required:
            raise RigFileError(f"{name} has no {key}", f"{where}.{key}")
        return None
    value = d[key]
    if not _is_number(value) or not math.isfinite(value):
        raise RigFileError(f"{name}: {key} must be a number, not {value!r}", f"{where}.{key}")
    return float(value)


def _text(d: Mapping[str, Any], key: str, where: str, name: str) -> str:
    value = d.get(key, "")
    if value is None:
        return ""
    if not isinstance(value, str):
        raise RigFileError(f"{name}: {key} must be text, not {value!r}", f"{where}.{key}")
    return value


def _id_and_kind(d: Any, where: str, what: str, kinds: tuple[str, ...]) -> tuple[str, str]:
    if not isinstance(d, Mapping):
        raise RigFileError(f"each {what} must be a JSON object with an id, not {d!r}", where)
    sid = d.get("id")
    if not isinstance(sid, str) or not sid.strip():
        raise RigFileError(f"a {what} has no id (a non-empty name such as \"my-rope\")", f"{where}.id")
    kind = d.get("kind")
    if kind not in kinds:
        raise RigFileError(
            f'{what} "{sid}": kind must be one of {", ".join(kinds)}, not {kind!r}', f"{where}.kind"
        )
    return sid, kind


def _extra(d: Mapping[str, Any], known: tuple[str, ...], where: str, name: str, strict: bool) -> dict[str, Any]:
    unknown = {k: v for k, v in d.items() if k not in known}
    if strict and unknown:
        key = sorted(unknown)[0]
        raise RigFileError(f'{name}: unknown field "{key}"', f"{where}.{key}")
    return unknown


def _stretch_table(raw: Any, where: str, name: str) -> tuple[tuple[float, float], ...]:
    if not isinstance(raw, (list, tuple)) or not raw:
        raise RigFileError(
            f"{name} needs a stretch table: a list of [tension_N, strain] points", f"{where}.stretch"
        )
    table: list[tuple[float, float]] = []
    for i, pair in enumerate(raw):
        at = f"{where}.stretch[{i}]"
        if (
            not isinstance(pair, (list, tuple))
            or len(pair) != 2
            or not all(_is_number(v) and math.isfinite(v) for v in pair)
        ):
            raise RigFileError(f"{name}: each stretch point must be [tension_N, strain], not {pair!r}", at)
        table.append((float(pair[0]), float(pair[1])))
    return tuple(table)


def material_from_dict(d: Any, where: str = "material", *, strict: bool = False) -> Material:
    """A validated :class:`Material` from its JSON object; RigFileError names the field at fault.

    Unknown keys are kept in ``extra`` (an error when ``strict``).
    """
    sid, kind = _id_and_kind(d, where, "material", MATERIAL_KINDS)
    name = f'material "{sid}"'
    material = Material(
        id=sid,
        kind=kind,
        mbs_N=_number(d, "mbs_N", where, name, required=True),  # type: ignore[arg-type]
        stretch=_stretch_table(d.get("stretch"), where, name),
        diameter_mm=_number(d, "diameter_mm", where, name, required=False),
        diameter_m=_number(d, "diameter_m", where, name, required=False),
        label=_text(d, "label", where, name),
        source=_text(d, "source", where, name),
        extra=_extra(d, _MATERIAL_KEYS, where, name, strict),
    )
    problem = material_problem(material)
    if problem is not None:
        field, message = problem
        raise RigFileError(message, f"{where}.{field}")
    return material


def hardware_from_dict(d: Any, where: str = "hardware", *, strict: bool = False) -> Hardware:
    """A validated :class:`Hardware` from its JSON object; RigFileError names the field at fault.

    Unknown keys are kept in ``extra`` (an error when ``strict``).
    """
    sid, kind = _id_and_kind(d, where, "hardware", HARDWARE_KINDS)
    name = f'hardware "{sid}"'
    hardware = Hardware(
        id=sid,
        kind=kind,
        efficiency=_number(d, "efficiency", where, name, required=False),
        mbs_N=_number(d, "mbs_N", where, name, required=False),
        friction_coefficient=_number(d, "friction_coefficient", where, name, required=False),
        label=_text(d, "label", where, name),
        source=_text(d, "source", where, name),
        size_m=_number(d, "size_m", where, name, required=False),
        slip_N=_number(d, "slip_N", where, name, required=False),
        extra=_extra(d, _HARDWARE_KEYS, where, name, strict),
    )
    problem = hardware_problem(hardware)
    if problem is not None:
        field, message = problem
        raise RigFileError(message, f"{where}.{field}")
    return hardware


# --- checking a spec (model objects, however they were made) ---------------------------


def _percent(strain: float) -> str:
    return f"{100.0 * strain:.3g} %"


#: Bounds of a stretch table's slope (tension per unit strain, N): far beyond the stiffest steel rope
#: (about 1e9 N) and the softest cord; a table outside them is a typing slip (ours, not from a standard).
#: Largest tension in a stretch table, N: the rig format's limit on every force (schema, solver.limits).
MAX_TENSION_N = 1e12
MIN_STIFFNESS_N = 1e-3
MAX_STIFFNESS_N = 1e18


def material_problem(m: Material) -> tuple[str, str] | None:
    """The first thing wrong with a material as ``(field, message)``, or None if it is sound.

    Sound means: a known kind, a positive MBS, and a stretch table whose points rise
    strictly in both tension (N) and strain (fraction) from after (0, 0), so the
    tension-strain curve is monotone and invertible (rig-format.md).
    """
    name = f'material "{m.id}"'
    if m.kind not in MATERIAL_KINDS:
        return "kind", f"{name}: kind must be one of {', '.join(MATERIAL_KINDS)}, not {m.kind!r}"
    if not (_is_number(m.mbs_N) and math.isfinite(m.mbs_N) and m.mbs_N > 0):
        return "mbs_N", f"{name}: MBS must be a strength above 0 N, not {m.mbs_N!r}"
    if m.diameter_mm is not None and not (math.isfinite(m.diameter_mm) and m.diameter_mm > 0):
        return "diameter_mm", f"{name}: diameter must be above 0 mm, not {m.diameter_mm!r}"
    if m.diameter_m is not None and not (math.isfinite(m.diameter_m) and m.diameter_m > 0):
        return "diameter_m", f"{name}: diameter must be above 0 m, not {m.diameter_m!r}"
    if m.diameter_m is not None and m.diameter_mm is not None and abs(m.diameter_m * 1000 - m.diameter_mm) > 0.05:
        return "diameter_m", (f"{name}: diameter_m {m.diameter_m:g} m and diameter_mm {m.diameter_mm:g} mm "
                              f"disagree; they are one diameter, give one or make them match")
    if not m.stretch:
        return "stretch", f"{name} needs a stretch table: a list of [tension_N, strain] points"
    prev_t, prev_e = 0.0, 0.0
    for i, point in enumerate(m.stretch):
        field = f"stretch[{i}]"
        if len(point) != 2 or not all(_is_number(v) and math.isfinite(v) for v in point):
            return field, f"{name}: each stretch point must be [tension_N, strain], not {point!r}"
        t, e = float(point[0]), float(point[1])
        if t > MAX_TENSION_N:
            return field, (f"{name}: tension {t:g} N is beyond the {MAX_TENSION_N:g} N a rig file holds; "
                           "is the unit right?")
        if e >= 1.0:
            return field, (
                f"{name}: strain {e:g} at {t:g} N means the rope more than doubles in length; "
                "strain is a fraction (0.05 = 5 %), not a percentage"
            )
        if i == 0 and (t <= 0.0 or e <= 0.0):
            return field, (
                f"{name}: the stretch table starts at (0 N, 0 %) by itself; its first point must have "
                f"tension and strain above zero, not ({t:g} N, {_percent(e)})"
            )
        if t <= prev_t or e <= prev_e:
            return field, (
                f"{name}: the stretch table must rise in both tension and strain, but point {i + 1} "
                f"({t:g} N, {_percent(e)}) does not come after point {i} ({prev_t:g} N, {_percent(prev_e)})"
            )
        slope = (t - prev_t) / (e - prev_e)
        if not MIN_STIFFNESS_N <= slope <= MAX_STIFFNESS_N:
            which = "stiffer" if not slope < MAX_STIFFNESS_N else "softer"
            return field, (
                f"{name}: up to point {i + 1} ({t:g} N, {_percent(e)}) the stretch table rises {slope:.3g} N per "
                f"unit of strain, {which} than any rope, sling or cord can be (between {MIN_STIFFNESS_N:g} N and "
                f"{MAX_STIFFNESS_N:g} N); strain is a fraction (0.05 = 5 %): check both columns"
            )
        prev_t, prev_e = t, e
    return None


def hardware_problem(h: Hardware) -> tuple[str, str] | None:
    """The first thing wrong with a hardware spec as ``(field, message)``, or None if it is sound.

    Pulleys and carabiners need an efficiency in (0, 1] (tension out / tension in);
    an edge needs a friction coefficient for the capstan equation, T2/T1 = e^(mu*phi).
    """
    name = f'hardware "{h.id}"'
    if h.kind not in HARDWARE_KINDS:
        return "kind", f"{name}: kind must be one of {', '.join(HARDWARE_KINDS)}, not {h.kind!r}"
    if h.efficiency is None and h.kind in ("pulley", "carabiner"):
        return "efficiency", f"{name}: a {h.kind} needs an efficiency between 0 and 1 (0.9 for a good pulley)"
    if h.efficiency is not None and not (math.isfinite(h.efficiency) and 0.0 < h.efficiency <= 1.0):
        return "efficiency", (
            f"{name}: efficiency must be above 0 and at most 1 (0.9 means 90 %), not {h.efficiency:g}"
        )
    if h.friction_coefficient is None and h.kind == "edge":
        return "friction_coefficient", f"{name}: an edge needs a friction coefficient (0.44 for concrete)"
    mu = h.friction_coefficient
    if mu is not None and not (math.isfinite(mu) and 0.0 <= mu <= MAX_FRICTION_COEFFICIENT):
        return "friction_coefficient", (
            f"{name}: friction coefficient must be between 0 and {MAX_FRICTION_COEFFICIENT:g} "
            f"(rope on concrete is about 0.44), not {mu:g}"
        )
    if h.mbs_N is not None and not (math.isfinite(h.mbs_N) and h.mbs_N > 0):
        return "mbs_N", f"{name}: MBS must be a strength above 0 N, not {h.mbs_N:g}"
    if h.slip_N is None and h.kind == "grab":
        return "slip_N", f"{name}: a rope grab needs the force at which it slips (slip_N; a 3-wrap prusik about 7 kN)"
    if h.slip_N is not None and not (math.isfinite(h.slip_N) and h.slip_N > 0):
        return "slip_N", f"{name}: the slip force must be above 0 N, not {h.slip_N:g}"
    if h.size_m is not None and not (math.isfinite(h.size_m) and h.size_m >= 0):
        return "size_m", f"{name}: size must be 0 m or more, not {h.size_m:g}"
    return None


def check_material(m: Material) -> Material:
    """``m`` unchanged if sound, else RigModelError naming the material and the field."""
    problem = material_problem(m)
    if problem is not None:
        raise RigModelError(problem[1], problem[0], subject=m.id)
    return m


def check_hardware(h: Hardware) -> Hardware:
    """``h`` unchanged if sound, else RigModelError naming the hardware and the field."""
    problem = hardware_problem(h)
    if problem is not None:
        raise RigModelError(problem[1], problem[0], subject=h.id)
    return h


# --- writing specs as plain JSON data --------------------------------------------------


def material_to_dict(m: Material) -> dict[str, Any]:
    """The JSON object of a material (rig-format.md), absent optional fields left out."""
    d: dict[str, Any] = {"id": m.id, "kind": m.kind}
    if m.label:
        d["label"] = m.label
    if m.diameter_mm is not None:
        d["diameter_mm"] = m.diameter_mm
    if m.diameter_m is not None:
        d["diameter_m"] = m.diameter_m
    d["mbs_N"] = m.mbs_N
    if m.source:
        d["source"] = m.source
    d.update({k: v for k, v in m.extra.items() if k not in _MATERIAL_KEYS})
    d["stretch"] = [[t, e] for t, e in m.stretch]
    return d


def hardware_to_dict(h: Hardware) -> dict[str, Any]:
    """The JSON object of a hardware spec (rig-format.md), absent optional fields left out."""
    d: dict[str, Any] = {"id": h.id, "kind": h.kind}
    if h.label:
        d["label"] = h.label
    for key in ("efficiency", "friction_coefficient", "mbs_N", "size_m", "slip_N"):
        value = getattr(h, key)
        if value is not None:
            d[key] = value
    if h.source:
        d["source"] = h.source
    d.update({k: v for k, v in h.extra.items() if k not in _HARDWARE_KEYS})
    return d


# --- library files ---------------------------------------------------------------------


def _specs(specs: Mapping[str, Any] | Iterable[Any] | None, default: Mapping[str, Any]) -> list[Any]:
    if specs is None:
        return list(default.values())
    if isinstance(specs, Mapping):
        return list(specs.values())
    return list(specs)


def library_as_json(
    materials: Mapping[str, Material] | Iterable[Material] | None = None,
    hardware: Mapping[str, Hardware] | Iterable[Hardware] | None = None,
    *,
    notes: str = "",
) -> str:
    """A library file's text (UTF-8 JSON) holding the given specs; the built-in ones by default.

    Every spec is checked first, so an export can always be imported again;
    a bad spec raises RigModelError naming it.
    """
    mats = [check_material(m) for m in _specs(materials, LIBRARY_MATERIALS)]
    hws = [check_hardware(h) for h in _specs(hardware, LIBRARY_HARDWARE)]
    for kind, specs in (("material", mats), ("hardware", hws)):
        seen: set[str] = set()
        for s in specs:
            if s.id in seen:
                raise RigModelError(f'two {kind} specs are both called "{s.id}"', subject=s.id)
            seen.add(s.id)
    doc: dict[str, Any] = {"format": LIBRARY_FORMAT, "version": LIBRARY_VERSION}
    if notes:
        doc["notes"] = notes
    doc["materials"] = [material_to_dict(m) for m in mats]
    doc["hardware"] = [hardware_to_dict(h) for h in hws]
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


def library_from_json(text: str, *, strict: bool = False) -> tuple[dict[str, Material], dict[str, Hardware]]:
    """The materials and hardware of a library file's text, each keyed by id, all validated.

    Anything wrong raises RigFileError with the field path in ``where``
    (``materials[2].stretch[3]``) and a message a rigger can act on.
    """
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise RigFileError(
            f"this is not a readable library file: broken JSON ({exc.msg})",
            f"line {exc.lineno}, column {exc.colno}",
        ) from None
    if not isinstance(doc, dict):
        raise RigFileError("a library file must hold one JSON object with materials and hardware")
    fmt = doc.get("format")
    if fmt == "ropewright-rig":
        raise RigFileError(
            "this is a rig file, not a library file; open it as a rig (its specs come with it)", "format"
        )
    if fmt != LIBRARY_FORMAT:
        raise RigFileError(f'this is not a Ropewright library file (format should be "{LIBRARY_FORMAT}")', "format")
    version = doc.get("version")
    if not _is_number(version) or version != int(version) or version < 1:
        raise RigFileError(f"the library version must be a whole number, not {version!r}", "version")
    if version > LIBRARY_VERSION:
        raise RigFileError(
            f"this library file is version {version}, made by a newer Ropewright; this one reads "
            f"version {LIBRARY_VERSION}",
            "version",
        )
    result: list[dict[str, Any]] = []
    for key, what, reader in (
        ("materials", "material", material_from_dict),
        ("hardware", "hardware", hardware_from_dict),
    ):
        raw = doc.get(key, [])
        if not isinstance(raw, list):
            raise RigFileError(f"{key} must be a list of {what} specs", key)
        specs: dict[str, Any] = {}
        for i, item in enumerate(raw):
            spec = reader(item, f"{key}[{i}]", strict=strict)
            if spec.id in specs:
                raise RigFileError(f'two {what} specs are both called "{spec.id}"', f"{key}[{i}].id")
            specs[spec.id] = spec
        result.append(specs)
    return result[0], result[1]


def _load_builtin() -> tuple[dict[str, Material], dict[str, Hardware]]:
    text = resources.files("solver").joinpath("data/library.json").read_text(encoding="utf-8")
    materials, hardware = library_from_json(text, strict=False)
    log.debug("built-in library: %d materials, %d hardware", len(materials), len(hardware))
    return materials, hardware


#: Built-in specs by id, read from ``solver/data/library.json``.  Treat as read-only.
LIBRARY_MATERIALS: dict[str, Material]
LIBRARY_HARDWARE: dict[str, Hardware]
LIBRARY_MATERIALS, LIBRARY_HARDWARE = _load_builtin()


# --- look-ups for a rig --------------------------------------------------------------


def material_for(rig: Rig, material_id: str) -> Material:
    """The material a rig means by ``material_id``: its embedded spec first, then the library."""
    found = rig.embedded_material(material_id)
    if found is None:
        found = LIBRARY_MATERIALS.get(material_id)
    if found is None:
        raise RigModelError(
            f'material "{material_id}" is not in the rig or the built-in library', subject=material_id
        )
    return found


def hardware_for(rig: Rig, hardware_id: str) -> Hardware:
    """The hardware a rig means by ``hardware_id``: its embedded spec first, then the library."""
    found = rig.embedded_hardware(hardware_id)
    if found is None:
        found = LIBRARY_HARDWARE.get(hardware_id)
    if found is None:
        raise RigModelError(
            f'hardware "{hardware_id}" is not in the rig or the built-in library', subject=hardware_id
        )
    return found


def used_material_ids(rig: Rig) -> tuple[str, ...]:
    """The material ids the rig's ropes use, each once, in order of first use."""
    return tuple(dict.fromkeys(r.material for r in rig.ropes))


def used_hardware_ids(rig: Rig) -> tuple[str, ...]:
    """The hardware ids the rig's passes use, each once, in order of first use."""
    return tuple(dict.fromkeys(p.hardware for r in rig.ropes for p in r.path if p.hardware is not None))


def used_specs(rig: Rig) -> tuple[tuple[Material, ...], tuple[Hardware, ...]]:
    """Every spec the rig uses, resolved (embedded first, then library); RigModelError if one is unknown."""
    return (
        tuple(material_for(rig, mid) for mid in used_material_ids(rig)),
        tuple(hardware_for(rig, hid) for hid in used_hardware_ids(rig)),
    )


def with_embedded_specs(rig: Rig) -> Rig:
    """The same rig with every spec it uses embedded, so its file solves the same anywhere.

    Specs already embedded are kept as they are (used or not) and in their order;
    library specs the rig uses are appended.  RigModelError if a used id is unknown.
    """
    materials, hardware = used_specs(rig)
    have_m = {m.id for m in rig.materials}
    have_h = {h.id for h in rig.hardware}
    return replace(
        rig,
        materials=rig.materials + tuple(m for m in materials if m.id not in have_m),
        hardware=rig.hardware + tuple(h for h in hardware if h.id not in have_h),
    )
