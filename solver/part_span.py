"""The span of each part of a rig, m: a size that does not change when the rig is turned on the page.

A bare pass (a knot, a hand) is spaced from its neighbour by a fraction of the size of its part
(``assembly.BARE_MIN_SPACING``), and a pass two-blocked against it rests at that spacing, so that
size is part of the answer.  The diagonal of the box around the part's points is no such size: it
grows and shrinks as the drawing is turned, so the same rig drawn 1 deg turned solved to a
different answer (two passes jammed on a rope 4.4 um closer, the tensions 1e-4 apart).  The span
is twice the largest distance of a part's points from their centroid: unchanged by turning,
shifting or mirroring the drawing (statics is frame-invariant: any mechanics text), proportional
to its scale, and equal to the box diagonal for two points or for points at a rectangle's corners.
"""

from __future__ import annotations

import numpy as np


def part_spans(xy: np.ndarray, gather: np.ndarray, starts: np.ndarray) -> np.ndarray:
    """Span (m) of each part, at least 1 mm as the part sizes: the points of part c are
    ``xy[gather[starts[c]:starts[c + 1]]]``, each listed once (``solver.structure.size_groups``)."""
    if len(starts) == 0:
        return np.zeros(0)
    pts = xy[gather]
    if len(starts) == 1:  # one part (most rigs): the same numbers, its centre taken from every point at once
        off = pts - np.add.reduceat(pts, starts, axis=0) / len(gather)
    else:
        counts = np.diff(np.append(starts, len(gather)))
        centre = np.add.reduceat(pts, starts, axis=0) / counts[:, None]
        off = pts - np.repeat(centre, counts, axis=0)
    reach = np.maximum.reduceat(np.hypot(off[:, 0], off[:, 1]), starts)
    return np.maximum(2.0 * reach, 1e-3)
