"""Everything the solver remembers from one call to the next, in one place: bounded, thread-safe, and never a
change to a number.

A rig is re-solved on every drag step, by the GUI thread and by the worker thread, often at once.  What
is kept between solves, and why:

* the index arrays of a rig's structure (:data:`TOPOLOGIES`) and stretch curves (:data:`CURVES`): a moved
  or re-forced copy of a rig skips the compile of what did not change;
* the compiled Systems of the last rigs solved (:data:`COMPILED`), **one list per thread**: a System
  carries the scratch of the solve running on it (its softening during a soft start, the last run
  tensions), so two threads must never solve the same System object at once; a rig of the same structure
  drawn at bit for bit the same coordinates (a force slider) takes the drawing's read-only arrays of the
  System it matched (``compile.DRAWING_FIELDS``) instead of building them again;
* small per-structure index maps (:data:`SIZE_GROUPS`, :data:`PART_PATTERNS`);
* a :class:`Trail` per sequence of related solves in moving water (the live drag's is :data:`LIVE_TRAIL`): the
  last two settled states, each cut rope's last bow and the cut parts' lengths, where the next warm step of
  the same sequence starts its outer rounds (``solver.water_predict``), never a change to where they stop.
  A trail is read only by a solve handed it (``solve(..., trail=)``): a solve given none (a failure scan,
  danger zones, a report, the CLI) depends on its arguments alone, never on what was solved before it;
* the records of the last Result (:data:`POINT_ROWS` ... :data:`LAST_HAUL`): a drag step moves one part
  of the rig, and every record whose numbers are bit for bit those of the last Result of the same
  structure is handed on as the same object, so that the overlay recognises what did not move by
  identity and redraws only the moved part.  The objects handed on are immutable and equal to the
  ones a fresh solve makes; only their identity is shared.  They stay in the solver, not the
  sketchpad, because only here are the rows compared as raw arrays before any record is made: the
  sketchpad could only compare finished records field by field, paying for every record twice.

Every cache here is bounded, holds immutable values (or values its users never change), and is
safe under threads: a lock guards each read-modify-write, and a value is looked up and used from a
local snapshot, so another thread's replacement can cost a reuse but never give a wrong value.
Each is tested equal to a fresh computation (tests/solver/test_record_reuse.py, test_recompile.py,
test_threads.py).  :func:`forget_all` empties every one (tests, and a fresh start); :func:`stats`
tells their sizes and how solves were served, so tests check behaviour without reading the contents.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from typing import Any, Hashable

import numpy as np


class Bounded:
    """A dict of at most ``size`` entries, the least recently used dropped first; every call holds a lock."""

    def __init__(self, size: int) -> None:
        self.size = size
        self._items: OrderedDict[Hashable, Any] = OrderedDict()
        self._lock = threading.Lock()

    def get(self, key: Hashable) -> Any:
        """The value under ``key`` (now the most recent), or None."""
        with self._lock:
            value = self._items.get(key)
            if value is not None:
                self._items.move_to_end(key)
            return value

    def put(self, key: Hashable, value: Any) -> None:
        with self._lock:
            self._items[key] = value
            self._items.move_to_end(key)
            while len(self._items) > self.size:
                self._items.popitem(last=False)

    def clear(self) -> None:
        with self._lock:
            self._items.clear()

    def __len__(self) -> int:
        return len(self._items)


class LastOf:
    """One value remembered with the objects it was made from, handed back only for those very objects.

    The value and its keys are one tuple, replaced whole (an atomic reference): a reader compares
    the keys of the snapshot it took, so it never pairs one call's keys with another's value.
    """

    def __init__(self) -> None:
        self._last: tuple | None = None

    def get(self, *keys: Any) -> Any:
        """The value kept for exactly these key objects (compared by identity), else None."""
        last = self._last
        if last is not None and len(last[0]) == len(keys) and all(a is b for a, b in zip(last[0], keys)):
            return last[1]
        return None

    def snapshot(self) -> tuple | None:
        """(keys, value) as last kept, or None: for keys compared otherwise than by identity."""
        return self._last

    def put(self, keys: tuple, value: Any) -> None:
        self._last = (keys, value)

    def forget(self) -> None:
        self._last = None


class PerThreadRecent:
    """The ``size`` most recent entries, kept separately for each thread (most recent first)."""

    def __init__(self, size: int) -> None:
        self.size = size
        self._local = threading.local()
        self._generation = 0  # clear() raises it: every thread's list is dropped on its next use

    def entries(self) -> list:
        """This thread's list (most recent first); callers read it, and change it only through :meth:`add`."""
        local = self._local
        if getattr(local, "generation", None) != self._generation:
            local.items, local.generation = [], self._generation
        return local.items

    def add(self, entry: Any) -> None:
        items = self.entries()
        items.insert(0, entry)
        del items[self.size:]

    def clear(self) -> None:
        self._generation += 1
        self.entries()

    def __getitem__(self, i: int) -> Any:
        return self.entries()[i]

    def __len__(self) -> int:
        return len(self.entries())


#: Fewer rows than this are made afresh every time rather than kept: for a handful of records the
#: comparison costs more than the records (~12 us a memo against ~2 us for a 3-point rig's, measured on
#: the 500-step vector-pull sweep, where a kept record is never reused).
MIN_ROWS = 8


class LastRows:
    """What the last Result of one structure made from each row of an array (records, tuples, numbers).

    A drag step re-solves the whole rig but moves only the dragged part: a row whose bit pattern
    is unchanged (-0.0 and 0.0 differ, as they print) keeps the last Result's object, so only the
    moved part's objects are made again, and the overlay can recognise the rest by identity.
    Thread-safe as :class:`LastOf`: one tuple, read once, replaced whole.
    """

    def __init__(self) -> None:
        self._last: tuple | None = None

    def changed(self, key: tuple, rows: np.ndarray) -> tuple[list | None, np.ndarray | None]:
        """(the last values, per row whether its bits changed) when ``key`` is the last call's -- objects the
        same, numbers equal -- and the rows line up; else (None, None): make every value afresh."""
        last = self._last
        if last is None or last[1].shape != rows.shape or len(last[0]) != len(key) or not all(
                a is b or (isinstance(a, (int, float, tuple)) and a == b) for a, b in zip(last[0], key)):
            return None, None
        return last[2], (np.ascontiguousarray(rows).view(np.int64) != last[1]).any(axis=1)

    def keep(self, key: tuple, rows: np.ndarray, values: list) -> None:
        """Remember ``values`` made from ``rows`` (float, one row per value's inputs) under ``key``; fewer than
        MIN_ROWS rows are not kept (see there)."""
        self._last = (key, np.ascontiguousarray(rows).view(np.int64).copy(), values) if len(rows) >= MIN_ROWS else None

    def forget(self) -> None:
        self._last = None


class Tally:
    """How often each way of getting a value was taken, by name; thread-safe (read through :func:`stats`)."""

    def __init__(self) -> None:
        self._counts: dict[str, int] = {}
        self._lock = threading.Lock()

    def add(self, what: str) -> None:
        with self._lock:
            self._counts[what] = self._counts.get(what, 0) + 1

    def counts(self) -> dict[str, int]:
        with self._lock:
            return dict(self._counts)


#: Stretch curves of recently compiled materials, by stretch table (a curve is never modified).
CURVES = Bounded(64)
#: Index arrays of recently compiled structures (solver.structure.finish_topology), by structure key.
TOPOLOGIES = Bounded(16)
#: (rig, motion, System, Topology) of the last rigs this thread solved (solver.equilibrium).
COMPILED = PerThreadRecent(4)
#: How each solve got its System (solver.equilibrium): "same rig" (this thread solved that Rig object last),
#: "same structure" (geometry rebuilt on kept index arrays: a drag step), "new forces" (forces rebuilt too: a
#: force slider), "compiled" (compiled afresh).  Counted since the process started; forget_all leaves it.
SYSTEM_SOURCES = Tally()
#: Per structure: the points of each part gathered for its size (solver.structure.component_sizes).
SIZE_GROUPS = LastOf()
#: Per structure (its tangent pattern): {part: PartPattern} (solver.tangent.part_pattern).
PART_PATTERNS = LastOf()
#: The records of the last Result (solver.records): position tuples per structural point, SegmentResult
#: per piece, AnchorResult per fixed anchor and per load point, turn per middle pass.
POINT_ROWS = LastRows()
SEGMENT_ROWS = LastRows()
ANCHOR_ROWS = LastRows()
LOAD_ROWS = LastRows()
TURN_ROWS = LastRows()
#: (hauled runs, their haul points, haul forces) and the haul dict of the last Result.
LAST_HAUL = LastOf()

RESULT_ROWS = (POINT_ROWS, SEGMENT_ROWS, ANCHOR_ROWS, LOAD_ROWS, TURN_ROWS)


def forget_results() -> None:
    """Drop the records of the last Result: the next Result makes every record afresh."""
    for rows in RESULT_ROWS:
        rows.forget()
    LAST_HAUL.forget()


def forget_all() -> None:
    """Drop everything remembered: the next solve computes everything afresh (the same numbers)."""
    forget_results()
    for cache in (CURVES, TOPOLOGIES, COMPILED):
        cache.clear()
    SIZE_GROUPS.forget()
    PART_PATTERNS.forget()
    LIVE_TRAIL.forget()


def stats() -> dict[str, Any]:
    """What is remembered now and how it served: ``sizes`` maps each bounded cache to (entries, limit) (the
    compiled Systems: this thread's), ``systems`` counts how solves got their System (:data:`SYSTEM_SOURCES`).

    For tests and diagnostics: they read the caches' behaviour here, never the caches' contents.
    """
    return {
        "sizes": {"curves": (len(CURVES), CURVES.size), "topologies": (len(TOPOLOGIES), TOPOLOGIES.size),
                  "compiled": (len(COMPILED), COMPILED.size)},
        "systems": SYSTEM_SOURCES.counts(),
    }


class Trail:
    """What one sequence of related water solves (a live drag, one pull-needed search, one sweep) keeps for its next
    warm step: the last two settled states (oldest first), the last bow of each cut rope and the cut parts' lengths.

    Explicit by design: a solve reads a trail only when handed one, and a sequence that must give the same numbers
    every time it runs (a pull-needed search, a sweep) starts a new one, so its answers depend on its own steps
    alone.  Bounded (64 bows, 1,024 lengths) and thread-safe: each value is replaced whole under a lock and read
    from a snapshot, so two threads sharing the live trail can cost each other a good start, never a wrong answer.
    """

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._states: tuple = ()
        self.bows = Bounded(64)  # (rope, piece) -> (chord fractions, offsets from the chord m): solver.water
        self._lengths: dict[str, float] = {}  # augmented rope -> unstretched length m (solver.water_slide)

    def states(self) -> tuple:
        """() before anything was kept, (newest,) after one state, else (older, newest)."""
        return self._states

    def keep_state(self, state: Any) -> None:
        with self._lock:
            self._states = (*self._states[-1:], state)

    def lengths(self) -> dict[str, float]:
        """The kept lengths of the sliding runs' cut parts (a copy)."""
        with self._lock:
            return dict(self._lengths)

    def keep_lengths(self, lengths: dict[str, float]) -> None:
        with self._lock:
            if len(self._lengths) > 1024:
                self._lengths = {}
            self._lengths = {**self._lengths, **lengths}

    def forget(self) -> None:
        """Forget everything kept: the next step starts cold."""
        with self._lock:
            self._states, self._lengths = (), {}
        self.bows.clear()


#: The live drag's trail (sketchpad.live_solve): every drag step and settled analysis of the drawn rig reads and
#: keeps it, on whichever thread it runs.  No other solve touches it.
LIVE_TRAIL = Trail()
