"""The water's push on ropes and on things in the water, N: the drag equation, vectorised.

A rope piece across a current carries a drag per metre q = 1/2 rho C_d d v_n^2 along v_n, the
part of the water's velocity normal to the piece (cross-flow principle; C_d of a circular
cylinder about 1.2 at Re 1e4-1e5, S. F. Hoerner, Fluid-Dynamic Drag, 1965, ch. 3).  A boat,
raft or swimmer with a wetted area A and a shape from the load estimate's table gets
F = 1/2 rho C_d A v^2 along the flow (C. Matthews, Aeronautical Engineer's Data Book).
"""

from __future__ import annotations

import numpy as np

from solver.loads import DRAG_SHAPES, FRESH_WATER_KG_M3

#: Drag coefficient of a rope across the flow (circular cylinder, Re 1e4-1e5; Hoerner 1965, ch. 3).
ROPE_CD = 1.2


def rope_drag(nodes: np.ndarray, velocity: np.ndarray, diameter_m: float,
              cd: float = ROPE_CD, rho: float = FRESH_WATER_KG_M3) -> np.ndarray:
    """Drag force (N) on each straight segment of the polyline ``nodes`` (m, (n+1, 2)) in water of ``velocity``.

    ``velocity`` is (n, 2) m/s at each segment's middle.  Each segment's force is q * l along the
    normal part of the velocity: 1/2 rho C_d d |v_n| v_n l (cross-flow principle).
    """
    seg = np.diff(nodes, axis=0)
    length = np.hypot(seg[:, 0], seg[:, 1])
    t = seg / np.where(length > 0, length, 1.0)[:, None]
    vn = velocity - (velocity * t).sum(axis=1)[:, None] * t
    speed_n = np.hypot(vn[:, 0], vn[:, 1])
    return (0.5 * rho * cd * diameter_m * length * speed_n)[:, None] * vn


def node_shares(seg_force: np.ndarray) -> np.ndarray:
    """Each segment's force split half to each of its end nodes: (n+1, 2) N for n segments (lumped load)."""
    out = np.zeros((len(seg_force) + 1, 2))
    out[:-1] += 0.5 * seg_force
    out[1:] += 0.5 * seg_force
    return out


def body_drag(velocity: np.ndarray, area_m2: float, shape: str, rho: float = FRESH_WATER_KG_M3) -> np.ndarray:
    """Drag force (N, 2-vector) on a body of wetted area ``area_m2`` and drag-table ``shape`` in ``velocity`` m/s."""
    v = np.asarray(velocity, dtype=float)
    return 0.5 * rho * DRAG_SHAPES[shape].cd * area_m2 * float(np.hypot(v[0], v[1])) * v


def bend_normal_shares(nodes: np.ndarray, seg_force: np.ndarray) -> np.ndarray:
    """:func:`node_shares` with each inner node's share made normal to the rope there (N, (n+1, 2)).

    The rope's direction at an inner node is the bisector of its two segments; the cross-flow drag has no
    part along the rope, so the part of the lumped share along that bisector (a discretisation remainder,
    of the order of the share times the bend) is left out: the rope bends freely through the node and its
    tension is the same on both sides.  The end nodes keep their whole shares.
    """
    out = node_shares(seg_force)
    seg = np.diff(nodes, axis=0)
    length = np.hypot(seg[:, 0], seg[:, 1])
    u = seg / np.where(length > 0, length, 1.0)[:, None]
    t = u[:-1] + u[1:]
    norm = np.hypot(t[:, 0], t[:, 1])
    t = t / np.where(norm > 0, norm, 1.0)[:, None]
    inner = out[1:-1]
    out[1:-1] = inner - (inner * t).sum(axis=1)[:, None] * t
    return out
