"""The current's drag on a rig planned for the water (solver.water), and the names the water solve and its records
share: kept apart so that neither imports the other."""

from __future__ import annotations

from typing import Any, Mapping

import numpy as np

from solver.model import Rig
from solver.result import Result
from solver.water_drag import bend_normal_shares, body_drag, node_shares, rope_drag
from solver.water_site import FlowField

#: Mismatch accepted, times the force scale (equilibrium.ACCEPT_REL).
ACCEPT_REL = 1e-7
#: Marks hidden ids; a user id never starts with it (checked).
HIDDEN = "~water~"


def _drag_forces(plan: Any, ff: FlowField, at: Mapping[str, tuple[float, float]]) -> tuple[dict[str, np.ndarray], dict]:
    """Drag (N) on every point at positions ``at``: lumped rope drag and body drag; and each chain's details."""
    forces: dict[str, np.ndarray] = {}
    chain_info = {}
    if plan.chains:  # every cut rope at once: one flow lookup for all segment middles
        ids = [pid for c in plan.chains for pid in (c.a, *c.hidden, c.b)]
        nodes = np.array([at[pid] for pid in ids], dtype=float)
        bounds = np.cumsum([0] + [len(c.hidden) + 2 for c in plan.chains])
        inner = np.ones(len(ids) - 1, dtype=bool)
        inner[bounds[1:-1] - 1] = False  # no segment from one chain's last node to the next chain's first
        mid = 0.5 * (nodes[1:] + nodes[:-1])
        vel = np.zeros_like(mid)
        vel[inner] = ff.velocity_at(mid[inner])
        seg = np.diff(nodes, axis=0)
        for c, i0, i1 in zip(plan.chains, bounds[:-1], bounds[1:]):
            seg_f = rope_drag(nodes[i0:i1], vel[i0:i1 - 1], c.diameter_m)
            shares = bend_normal_shares(nodes[i0:i1], seg_f) if c.sliding else node_shares(seg_f)
            for pid, f in zip(ids[i0:i1], shares):
                old = forces.get(pid)
                forces[pid] = f if old is None else old + f
            chain_info[(c.rope, c.piece)] = (nodes[i0:i1], seg_f)
        del seg

    def add(pid: str, f: np.ndarray) -> None:
        old = forces.get(pid)
        forces[pid] = f if old is None else old + f

    for p in plan.wet_bodies:
        add(p.id, body_drag(ff.velocity_at(np.array(at[p.id]))[0], float(p.wetted_area_m2), str(p.drag_shape)))
    return forces, chain_info


def _scale(rig: Rig, forces: Mapping[str, np.ndarray], result: Result) -> float:
    vals = [float(np.hypot(*f)) for f in forces.values()]
    vals += [f.magnitude_N for f in rig.forces] + [s.tension_N for s in result.segments]
    return max(vals + [1e-9])
