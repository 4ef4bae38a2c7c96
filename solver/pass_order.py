"""Passes keep their order along their rope, and the spacing contact pushes only along the rope.

The physical model.  Two consecutive passes on a rope where the rope slides through at least one
of them (a rope grab and the anchor pulley of a Z, a ring and the anchor it runs into) are bodies
riding on the rope between them: they may close up to their minimum spacing ``s_min`` and no
further, and when they touch, each pushes the other along the line between them -- the piece of
rope joining them (two bodies in contact push along the line of their centres; any mechanics
text).  The contact is the disc ``l >= s_min`` with force ``k_c · max(s_min - l, 0)`` along the
piece's own direction ``u``: the gradient of ``k_c/2 · pen²``, so every state the solver accepts
is a plain equilibrium of ropes, loads and that push, whatever path the iteration took.

What the disc alone does not keep is the order: a pass can only reach the far side of its
neighbour by going *through* it along the rope (the piece shrinking to nothing and flipping),
yet a Newton step can jump a grab right across its anchor pulley and land outside the disc again,
where nothing pushes back -- the anchor pulled away from the load and the load over-loaded by the
stretch of rope pulled past its anchor.  So each piece carries an *order direction* ``r`` (unit
vector, from its first pass toward its second): the direction it had in the last accepted state.
The Newton line searches refuse any trial step that turns a contact piece by more than 90°
from it (:func:`crossed`) and try a shorter one; a pass may still swing round its neighbour (a
pair rolling round as one body, a ring sliding round an anchor) in steps of less than 90°.
``r`` only ever guards steps: it never enters a force, so it cannot hold a state that is no
equilibrium (it used to carry the contact force, and a remembered direction 74° off the rope
held a ring at a third of its line tension).

Two bare tied passes with no hardware at either (two knots, a knot and the anchor its rope is tied
to) carry no spacing contact: the rope between them has a fixed length, nothing rides on it, and
when it is slack the two are free bodies joined by a rope that folds -- on site they pass each
other side by side.  Taut, their piece is at least its own length apart, far beyond ``s_min``.
So knots on a slack rope may pass; hardware (a pulley, a capture, a grab's pulley) two-blocks,
whether the rope slides through it or is held by it (a Z's grab hauled into the capture pulley
slackens the rope between them and is stopped by the pulley's bulk).

``start`` sets the directions where a Newton iteration starts (the drawing, a warm start or an
earlier stage's accepted answer: each an ordered state); ``follow`` carries them after each
accepted step.  Both replace the array, never change it in place.  :func:`inconsistent` is the
last guard: a solved state with a contact closed where none may act, or across its neighbour.
"""

from __future__ import annotations

from typing import Any

import numpy as np

#: solver.assembly's System and State (not imported: assembly uses this module)
System = State = Any

#: A piece shorter than KEEP x its minimum spacing keeps its last order direction: pushed that far into its
#: neighbour, its own direction no longer shows which side the passes are on.
KEEP = 0.25


def unit_rows(d: np.ndarray, fallback: np.ndarray | None = None) -> np.ndarray:
    """Rows of ``d`` scaled to unit length; a zero row takes ``fallback``'s row (else +x)."""
    n = np.hypot(d[:, 0], d[:, 1])
    out = np.divide(d, n[:, None], out=np.zeros(d.shape), where=(n > 0)[:, None])
    zero = n <= 0
    if np.count_nonzero(zero):
        out[zero] = fallback[zero] if fallback is not None else np.array([1.0, 0.0])
    return out


def drawn(xy0: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Order directions of the drawing: each piece from its first pass toward its second."""
    return unit_rows(xy0[b] - xy0[a])


def _dot(u: np.ndarray, r: np.ndarray) -> np.ndarray:
    return np.einsum("ij,ij->i", u, r)


def contact_pieces(s: System, hardware: np.ndarray) -> np.ndarray:
    """Per piece: True where the spacing contact can act -- ``s.contact_on`` (a free pass at one end) except
    a piece alone in its tied run with no ``hardware`` at either end: two knots (or a knot and its tie-off)
    joined by a rope of fixed length, which fold past each other when it is slack (module docstring)."""
    if not s.n_pieces:
        return s.contact_on
    alone = (~s.run_hauled & (s.run_count == 1))[s.piece_run]
    return s.contact_on & ~(alone & ~hardware)


def _ref(s: System) -> np.ndarray:
    """The order directions in force: the drawing's (:func:`drawn`, made on first use) until an iteration starts."""
    ref = s.order_ref
    if ref is None:
        ref = s.order_ref = drawn(s.xy0, s.a, s.b)
    return ref


def _take(s: System, l: np.ndarray, u: np.ndarray) -> None:
    """Each piece takes its own direction unless it is pushed into its neighbour beyond ``KEEP``."""
    keep = l <= s.keep_len
    # (a state's directions are never changed in place: the order takes the array itself)
    s.order_ref = np.where(keep[:, None], _ref(s), u) if np.count_nonzero(keep) else u


def start(s: System, x: np.ndarray) -> None:
    """Order directions from the positions at free coordinates ``x`` (m), where an iteration starts
    (the drawing, a warm start or an earlier stage's accepted answer: each in order)."""
    if not s.n_pieces:
        return
    xy = s.positions(x)
    d = xy[s.b] - xy[s.a]
    l = np.hypot(d[:, 0], d[:, 1])
    _take(s, l, unit_rows(d, _ref(s)))


def start_at(s: System, st: State) -> None:
    """:func:`start` at an evaluated state's coordinates, from its piece lengths and directions (the same
    numbers: a state's directions are its pieces over their lengths; a zero-length piece takes the last one)."""
    if not s.n_pieces:
        return
    _take(s, st.l, st.u if st.no_zero_length else unit_rows(st.xy[s.b] - st.xy[s.a], _ref(s)))


def gap(s: System, l: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Each piece's length along its order direction, m (negative when its passes have crossed)."""
    return l * _dot(u, _ref(s))


def follow(s: System, st: State) -> bool:
    """Carry the order directions to accepted state ``st``.  False: the state's forces never depend on them
    (kept as a bool so the Newton loops need not re-evaluate)."""
    if s.n_pieces:
        _take(s, st.l, st.u)
    return False


def crossed(s: System, st: State) -> np.ndarray | None:
    """Per free part: True when a trial state has a pass beyond its neighbour (a contact piece turned more than
    90 deg from its order direction since the last accepted state); None when no part has.  The Newton line
    searches refuse such a step and try a shorter one, so a pass is never carried across its neighbour."""
    if not s.n_pieces:
        return None
    # gap = l (u . r) < 0 exactly where u . r < 0: a piece's length is never negative, and a piece of no
    # length has u = 0 (crossed_below: 0 where the contact acts, -inf elsewhere)
    bad = _dot(st.u, _ref(s)) < s.crossed_below
    if not np.count_nonzero(bad):
        return None
    out = np.zeros(s.n_comp, dtype=bool)
    out[s.piece_comp[bad]] = True
    return out


def inconsistent(s: System, st: State) -> np.ndarray:
    """Indices of the pieces whose closed contact is no equilibrium of the model: closed where no contact
    may act, or with its passes crossed over (a piece pointing against its order direction)."""
    if not s.n_pieces or not st.closed:
        return np.zeros(0, dtype=np.intp)
    on = st.pen > 0
    bad = on & (~s.contact_on | (gap(s, st.l, st.u) < 0.0) | (st.l <= 0.0))
    return np.flatnonzero(bad)
