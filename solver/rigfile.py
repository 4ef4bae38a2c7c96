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

This module is the whole-file pipeline and the public names; the steps live beside it:
``rigfile_json`` (bytes to JSON), ``rigfile_precheck`` (format, version, sizes, plain data),
``rigfile_fields`` (the field tables, keys a file gave), ``rigfile_build`` (dict to dataclasses),
``rigfile_checks`` (cross-checks on the built Rig), ``rigfile_write`` (Rig to dict, embedded specs)
and ``rigfile_save`` (the atomic replacement on disk).
"""

from __future__ import annotations

import json
import os
import pathlib
from typing import Any, Callable

from solver import limits
from solver import model as m
from solver.bulk_read import collector_paused
from solver.errors import RigFileError
from solver.rigfile_build import _build_rig
from solver.rigfile_checks import MAX_COORDINATE_M  # noqa: F401 - re-exported, read by tests and callers
from solver.rigfile_checks import _check_semantics, check_rig
from solver.rigfile_fields import FORMAT, VERSION
from solver.rigfile_json import _decode_utf8, _kind_of, _parse_json
from solver.rigfile_precheck import _check_format_and_version, _check_plain_data, _check_sizes
from solver.rigfile_save import TEMP_PREFIX, TEMP_SUFFIX  # noqa: F401 - re-exported
from solver.rigfile_save import clean_stale_temps, replace_atomically, write_target
from solver.rigfile_schema import check_schema as _check_schema
from solver.rigfile_schema import schema  # noqa: F401 - part of this module's API (__all__)
from solver.rigfile_write import embed_specs, rig_to_dict

#: Largest rig file read or written, bytes, embedded background image included.
MAX_FILE_BYTES = limits.MAX_FILE_BYTES


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
    replace_atomically(p, data)


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


__all__ = [
    "FORMAT", "VERSION", "MAX_FILE_BYTES", "load_rig", "loads_rig", "rig_from_dict", "rig_to_dict",
    "dumps_rig", "save_rig", "write_target", "clean_stale_temps", "migrate", "embed_specs", "check_rig", "schema", "RigFileError",
]
