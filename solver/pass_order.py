"""Passes keep their order along their rope: the two-blocking contact is one-sided in arc length.

Two consecutive passes on a rope (a rope grab and the anchor pulley of a Z, a pulley and a
knot) may close up to their minimum spacing ``s_min`` and no further.  Measured as the
straight distance between them, that contact is a disc: a Newton step that jumps the grab
right across the pulley lands outside the disc again, where nothing pushes back, and the
solver reports a state in which the grab sits beyond the pulley -- the anchor pulled away
from the load and the load over-loaded by the stretch of a rope that has been pulled past
its anchor.

Here each piece carries an *order direction* ``r`` (unit vector, from its first pass toward
its second), and the contact measures the piece's length *along* it, ``gap = (x_b - x_a) · r``,
pushing with ``k_c · max(s_min - gap, 0)`` along ``r``: a signed separation in arc length.  A
pass carried across its neighbour has a negative gap and is pushed back the way it came,
however far it jumped, and the Newton line searches refuse any trial step that leaves a pass
beyond its neighbour (:func:`crossed`), so even the softened contact of the jammed-pass
continuation cannot be stepped through.

``r`` follows each piece from accepted state to accepted state: a piece clear of its contact
along ``r`` (longer than ``SHORT`` × its spacing) takes its own direction; a piece at or near
its contact takes it only when it turned by less than 60° (a jammed pair rolling round as one
body, as a pulley run into a knot swings on its rope), never the flip of a jump.  At the
solution ``r`` is then the piece's own direction and the contact pushes along the line between
the two passes.  ``start`` sets the directions where a Newton iteration starts (the drawing,
a warm start or an earlier stage's accepted answer: each in order; a piece at its contact keeps
its direction, which a pass pushed right onto its neighbour no longer shows); ``follow``
carries them after each accepted step.  Both replace the array, never change it in place.
"""

from __future__ import annotations

from typing import Any

import numpy as np

#: solver.assembly's System and State (not imported: assembly uses this module)
System = State = Any

#: A piece shorter than SHORT x its minimum spacing (along its approach) is at or near its contact.
SHORT = 2.0
#: Near its contact a piece follows its own direction when it turned by less than acos(FOLLOW_COS) = 60 deg
#: since the last accepted state: a jammed pair rolls round as one body; a bigger turn is a jump across.
FOLLOW_COS = 0.5
#: Pieces all within acos(QUIET_COS) = 5 deg of their order directions and clear of contact need no update
#: (a piece's turn is measured from its order direction, so small turns add up until one is carried).
QUIET_COS = 0.9962


def unit_rows(d: np.ndarray, fallback: np.ndarray | None = None) -> np.ndarray:
    """Rows of ``d`` scaled to unit length; a zero row takes ``fallback``'s row (else +x)."""
    n = np.hypot(d[:, 0], d[:, 1])
    out = np.divide(d, n[:, None], out=np.zeros(d.shape), where=(n > 0)[:, None])
    zero = n <= 0
    if zero.any():
        out[zero] = fallback[zero] if fallback is not None else np.array([1.0, 0.0])
    return out


def drawn(xy0: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Order directions of the drawing: each piece from its first pass toward its second."""
    return unit_rows(xy0[b] - xy0[a])


def _dot(u: np.ndarray, r: np.ndarray) -> np.ndarray:
    return np.einsum("ij,ij->i", u, r)


def cosines(s: System, u: np.ndarray) -> np.ndarray:
    """Per piece: the cosine between its direction ``u`` and its order direction."""
    return _dot(u, s.order_ref)


def _update(s: System, l: np.ndarray, u: np.ndarray, c: np.ndarray | None = None) -> bool:
    """Move the directions to pieces of lengths ``l`` and directions ``u``; True if a short piece's changed.

    A piece clear of its contact along its order direction takes its own direction; a piece near
    its contact takes it only when it turned by less than 60 deg (rolling round its neighbour), else
    it keeps the last one: it has been carried across, and the contact pushes it back.
    """
    r = s.order_ref
    if c is None:
        c = _dot(u, r)
    short = SHORT * s.s_min
    if c.min() > QUIET_COS and not (l < short).any():
        return False  # every piece within a few degrees of its order and clear of its contact: nothing to carry
    clear = l * c >= short
    near = ~clear & (l > 0) & (c > FOLLOW_COS)
    take = (clear | near) & (c < 1.0)
    if not take.any():
        return False
    s.order_ref = np.where(take[:, None], u, r)
    return bool((near & take).any())


def start(s: System, x: np.ndarray) -> None:
    """Order directions from the positions at free coordinates ``x`` (m), where an iteration starts
    (the drawing, a warm start or an earlier stage's accepted answer: each in order)."""
    if not s.n_pieces:
        return
    xy = s.positions(x)
    d = xy[s.b] - xy[s.a]
    l = np.hypot(d[:, 0], d[:, 1])
    u = unit_rows(d, s.order_ref)
    # a piece clear of its contact by its own length takes its own direction, however far it turned from
    # the last one: a warm start (a free end swung round its anchor by a new force) is an answer, not a jump
    clear = l >= SHORT * s.s_min
    if clear.any():
        s.order_ref = np.where(clear[:, None], u, s.order_ref)
    _update(s, l, u)


def gap(s: System, l: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Each piece's length along its order direction, m (negative when its passes have crossed)."""
    return l * _dot(u, s.order_ref)


def follow(s: System, st: State) -> bool:
    """Carry the order directions to accepted state ``st``; True when a piece near its contact changed
    direction (the state's contact forces were then worked out along the old one: evaluate it again)."""
    if not s.n_pieces:
        return False
    return _update(s, st.l, st.u, st.order_cos) and st.closed


def crossed(s: System, st: State) -> np.ndarray:
    """Per free part: True when a trial state has a pass beyond its neighbour (a piece pointing against its
    order direction).  The Newton line searches refuse such a step and try a shorter one, so a pass is
    never carried across its neighbour, however soft the contact of the moment."""
    out = np.zeros(s.n_comp, dtype=bool)
    if not s.n_pieces or not st.closed:
        return out
    bad = s.contact_on & (gap(s, st.l, st.u) < 0.0)
    if bad.any():
        out[s.piece_comp[bad]] = True
    return out
