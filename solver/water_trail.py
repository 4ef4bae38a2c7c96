"""The bows a water solve keeps on its trail (:class:`solver.memo.Trail`) and starts the next warm solve from.

A cut rope's bow is kept as its hidden points' fractions along the chord and their offsets from it (m), by
(rope, piece): a warm solve places each hidden point at its fraction between the (maybe moved) ends plus the
kept offset read there.  Only a start: the outer rounds end on the same test from any start.  A trail seeded
from a Result (:func:`seeded`) starts from that Result's bowed ropes alone, so a caller warm-starting from a
Result it was handed (the failure scan from the intact rig, the pull-needed search from the rig's own solve)
gets the answer of its arguments, never of what was solved before.
"""

from __future__ import annotations

from typing import Mapping

import numpy as np

from solver import memo
from solver.result import Result


def keep_bows(trail: memo.Trail, chains, at: Mapping[str, tuple[float, float]]) -> None:
    """Keep each cut rope's solved bow on ``trail``: its chord fractions and offsets from the chord at them."""
    for c in chains:
        a, b = np.array(at[c.a]), np.array(at[c.b])
        nodes = np.array([at[h] for h in c.hidden])
        trail.bows.put((c.rope, c.piece), (np.array(c.ts), nodes - (a + np.outer(c.ts, b - a))))


def bow_start(trail: memo.Trail, chains, at: Mapping[str, tuple[float, float]]) -> dict[str, tuple[float, float]]:
    """Each hidden point of a cut rope ``trail`` kept a bow for: at its fraction between the ends plus the offset."""
    out: dict[str, tuple[float, float]] = {}
    for c in chains:
        kept = trail.bows.get((c.rope, c.piece))
        if kept is None:
            continue
        ts_old, off = kept
        grid = np.concatenate(([0.0], ts_old, [1.0]))
        ts = np.array(c.ts)
        # the old bow's offset from its chord, read at the new fractions (the water's edge may have moved)
        shift = np.column_stack([np.interp(ts, grid, np.concatenate(([0.0], off[:, i], [0.0]))) for i in (0, 1)])
        a, b = np.array(at[c.a]), np.array(at[c.b])
        nodes = a + np.outer(ts, b - a) + shift
        out.update({h: (float(x), float(y)) for h, (x, y) in zip(c.hidden, nodes)})
    return out


def seeded(result: Result | None) -> memo.Trail:
    """A new trail holding the bows of ``result``'s bowed ropes (each node projected on its chord: the fraction,
    and the offset from there); empty when ``result`` has none."""
    trail = memo.Trail()
    for w in (result.water.ropes if result is not None and result.water is not None else ()):
        poly = np.asarray(w.polyline, dtype=float)
        if not w.bowed or len(poly) < 3:
            continue
        a, chord = poly[0], poly[-1] - poly[0]
        norm = float(chord @ chord)
        if norm <= 0.0:
            continue
        ts = (poly[1:-1] - a) @ chord / norm
        if np.all(np.diff(ts) > 0) and 0.0 < ts[0] and ts[-1] < 1.0:
            trail.bows.put((w.rope, w.index), (ts, poly[1:-1] - (a + np.outer(ts, chord))))
    return trail
