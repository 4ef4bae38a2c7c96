"""Read and write rig files (``*.rig.json``, rig-format.md version 1) as frozen :class:`~solver.model.Rig`.

Loading is: bytes -> UTF-8 text -> JSON -> format/version check -> :func:`migrate`
-> every number finite -> JSON Schema (``schema/rig-v1.schema.json``, draft
2020-12) -> dataclasses -> the cross-checks a schema cannot do (ids unique,
references exist, path rules, stretch tables, image path).  Every problem is a
:class:`~solver.errors.RigFileError` whose ``where`` is the field path in the
format's own terms (``ropes[2].path[3]``) and whose message a rigger can act on.
Files are data only: JSON is parsed, never evaluated; size is capped.

Saving writes only what the rig holds: a field that was in the loaded file is
written back, a field still at its default that was not in the file is left out,
unknown keys are written back, floats use ``repr`` so ``load(save(x)) == x``
exactly.  Saving embeds every library material and hardware spec the rig uses
(rig-format.md: "saving embeds every spec the rig uses"), checks that the text
loads back, and replaces the file atomically (temp file, fsync, ``os.replace``).
Units are SI throughout, as in the file.
"""

from __future__ import annotations

import base64
import binascii
import json
import logging
import math
import ntpath
import os
import pathlib
import posixpath
import re
import tempfile
import time
import weakref
from dataclasses import replace
from functools import lru_cache
from typing import Any, Callable, Iterable, Mapping, Sequence

from solver import limits, materials
from solver import model as m
from solver.bulk_build import object_reader, read_all, rope_reader
from solver.bulk_checks import all_unique, points_to_check, ropes_to_check
from solver.bulk_read import collector_paused, filled, plain_data_ok
from solver.rigfile_schema import check_schema as _check_schema
from solver.rigfile_schema import field_path as _where
from solver.rigfile_schema import schema  # noqa: F401 - part of this module's API (__all__)
from solver.rigfile_schema import show_value as _show
from solver.rigfile_schema import too_many
from solver.errors import RigFileError
from solver.water_site import water_feature_problem, wetted_point_problem

try:
    import fcntl
except ImportError:  # pragma: no cover - not POSIX
    fcntl = None  # type: ignore[assignment]

log = logging.getLogger(__name__)

FORMAT = "ropewright-rig"
#: The version this module reads and writes.
VERSION = 1
#: Largest rig file read or written, bytes, embedded background image included.
MAX_FILE_BYTES = limits.MAX_FILE_BYTES
#: Largest distance of any point or site coordinate from the site origin, m: a
#: sanity bound far beyond any rescue site (ours, not from a standard; in the schema).
MAX_COORDINATE_M = limits.MAX_COORDINATE_M
#: Prefix and suffix of the hidden temp file a save writes beside the rig before renaming it.
TEMP_PREFIX, TEMP_SUFFIX = ".", ".tmp"
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


# --------------------------------------------------------------------------------------
# Public API


def load_rig(path: str | os.PathLike[str], strict: bool = False) -> m.Rig:
    """Read and check the rig file at ``path``; relative image files resolve against its folder."""
    p = pathlib.Path(path)
    try:
        with open(p, "rb") as fh:
            size = os.fstat(fh.fileno()).st_size
            if size > MAX_FILE_BYTES:
                raise _too_big(size)
            data = fh.read(MAX_FILE_BYTES + 1)
    except RigFileError as exc:
        exc.path = str(p)
        raise
    except FileNotFoundError:
        raise RigFileError("there is no such file", where=str(p)) from None
    except IsADirectoryError:
        raise RigFileError("this is a folder, not a rig file", where=str(p)) from None
    except PermissionError:
        raise RigFileError("permission denied: the file cannot be read", where=str(p)) from None
    except OSError as exc:
        raise RigFileError(f"the file cannot be read ({exc.strerror or exc})", where=str(p)) from None
    try:
        return loads_rig(data, base_dir=p.parent, strict=strict)
    except RigFileError as exc:
        exc.path = str(p)
        raise


def loads_rig(text: str | bytes, base_dir: str | os.PathLike[str] | None = None, strict: bool = False) -> m.Rig:
    """Parse rig-file text (str, or bytes that must be UTF-8) into a checked Rig."""
    if isinstance(text, (bytes, bytearray, memoryview)):
        raw = bytes(text)
        if len(raw) > MAX_FILE_BYTES:
            raise _too_big(len(raw))
        text = _decode_utf8(raw)
    elif len(text) > MAX_FILE_BYTES // 4:
        size = len(text.encode("utf-8", "surrogatepass"))
        if size > MAX_FILE_BYTES:
            raise _too_big(size)
    if text.startswith("\ufeff"):  # a byte-order mark some editors add
        text = text[1:]
    with collector_paused():  # parsing and building allocate an object per JSON value, freed by refcount
        data = _parse_json(text)
        rig = rig_from_dict(data, strict=strict, base_dir=base_dir)
        del data  # the parsed tree freed before the collector's next pass would walk it
    if _written_size_bound(text) > MAX_FILE_BYTES:
        size = len(_file_bytes(rig))  # a compact file can grow when written back: it must still fit
        if size > MAX_FILE_BYTES:
            raise _too_big(size, saving=True, opened=True)
    return rig


#: The most characters one JSON value can gain when written back (a number such as 1e15 becomes
#: 1000000000000000.0; a float's repr is at most 24 characters), and room for the library specs
#: saving embeds, bytes.
_GROWTH_PER_VALUE, _SPEC_ALLOWANCE = 23, 1024 * 1024


def _written_size_bound(text: str) -> int:
    """An upper bound of the bytes a save of this text's rig writes (compact when need be), in C-speed counts.

    Written back compact, only numbers can grow, and every JSON value but the first follows a
    "[", "," or ":"; text and structure never grow (UTF-8 text is not escaped).
    """
    values = text.count(",") + text.count("[") + text.count(":") + 1
    return len(text.encode("utf-8", "surrogatepass")) + _GROWTH_PER_VALUE * values + _SPEC_ALLOWANCE


def rig_from_dict(d: Any, strict: bool = False, *, base_dir: str | os.PathLike[str] | None = None) -> m.Rig:
    """Check a parsed rig file (a dict, as from ``json.loads``) and build the Rig.

    ``strict`` refuses unknown keys inside points, ropes, passes, forces, site and
    settings objects; top-level unknown keys are always kept (``Rig.extra``), and so
    are extra properties of material and hardware specs (the library has some).  ``base_dir`` is the rig file's folder, used to
    check that ``site.image.file`` stays inside it.
    """
    if not isinstance(d, dict):
        raise RigFileError(f"a rig file must be one JSON object {{...}}, this one is {_kind_of(d)}",
                           where="(top level)")
    _check_format_and_version(d)
    d = migrate(d)
    _check_sizes(d)
    _check_plain_data(d)
    _check_schema(d)
    rig = _build_rig(d, strict)
    _check_semantics(rig, base_dir)
    return rig


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


def dumps_rig(rig: m.Rig, *, embed: bool = True, compact: bool = False) -> str:
    """The rig as rig-file text: indented (or ``compact``) UTF-8 JSON ending in a newline."""
    layout: dict[str, Any] = {"separators": (",", ":")} if compact else {"indent": 2}
    try:
        return json.dumps(rig_to_dict(rig, embed=embed), ensure_ascii=False, allow_nan=False, **layout) + "\n"
    except ValueError as exc:  # NaN or infinity somewhere in the rig
        raise RigFileError(f"the rig holds a number that is not finite ({exc}); it cannot be saved",
                           where="(rig)") from None
    except TypeError as exc:
        raise RigFileError(f"the rig holds a value that cannot be written to a file ({exc})",
                           where="(rig)") from None


def save_rig(rig: m.Rig, path: str | os.PathLike[str], *, check: bool = True) -> None:
    """Write the rig to ``path`` atomically; the old file stays untouched if anything fails.

    With ``check`` (default) the text is first loaded back, so a file on disk
    always opens again; a rig that would not is refused with the place named.
    A symbolic link is written through: its target is replaced, the link stays.
    Temp files an interrupted save left in that folder are removed first.
    """
    p = write_target(pathlib.Path(path))
    data = _file_bytes(rig)
    if len(data) > MAX_FILE_BYTES:
        raise _too_big(len(data), saving=True)
    if check:
        loads_rig(data, base_dir=p.parent)
    folder = p.parent if str(p.parent) else pathlib.Path(".")
    mode = None
    try:
        mode = os.stat(p).st_mode & 0o7777
    except OSError:
        pass
    clean_stale_temps(folder)
    tmp_name = None
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f"{TEMP_PREFIX}{p.name}.", suffix=TEMP_SUFFIX, dir=folder)
        _hold(fd)  # marks the temp file as in use, so another save's clean-up leaves it alone
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if mode is None:
            umask = os.umask(0)
            os.umask(umask)
            mode = 0o666 & ~umask
        os.chmod(tmp_name, mode)
        os.replace(tmp_name, p)
        tmp_name = None
        _fsync_folder(folder)
    except OSError as exc:
        raise RigFileError(f"the rig could not be saved ({exc.strerror or exc}); the old file, if any, is unchanged",
                           where=str(p)) from None
    finally:
        if tmp_name is not None:
            try:
                os.unlink(tmp_name)
            except OSError:
                log.warning("could not remove the temporary file %s", tmp_name)


def write_target(p: pathlib.Path) -> pathlib.Path:
    """The file a save to ``p`` replaces: the final target when ``p`` is a symbolic link (a chain too)."""
    if not p.is_symlink():
        return p
    return pathlib.Path(os.path.realpath(p))


#: The hidden temp file of a save: "." + rig file name + "." + 8 random characters + ".tmp".
_TEMP_NAME = re.compile(r"^\.(?P<rig>.+\.json)\.[a-z0-9_]{8}\.tmp$")
#: Without locks (not POSIX), a temp file this old (s) is taken as left by a killed save.
_STALE_TEMP_S = 3600.0


def _hold(fd: int) -> None:
    if fcntl is not None:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)


def clean_stale_temps(folder: str | os.PathLike[str]) -> list[str]:
    """Remove the temp files killed saves of rig files left in ``folder``; the names removed.

    Only our own naming is touched, only regular files, and only when no save still writes
    one (a running save holds a lock on its temp file; without locks, when older than an hour).
    """
    removed: list[str] = []
    try:
        names = [e for e in os.scandir(folder) if _TEMP_NAME.match(e.name)]
    except OSError:
        return removed
    for entry in names:
        try:
            if not entry.is_file(follow_symlinks=False):
                continue
            if fcntl is None:
                if time.time() - entry.stat().st_mtime < _STALE_TEMP_S:
                    continue
            else:
                fd = os.open(entry.path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_NOFOLLOW", 0))
                try:
                    fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                except BlockingIOError:
                    continue  # a save is writing it right now
                finally:
                    os.close(fd)
            os.unlink(entry.path)
            removed.append(entry.name)
        except OSError as exc:
            log.info("left the temp file %s: %s", entry.path, exc)
    if removed:
        log.info("removed %d temp file(s) left by an interrupted save in %s", len(removed), folder)
    return removed


def _file_bytes(rig: m.Rig) -> bytes:
    """What a save writes: indented JSON, or compact JSON when the indented text would pass the size cap."""
    data = dumps_rig(rig).encode("utf-8", "surrogatepass")
    if len(data) > MAX_FILE_BYTES:
        data = dumps_rig(rig, compact=True).encode("utf-8", "surrogatepass")
    return data


def migrate(d: dict[str, Any]) -> dict[str, Any]:
    """Bring a parsed rig file of any known version up to :data:`VERSION` (v1 -> v1: unchanged).

    A future v2 adds ``_MIGRATIONS[1]`` converting a v1 dict to v2, and so on.
    """
    version = d.get("version")
    while isinstance(version, int) and version < VERSION:
        step = _MIGRATIONS.get(version)
        if step is None:
            raise RigFileError(f"rig files of version {version} cannot be read", where="version")
        d = step(d)
        version = d.get("version")
    return d


#: version n -> function turning a version-n dict into a version n+1 dict
_MIGRATIONS: dict[int, Callable[[dict[str, Any]], dict[str, Any]]] = {}


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


# --------------------------------------------------------------------------------------
# Bytes and JSON


def _too_big(size: int, saving: bool = False, opened: bool = False) -> RigFileError:
    mb = size / (1024 * 1024)
    limit = MAX_FILE_BYTES // (1024 * 1024)
    verb = "would be" if saving else "is"
    if opened:
        verb = "is written so tightly that saved again it would be"
    return RigFileError(
        f"the rig file {verb} {mb:.1f} MB; a rig file may be at most {limit} MB including an embedded "
        "background image (keep a large image as a file beside the rig instead)",
        where="(file)",
    )


def _decode_utf8(raw: bytes) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        bad = raw[exc.start:exc.start + 1].hex().upper()
        raise RigFileError(
            f"the file is not UTF-8 text (byte 0x{bad} at offset {exc.start}); a rig file is JSON saved as UTF-8 "
            "- is this really a rig file?",
            where=f"line {line}",
        ) from None


_JSON_HINTS = (
    ("Expecting value", "a value is missing or not valid JSON here (a trailing comma, a stray character, "
                        "a decimal comma, or text without double quotes?)"),
    ("Expecting ',' delimiter", "a comma is missing between two items"),
    ("Expecting ':' delimiter", "a colon is missing after a key"),
    ("Expecting property name enclosed in double quotes", "expected a key in double quotes here "
                                                          "(a trailing comma before } ?)"),
    ("Unterminated string", "a text value is not closed with a double quote"),
    ("Invalid control character", "a text value holds a line break or control character; write it as \\n"),
    ("Invalid \\escape", "a backslash escape in a text value is not valid JSON"),
    ("Invalid \\uXXXX escape", "a \\u escape in a text value is not valid JSON"),
    ("Extra data", "unexpected text after the end of the rig object"),
)


def _parse_json(text: str) -> Any:
    """json.loads with errors as RigFileError naming line and column."""
    if not text.strip():
        raise RigFileError("the file is empty", where="line 1, column 1")
    try:
        return json.loads(text, object_pairs_hook=_object_noting_duplicates)
    except json.JSONDecodeError as exc:
        hint = next((h for k, h in _JSON_HINTS if exc.msg.startswith(k)), exc.msg)
        raise RigFileError(f"the file is not valid JSON: {hint}",
                           where=f"line {exc.lineno}, column {exc.colno}") from None
    except RecursionError:
        raise RigFileError("the file is nested too deeply to be a rig file", where="(file)") from None
    except ValueError as exc:  # e.g. an integer with thousands of digits
        raise RigFileError(f"the file holds a value that cannot be read ({exc})", where="(file)") from None


#: Key under which the JSON reader notes a key given twice in one object (not a string,
#: so it can never clash with a key from a file); reported with its path by _check_plain_data.
_DUPLICATE = object()


def _object_noting_duplicates(pairs: list[tuple[str, Any]]) -> dict[Any, Any]:
    out: dict[Any, Any] = dict(pairs)
    if len(out) == len(pairs):
        return out
    seen: set[str] = set()
    for key, _value in pairs:  # a key given twice: note the first repeated one
        if key in seen:
            out[_DUPLICATE] = key
            break
        seen.add(key)
    return out


def _kind_of(value: Any) -> str:
    if value is None:
        return "null"
    if isinstance(value, bool):
        return "true or false"
    if isinstance(value, (int, float)):
        return "a number"
    if isinstance(value, str):
        return "text"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "an object"
    return type(value).__name__


# --------------------------------------------------------------------------------------
# Checks on the parsed dict


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


# --------------------------------------------------------------------------------------
# Building the dataclasses


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
_ROPE_FAST = rope_reader(_ROPE, _PASS, _RIGGING, _REQUIRED, _remember)


# --------------------------------------------------------------------------------------
# Writing the dataclasses


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


# --------------------------------------------------------------------------------------
# Cross-checks on the built Rig


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


def _fsync_folder(folder: pathlib.Path) -> None:
    """Make the rename durable (POSIX); harmless where folders cannot be opened."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


__all__ = [
    "FORMAT", "VERSION", "MAX_FILE_BYTES", "load_rig", "loads_rig", "rig_from_dict", "rig_to_dict",
    "dumps_rig", "save_rig", "write_target", "clean_stale_temps", "migrate", "embed_specs", "check_rig", "schema", "RigFileError",
]
