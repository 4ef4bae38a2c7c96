"""Cross-checks on a built Rig that a JSON Schema cannot do: unique ids, references, path rules, specs, image.

Every problem is a :class:`~solver.errors.RigFileError` whose ``where`` is the field path in the
format's own terms (``ropes[2].path[3].hardware``); coordinates in m, forces in N.
"""

from __future__ import annotations

import base64
import binascii
import ntpath
import os
import pathlib
import posixpath
from typing import Any, Mapping, Sequence

from solver import limits, materials
from solver import model as m
from solver.bulk_checks import all_unique, points_to_check, ropes_to_check
from solver.errors import RigFileError
from solver.water_site import water_feature_problem, wetted_point_problem

#: Largest distance of any point or site coordinate from the site origin, m: a
#: sanity bound far beyond any rescue site (ours, not from a standard; in the schema).
MAX_COORDINATE_M = limits.MAX_COORDINATE_M


def _material(rig: m.Rig, mat_id: str) -> m.Material | None:
    """The spec (embedded first, then library); None if unknown."""
    return rig.embedded_material(mat_id) or materials.LIBRARY_MATERIALS.get(mat_id)


def _hardware(rig: m.Rig, hw_id: str) -> m.Hardware | None:
    """The spec (embedded first, then library); None if unknown."""
    return rig.embedded_hardware(hw_id) or materials.LIBRARY_HARDWARE.get(hw_id)


def check_rig(rig: m.Rig, base_dir: str | os.PathLike[str] | None = None) -> None:
    """Raise RigFileError for what a schema cannot see: ids, references, path rules, specs, image."""
    _check_semantics(rig, base_dir)


def _unique(items: Sequence[Any], where: str) -> None:
    seen: dict[str, int] = {}
    for i, item in enumerate(items):
        if item.id in seen:
            raise RigFileError(f'id "{item.id}" is used twice in this list (also {where}[{seen[item.id]}]); '
                               "each id must be unique", where=f"{where}[{i}].id")
        seen[item.id] = i


def _check_coordinate(value: float, where: str) -> None:
    if abs(value) > MAX_COORDINATE_M:
        raise RigFileError(f"{value:g} m is more than {MAX_COORDINATE_M / 1000:g} km from the site origin; "
                           "is the unit right?", where=where)


def _check_semantics(rig: m.Rig, base_dir: str | os.PathLike[str] | None) -> None:
    # the solver.bulk_checks tests clear what plainly meets a rule; the rest is checked in full, in order
    for items, where in ((rig.points, "points"), (rig.ropes, "ropes"), (rig.materials, "materials"),
                         (rig.hardware, "hardware"), (rig.site.features, "site.features")):
        if not all_unique(items):
            _unique(items, where)
    points = {p.id: p for p in rig.points}
    for i in points_to_check(rig.points, MAX_COORDINATE_M):
        p = rig.points[i]
        _check_coordinate(p.x, f"points[{i}].x")
        _check_coordinate(p.y, f"points[{i}].y")
        if p.role is not None and p.kind != "person":
            raise RigFileError(f'"{p.name}" is a {p.kind}: only a person has a role', where=f"points[{i}].role")
        _raise_problem(wetted_point_problem(p), f"points[{i}]")
    for i, f in enumerate(rig.forces):
        if f.at not in points:
            raise RigFileError(f'point "{f.at}" does not exist', where=f"forces[{i}].at")
    for i, mat in enumerate(rig.materials):
        _raise_problem(materials.material_problem(mat), f"materials[{i}]")
        _check_stretch(mat, f"materials[{i}]")
    for i, hw in enumerate(rig.hardware):
        _raise_problem(materials.hardware_problem(hw), f"hardware[{i}]")
    for i in ropes_to_check(rig.ropes, points, lambda mat: _material(rig, mat) is not None,
                            lambda ps: _pass_fits(rig, ps)):
        _check_rope(rig, rig.ropes[i], points, f"ropes[{i}]")
    _check_site(rig.site, base_dir)


def _pass_fits(rig: m.Rig, ps: m.Pass) -> bool:
    """True when a pass's hardware, grab and termination pass their checks (solver.bulk_checks asks)."""
    try:
        _check_pass_hardware(rig, ps, "")
        _check_weak_link(rig, ps, "")
    except RigFileError:
        return False
    return True


def _raise_problem(problem: tuple[str, str] | None, where: str) -> None:
    if problem is not None:
        field, message = problem
        raise RigFileError(message, where=f"{where}.{field}" if field else where)


def _check_stretch(mat: m.Material, where: str) -> None:
    prev_t, prev_e = 0.0, 0.0
    for k, (t, e) in enumerate(mat.stretch):
        if k == 0 and (t <= 0 or e <= 0):
            raise RigFileError(f"the stretch table must start after (0, 0) with a positive tension and strain, "
                               f"got [{t:g}, {e:g}]", where=f"{where}.stretch[0]")
        if t <= prev_t:
            raise RigFileError(f"tension must increase down the stretch table ({t:g} N after {prev_t:g} N)",
                               where=f"{where}.stretch[{k}]")
        if e <= prev_e:
            raise RigFileError(f"strain must increase down the stretch table ({e:g} after {prev_e:g})",
                               where=f"{where}.stretch[{k}]")
        prev_t, prev_e = t, e


def _check_rope(rig: m.Rig, rope: m.Rope, points: Mapping[str, m.Point], where: str) -> None:
    path = rope.path
    n = len(path)
    if n < 2:
        raise RigFileError(f"a rope needs at least 2 passes (where it starts and where it ends); this one has {n}",
                           where=f"{where}.path")
    if _material(rig, rope.material) is None:
        raise RigFileError(f'material "{rope.material}" is neither in this file\'s materials nor in the '
                           "built-in library", where=f"{where}.material")
    rg = rope.rigged
    if rg.slack_m < 0:
        raise RigFileError(f"slack must be 0 or more, got {rg.slack_m:g} m", where=f"{where}.rigged.slack_m")
    if rg.pretension_N is not None and rg.pretension_N <= 0:
        raise RigFileError(f"pretension must be more than 0, got {rg.pretension_N:g} N",
                           where=f"{where}.rigged.pretension_N")
    if rg.pretension_N is not None and rg.slack_m != 0:
        raise RigFileError("give slack_m or pretension_N, not both", where=f"{where}.rigged")
    for j, ps in enumerate(path):
        here = f"{where}.path[{j}]"
        if ps.at not in points:
            raise RigFileError(f'point "{ps.at}" does not exist', where=here)
        if points[ps.at].kind == "person":
            raise RigFileError(f'"{ps.at}" marks a person, not part of the rig; a rope cannot pass there',
                               where=here)
        if j > 0 and path[j - 1].at == ps.at:
            raise RigFileError(f'passes point "{ps.at}" twice in a row (path[{j - 1}] is there too)', where=here)
        if j == 0 and ps.how != "tied":
            raise RigFileError(f'a rope must start tied (knot or rope grab), not "{ps.how}"', where=f"{here}.how")
        if ps.how == "hauled" and j != n - 1:
            raise RigFileError('only the last pass can be "hauled" (the end the haul team pulls)',
                               where=f"{here}.how")
        if j == n - 1 and ps.how not in ("tied", "hauled"):
            raise RigFileError(f'a rope must end tied or hauled, not "{ps.how}"', where=f"{here}.how")
        if ps.how not in m.PASS_HOWS:
            raise RigFileError(f'unknown pass kind "{ps.how}"', where=f"{here}.how")
        _check_pass_hardware(rig, ps, f"{here}.hardware")
        _check_weak_link(rig, ps, here)


def _check_pass_hardware(rig: m.Rig, ps: m.Pass, where: str) -> None:
    _check_capture_grab(rig, ps, where.rsplit(".", 1)[0] + ".grab")
    if ps.how in ("pulley", "edge", "capture") and not ps.hardware:
        what = "which pulley or carabiner" if ps.how != "edge" else "which edge (rock, concrete, ...)"
        raise RigFileError(f"a {ps.how} pass must name its hardware ({what})", where=where)
    if not ps.hardware:
        return
    hw = _hardware(rig, ps.hardware)
    if hw is None:
        raise RigFileError(f'hardware "{ps.hardware}" is neither in this file\'s hardware nor in the built-in '
                           "library", where=where)
    if ps.how == "edge" and hw.kind != "edge":
        raise RigFileError(f'"{hw.id}" is a {hw.kind}; an edge pass needs an edge spec', where=where)
    if ps.how in m.SHEAVE_HOWS and hw.kind in ("edge", "grab"):
        raise RigFileError(f'"{hw.id}" is a {hw.kind}; a {ps.how} pass needs a pulley, carabiner or ring', where=where)
    if ps.how in m.SHEAVE_HOWS and hw.efficiency is None:
        raise RigFileError(f'"{hw.id}" has no efficiency, so it cannot be used as a pulley', where=where)
    if ps.how == "edge" and hw.friction_coefficient is None:
        raise RigFileError(f'"{hw.id}" has no friction_coefficient, so it cannot be used as an edge', where=where)


def _check_capture_grab(rig: m.Rig, ps: m.Pass, where: str) -> None:
    """A pass's ``grab``: only on a progress capture, and a rope grab spec."""
    if ps.grab is None:
        return
    if ps.how != "capture":
        raise RigFileError(f'only a progress capture ("how": "capture") holds the rope with a grab, not a "{ps.how}" '
                           "pass", where=where)
    hw = _hardware(rig, ps.grab)
    if hw is None:
        raise RigFileError(f'rope grab "{ps.grab}" is neither in this file\'s hardware nor in the built-in library',
                           where=where)
    if hw.kind != "grab":
        raise RigFileError(f'"{hw.id}" is a {hw.kind}; a capture holds with a rope grab', where=where)


def _check_weak_link(rig: m.Rig, ps: m.Pass, where: str) -> None:
    """A termination or a rope grab belongs on a tied pass, and a termination must be one we know."""
    from solver.weak_links import TERMINATIONS

    if ps.termination is not None:
        if ps.termination not in TERMINATIONS:
            raise RigFileError(f'unknown termination "{ps.termination}"; use one of {", ".join(TERMINATIONS)}',
                               where=f"{where}.termination")
        if ps.how != "tied":
            raise RigFileError(f'a termination says how the rope is tied at a point; this pass is "{ps.how}"',
                               where=f"{where}.termination")
    hw = _hardware(rig, ps.hardware) if ps.hardware else None
    if hw is not None and hw.kind == "grab" and ps.how != "tied":
        raise RigFileError(f'"{hw.id}" is a rope grab: it holds the rope where it is tied (how "tied"), '
                           f'not as a "{ps.how}" pass', where=f"{where}.hardware")


def _check_site(site: m.Site, base_dir: str | os.PathLike[str] | None) -> None:
    for i, feat in enumerate(site.features):
        here = f"site.features[{i}]"
        if feat.polygon is not None and feat.line is not None:
            raise RigFileError("give a polygon or a line, not both", where=here)
        if feat.polygon is None and feat.line is None:
            raise RigFileError("needs a polygon or a line to draw", where=here)
        if feat.line is not None and len(feat.line) < 2 and feat.kind != "note":
            raise RigFileError(f"a line needs at least 2 points, has {len(feat.line)}", where=f"{here}.line")
        if feat.polygon is not None and len(feat.polygon) < 3:
            raise RigFileError(f"a polygon needs at least 3 points, has {len(feat.polygon)}",
                               where=f"{here}.polygon")
        _raise_problem(water_feature_problem(feat), here)
        for key in ("polygon", "line"):
            for k, (x, y) in enumerate(getattr(feat, key) or ()):
                _check_coordinate(x, f"{here}.{key}[{k}][0]")
                _check_coordinate(y, f"{here}.{key}[{k}][1]")
    img = site.image
    if img is None:
        return
    if img.file is not None and img.data_base64 is not None:
        raise RigFileError("give the image as file or as data_base64, not both", where="site.image")
    if img.file is None and img.data_base64 is None:
        raise RigFileError("needs file (a picture beside the rig file) or data_base64 (embedded)",
                           where="site.image")
    if img.file is not None:
        _check_image_file(img.file, base_dir)
    if img.data_base64 is not None:
        try:
            data = base64.b64decode("".join(img.data_base64.split()), validate=True)
        except (binascii.Error, ValueError):
            raise RigFileError("the embedded image is not valid base64 data", where="site.image.data_base64") \
                from None
        if not data:
            raise RigFileError("the embedded image is empty", where="site.image.data_base64")
    if not img.metres_per_pixel > 0:
        raise RigFileError(f"must be more than 0, got {img.metres_per_pixel:g}", where="site.image.metres_per_pixel")
    _check_coordinate(img.origin[0], "site.image.origin[0]")
    _check_coordinate(img.origin[1], "site.image.origin[1]")


def _check_image_file(name: str, base_dir: str | os.PathLike[str] | None) -> None:
    """``site.image.file`` must be a relative path that stays inside the rig file's folder."""
    where = "site.image.file"
    if not name or "\x00" in name:
        raise RigFileError("is not a usable file name", where=where)
    if posixpath.isabs(name) or ntpath.isabs(name) or ntpath.splitdrive(name)[0] or name.startswith(("/", "\\")):
        raise RigFileError(f'"{name}" is an absolute path; the image must be named relative to the rig file '
                           "and sit in its folder (or below)", where=where)
    parts = name.replace("\\", "/").split("/")
    if ".." in parts:
        raise RigFileError(f'"{name}" leaves the rig file\'s folder (".."); the image must sit in that folder '
                           "or below it", where=where)
    if base_dir is not None:
        base = pathlib.Path(base_dir).resolve()
        target = (base / name.replace("\\", "/")).resolve()
        if target != base and base not in target.parents:
            raise RigFileError(f'"{name}" leads outside the rig file\'s folder (through a link)', where=where)
