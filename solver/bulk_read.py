"""Reading big rig files fast: the collector paused, a quick plain-data walk, dataclasses filled in one step.

A 10,000-point rig file is ~100,000 JSON objects and ~80,000 frozen dataclasses; these
helpers keep :mod:`solver.rigfile` linear and quick on it without changing what it builds
or which problems it finds (``tests/solver/test_rigfile_fast_paths.py``).
"""

from __future__ import annotations

import dataclasses
import gc
import math
import threading
from contextlib import contextmanager
from functools import lru_cache
from typing import Any, Iterator

_gc_lock = threading.Lock()
_gc_pauses = 0  # loads under way with the collector paused
_gc_resume = False  # whether the first of them found it enabled


@contextmanager
def collector_paused() -> Iterator[None]:
    """Automatic cyclic garbage collection off while a rig is read, back as it was after.

    A 10,000-point rig file makes ~300,000 containers; the collector would otherwise run a
    few hundred young and several full collections over them (about half the load time).
    Nothing read makes reference cycles, so reference counting frees it all the same.
    Thread-safe: concurrent loads count themselves, and the last one out restores the state
    the first one found.

    The collector is switched back on with the new rig's objects young, as Python made them: moving
    every object of the process to the oldest generation instead (``gc.freeze`` then ``gc.unfreeze``,
    about a seventh of a big load) changed when the GUI's garbage is collected, and a test window's
    undo stack collected later crashed in Qt; the time is not worth that.
    """
    global _gc_pauses, _gc_resume
    with _gc_lock:
        if _gc_pauses == 0:
            _gc_resume = gc.isenabled()
            gc.disable()
        _gc_pauses += 1
    try:
        yield
    finally:
        with _gc_lock:
            _gc_pauses -= 1
            if _gc_pauses == 0 and _gc_resume:
                gc.enable()


def plain_data_ok(d: Any, duplicate: object) -> bool:
    """True when ``rigfile_precheck._check_plain_data`` has nothing to say about ``d`` (no paths kept: fast).

    Every number finite and within float range, every text valid Unicode, no object holding
    the ``duplicate`` marker key (a key given twice), nothing but the types JSON makes.
    """
    stack = [d]
    pop, extend = stack.pop, stack.extend
    isfinite = math.isfinite
    while stack:
        value = pop()
        kind = type(value)
        if kind is dict:
            if duplicate in value:
                return False
            for k in value:
                if not k.isascii() and not _encodes(k):
                    return False
            extend(value.values())
        elif kind is list:
            extend(value)
        elif kind is float:
            if not isfinite(value):
                return False
        elif kind is str:
            if not value.isascii() and not _encodes(value):
                return False
        elif kind is int:
            if abs(value) > 1e300:
                return False
        elif kind is not bool and value is not None:
            return False  # not a type JSON makes: let the full walk decide
    return True


def _encodes(s: str) -> bool:
    try:
        s.encode("utf-8")
    except UnicodeEncodeError:
        return False
    return True


@lru_cache(maxsize=None)
def plain_defaults(cls: type) -> tuple[dict[str, Any], frozenset[str]] | None:
    """(fields with a plain default and their values, fields that must be given) of a frozen dataclass,
    or None when only its ``__init__`` may build it (it has a ``__post_init__``)."""
    if hasattr(cls, "__post_init__"):
        return None
    defaults: dict[str, Any] = {}
    needed: set[str] = set()
    for f in dataclasses.fields(cls):
        if f.default is not dataclasses.MISSING:
            defaults[f.name] = f.default
        else:  # no default, or a default_factory: the caller gives it
            needed.add(f.name)
    return defaults, frozenset(needed)


def filled(cls: type, kwargs: dict[str, Any]) -> Any:
    """``cls(**kwargs)`` for a frozen dataclass, filled in one step when every field without a plain
    default is given (a big rig file has ~80,000 objects; the frozen ``__init__`` sets field by field)."""
    plain = plain_defaults(cls)
    if plain is None or not plain[1] <= kwargs.keys() or not kwargs.keys() <= _field_names(cls):
        return cls(**kwargs)
    obj = object.__new__(cls)
    obj.__dict__.update(plain[0])
    obj.__dict__.update(kwargs)
    return obj


@lru_cache(maxsize=None)
def _field_names(cls: type) -> frozenset[str]:
    return frozenset(f.name for f in dataclasses.fields(cls))
