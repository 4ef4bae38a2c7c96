"""Building a big rig file's objects quickly: one prepared reader per kind of object.

A 10,000-point rig file holds ~100,000 JSON objects (points, forces, ropes, their passes and
rigging); reading each key by key through the general reader cost about a third of the load.
:func:`object_reader` prepares, once per dataclass and field spec, the conversions and defaults,
and then builds an object from a checked JSON object in a few dictionary operations.  It
answers None for what it does not handle (an unknown key, a field kind other than text and plain
numbers, a class with a ``__post_init__``): the general reader, which words every problem, reads
those.  Equal objects and equal remembered keys either way: ``tests/solver/test_rigfile_fast_paths.py``.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Any, Callable

from solver import model as m
from solver.bulk_read import plain_defaults

#: Field kinds (rigfile's spec kinds) read here, and how the value is converted ("str" is kept as is).
_CONVERT: dict[str, Callable[[Any], Any]] = {"float": float, "int": int, "bool": bool}

_NONE: list[str] = []  # no key at its default (shared, never changed: readers return it, callers only test it)

#: A reader: the checked JSON object -> (the dataclass, the optional keys given at their default), or None.
Reader = Callable[[dict], "tuple[Any, list[str]] | None"]


@lru_cache(maxsize=None)
def object_reader(cls: type, spec: tuple[tuple[str, str, Any], ...], required: object,
                  supplied: frozenset[str] = frozenset()) -> Reader | None:
    """A reader of ``cls`` objects whose JSON keys are all in ``spec`` ((key, kind, default), ``required``
    marking a key every object has), or None when ``cls`` or ``spec`` needs the general reader.

    The object gets a fresh empty ``extra`` (no unknown keys); a key the JSON object lacks keeps the
    dataclass default; the fields named in ``supplied`` the caller sets on the new object itself.
    """
    plain = plain_defaults(cls)
    if plain is None or any(kind != "str" and kind not in _CONVERT for _, kind, _ in spec):
        return None
    defaults, needed = plain
    known = frozenset(key for key, _, _ in spec)
    must_have = needed - {"extra"} - supplied
    if not must_have <= known:
        return None
    convert = {key: _CONVERT[kind] for key, kind, _ in spec if kind != "str"}
    converted = frozenset(convert)
    optional = {key: default for key, _, default in spec if default is not required and key not in supplied}
    has_default = frozenset(optional)
    new = object.__new__

    def read(x: dict) -> tuple[Any, list[str]] | None:
        keys = x.keys()
        if not keys <= known or not must_have <= keys:
            return None
        obj = new(cls)
        values = obj.__dict__
        values.update(defaults)
        values.update(x)
        values["extra"] = {}
        if not converted.isdisjoint(keys):
            for key in converted & keys:
                values[key] = convert[key](values[key])
        if has_default.isdisjoint(keys):
            return obj, _NONE
        return obj, [key for key in has_default & keys if values[key] == optional[key]]

    return read


def rope_reader(rope_spec: tuple[tuple[str, str, Any], ...], pass_spec: tuple[tuple[str, str, Any], ...],
                rigging_spec: tuple[tuple[str, str, Any], ...], required: object,
                remember: Callable[[Any, list[str]], Any]) -> Reader | None:
    """A reader of whole ropes (their passes and rigging too) with known keys only, or None.

    ``remember(obj, keys)`` notes the optional keys an object gave at their default (the
    rig reader's memory for saving).  A rope given both ``slack_m`` and ``pretension_N``, a
    rope or rigging at its default that the file spelled out, or anything else unusual answers
    None: the general reader reads it and words any problem.
    """
    read_pass = object_reader(m.Pass, pass_spec, required)
    read_rigging = object_reader(m.Rigging, rigging_spec, required)
    read_rope = object_reader(m.Rope, rope_spec + (("path", "str", required), ("rigged", "str", None)), required,
                              frozenset({"path", "rigged"}))
    if read_pass is None or read_rigging is None or read_rope is None:
        return None
    pass_defaults = plain_defaults(m.Pass)[0]
    new = object.__new__
    Pass = m.Pass
    absent = object()

    def read(d: dict) -> tuple[Any, list[str]] | None:
        rigged = d.get("rigged", absent)
        if rigged is absent:
            rigged = read_rigging({})[0]  # a fresh default rigging, as the general reader makes one
        else:
            if type(rigged) is not dict or "slack_m" in rigged and "pretension_N" in rigged:
                return None
            got = read_rigging(rigged) if rigged else None  # {} is the default rigging, spelled out
            if got is None or got[1]:
                return None
            rigged = got[0]
        path = []
        for x in d["path"]:
            if type(x) is dict and len(x) == 1 and "at" in x:  # the common pass, {"at": id}: built here
                ps = new(Pass)
                values = ps.__dict__
                values.update(pass_defaults)
                values["at"] = x["at"]
                values["extra"] = {}
                path.append(ps)
                continue
            got = read_pass(x)
            if got is None:
                return None
            path.append(remember(*got) if got[1] else got[0])
        got = read_rope(d)
        if got is None or got[1]:
            return None
        rope = got[0]
        values = rope.__dict__
        values["path"] = tuple(path)
        values["rigged"] = rigged
        return got

    return read


def read_all(items: list, read: Reader | None, remember: Callable[[Any, list[str]], Any],
             slow: Callable[[int, Any], Any]) -> tuple:
    """Every item read by ``read`` (a reader of :func:`object_reader`), the ones it declines by ``slow(index, item)``.

    ``remember(obj, keys)`` notes the keys an object gave at their default.
    """
    if read is None:
        return tuple(slow(i, x) for i, x in enumerate(items))
    out = []
    append = out.append
    for i, x in enumerate(items):
        got = read(x) if type(x) is dict else None
        if got is None:
            append(slow(i, x))
        elif got[1]:
            append(remember(*got))
        else:
            append(got[0])
    return tuple(out)
