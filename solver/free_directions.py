"""Which way a point that is not held can really move, in words: one axis, or every direction.

The solver finds a mechanism as the near-zero eigenvalues of the frictionless tangent
(solver-notes.md, "Failures to name").  A point on a hand-tight straight line can move
only across the line (one zero mode, one axis); an unloaded point on a slack rope, or at
the end of one, has nothing resisting it in any direction (two zero modes sharing that
point).  Naming one axis for the second case ("north–south") tells the rigger something
false, so the point's share of every near-zero mode is looked at: rank 2 is "in every
direction", rank 1 names the axis.
"""

from __future__ import annotations

import math

import numpy as np

#: The second singular value of a point's share of the zero modes, relative to the first, above which
#: the point is free in every direction (a second, independent way for it to move).
SECOND_MODE_REL = 0.1


def axis_words(vx: float, vy: float, elevation: bool) -> str:
    """Name the axis a point can move along ("east–west" ...)."""
    ang = math.degrees(math.atan2(vy, vx)) % 180.0
    if elevation:
        names = ["sideways", "diagonally (up to the right)", "up and down", "diagonally (up to the left)"]
    else:
        names = ["east–west", "northeast–southwest", "north–south", "northwest–southeast"]
    return names[int(((ang + 22.5) % 180.0) // 45.0)]


def free_words(share: np.ndarray, elevation: bool) -> str:
    """How a point moves, from its share of the zero modes (2 x m: its x and y in each mode), as the rest of
    "it ...": "is free in every direction" or "can move north–south"."""
    share = np.asarray(share, dtype=float).reshape(2, -1)
    u, sv, _ = np.linalg.svd(share, full_matrices=False)
    if len(sv) > 1 and sv[0] > 0 and sv[1] > SECOND_MODE_REL * sv[0]:
        return "is free in every direction"
    return "can move " + axis_words(float(u[0, 0]), float(u[1, 0]), elevation)


def point_share(vecs: np.ndarray, k: int) -> np.ndarray:
    """The x and y rows of free point ``k`` in every mode (columns of ``vecs``, 2 coordinates a point)."""
    vecs = np.asarray(vecs, dtype=float).reshape(len(vecs), -1)
    return vecs[2 * k:2 * k + 2, :]


def most_moving(vecs: np.ndarray) -> int:
    """The free point that moves most over all the zero modes (columns of ``vecs``)."""
    vecs = np.asarray(vecs, dtype=float).reshape(len(vecs), -1)
    per_point = (vecs * vecs).sum(axis=1).reshape(-1, 2).sum(axis=1)
    return int(np.argmax(per_point))


def with_own_block(share: np.ndarray, block: np.ndarray, zero: float) -> np.ndarray:
    """``share``, or both axes when the point's own 2 x 2 stiffness block is below ``zero`` (N/m) both ways.

    For a large rig only one zero mode is found (inverse iteration); a point with no stiffness of
    its own in any direction is then still named free in every direction.
    """
    if np.linalg.eigvalsh(0.5 * (block + block.T)).max() <= zero:
        return np.eye(2)
    return share
