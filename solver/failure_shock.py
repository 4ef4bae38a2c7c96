"""Shock when something lets go: peak forces from energy balances, estimates without damping.

Two yardsticks, both undamped (no energy lost in knots, rope hysteresis or air), so they
over-estimate a real arrest and say nothing about how the load is hurt:

* **Drop or extension** (a load falls onto slack, a master point runs out a sling): the
  remaining rig is released at rest from where it was held and moves straight toward its
  new equilibrium.  With no damping it overshoots until the potential is back at its
  starting value, Pi(x*) = Pi(x0), Pi = sum of the runs' strain energies (each rope's own
  stretch curve, :meth:`solver.stretch.StretchCurve.energy`) - applied forces and weights . x
  (the frictionless potential of the solver notes).  A haul team is taken to hold its rope
  where it was during the shock (it neither feeds nor takes rope: the hauled run is a tied
  run stretched to the haul force at the start), so the energy comes from weights, applied
  forces and the stretch stored in the ropes -- not from people running back with the rope.  The forces at x*
  are the peak.  For one mass on one linear rope this is the undamped-spring energy balance
  F = mg + sqrt((mg)^2 + 2 mg h k) (check-values.md, "When something lets go"); h = 0 gives 2 mg.
* **Swing** (a point held sideways now hangs from one rope): it swings on a circle about
  where that rope is held; at the bottom of the swing a rigid rope carries
  T = T_eq (3 - 2 cos theta0), T_eq the hanging tension and theta0 the angle it swings
  through (pendulum: energy m g r (1 - cos theta0) = m v^2 / 2, T = m g + m v^2 / r; any
  mechanics text).  In plan view the constant resultant pull plays the part of gravity.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from solver.failure_rig import Strand
from solver.materials import material_for
from solver.model import STANDARD_GRAVITY, Rig
from solver.stretch import StretchCurve

#: The caution every shock number carries.
SHOCK_CAUTION = ("Shock forces are estimates without damping (no energy lost in knots, rope or anchors): "
                 "a real arrest differs; treat them as a yardstick, not a rating.")


def pendulum_peak_factor(theta0_deg: float) -> float:
    """Peak rope tension at the bottom of a swing over the hanging tension: 3 - 2 cos(theta0), rigid rope."""
    return 3.0 - 2.0 * math.cos(math.radians(theta0_deg))


@dataclass(frozen=True)
class Peak:
    """The highest force a remaining piece or anchor sees on the way (N), where, and how it came."""

    force_N: float
    at: str  # "ROPE#INDEX" for a piece, the point id for an anchor
    how: str  # "drop", "swing", or "jam" (runs into the next pass on its rope first: the impact is not rated)
    overshoot_m: float = 0.0  # how far past the new equilibrium the fastest point runs, m
    positions: dict | None = None  # point positions at the peak (drop only), m


class Potential:
    """The frictionless potential of a remaining rig (J) and its forces, on its free points' positions.

    ``strands`` are the runs the remaining rig's ropes were built from, in the same order: their
    unstretched lengths, and the original (rope id, piece index) that names each piece.  With
    ``held_at`` (free-point positions, m) every hauled run is held there: a tied run whose
    unstretched length gives the haul force at those positions.  Coordinates live in one array,
    the fixed points first, so every piece's length is one vectorised expression (also over many
    positions at once, :meth:`piece_lengths`).  ``others``: what parts of the rig left out of this one
    keep pulling on its fixed points (N, vectors), added to their forces.
    """

    def __init__(self, rig: Rig, strands: list[Strand], held_at: np.ndarray | None = None,
                 others: dict[str, np.ndarray] | None = None) -> None:
        structural = [p for p in rig.points if p.is_structural]
        fixed = [p for p in structural if p.is_fixed]
        self.free = [p.id for p in structural if not p.is_fixed]
        self.index = {pid: i for i, pid in enumerate(self.free)}
        self.fixed_ids = [p.id for p in fixed]
        self.fixed_xy = np.array([[p.x, p.y] for p in fixed], float).reshape(-1, 2)
        slot = {pid: i for i, pid in enumerate(self.fixed_ids)}
        slot.update({pid: len(fixed) + i for i, pid in enumerate(self.free)})
        self.others = np.array([(others or {}).get(pid, np.zeros(2)) for pid in self.fixed_ids], float).reshape(-1, 2)
        self.F = np.zeros((len(self.free), 2))
        for f in rig.forces:
            if f.at in self.index:
                th = math.radians(f.direction_deg)
                self.F[self.index[f.at]] += f.magnitude_N * np.array([math.cos(th), math.sin(th)])
        if rig.view == "elevation":
            for p in rig.points:
                if p.id in self.index and p.mass_kg:
                    self.F[self.index[p.id], 1] -= float(p.mass_kg) * STANDARD_GRAVITY
        a, b, run, names, mat_of = [], [], [], [], []
        by_material: dict[str, StretchCurve] = {}
        self.L0, self.P, self.curves = [], [], []
        for k, (rope, strand) in enumerate(zip(rig.ropes, strands)):
            ids = [ps.at for ps in rope.path]
            a += [slot[i] for i in ids[:-1]]
            b += [slot[i] for i in ids[1:]]
            run += [k] * (len(ids) - 1)
            names += [f"{strand.rope.id}#{i}" for i, _ in strand.passes[:-1]]
            if rope.material not in by_material:
                by_material[rope.material] = StretchCurve(material_for(rig, rope.material).stretch)
            self.curves.append(by_material[rope.material])
            mat_of.append(rope.material)
            self.P.append((rig.point(ids[-1]).haul_force or 0.0) if strand.hauled else 0.0)
            self.L0.append(np.nan if strand.L0 is None else strand.L0)
        self.a, self.b, self.run = np.array(a, int), np.array(b, int), np.array(run, int)
        self.names = names
        self.L0, self.P = np.array(self.L0, float), np.array(self.P, float)
        self.n_runs = len(self.L0)
        if held_at is not None:  # the haul teams hold: hauled runs become tied runs stretched to the haul force
            L = self.run_lengths(held_at)
            for k in np.flatnonzero(np.isnan(self.L0)):
                self.L0[k] = L[k] / (1.0 + float(self.curves[k].strain(self.P[k])))
                self.P[k] = 0.0
        self.tied = ~np.isnan(self.L0)
        mats = np.array(mat_of, dtype=object)
        self.groups = [(curve, np.flatnonzero(self.tied & (mats == mid))) for mid, curve in by_material.items()]

    def _coords(self, x: np.ndarray) -> np.ndarray:
        """All coordinates (..., n_fixed + n_free, 2) for free positions ``x`` (..., n_free, 2)."""
        x = np.asarray(x, float)
        fixed = np.broadcast_to(self.fixed_xy, x.shape[:-2] + self.fixed_xy.shape)
        return np.concatenate([fixed, x], axis=-2)

    def piece_lengths(self, x: np.ndarray) -> np.ndarray:
        """Length (m) of every piece at ``x`` (n_free, 2), or at many positions at once (k, n_free, 2) -> (k, n)."""
        c = self._coords(x)
        d = c[..., self.b, :] - c[..., self.a, :]
        return np.hypot(d[..., 0], d[..., 1])

    def run_lengths(self, x: np.ndarray) -> np.ndarray:
        """Length (m) of every run at ``x``."""
        return np.bincount(self.run, self.piece_lengths(x), minlength=self.n_runs)

    def _tensions(self, L: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(energy J, tension N) of every run at lengths ``L``: hauled P L and P, tied L0 W(eps) and T(eps)."""
        U, T = self.P * L, self.P.copy()
        for curve, k in self.groups:  # one vectorised call per material
            eps = L[k] / self.L0[k] - 1.0
            U[k] = self.L0[k] * curve.energy(eps)
            T[k] = curve.tension(eps)
        return U, T

    def energy(self, x: np.ndarray) -> float:
        """Total potential (J) at free-point positions ``x`` (n_free, 2)."""
        U, _ = self._tensions(self.run_lengths(x))
        return float(U.sum()) - float((self.F * x).sum())

    def forces(self, x: np.ndarray) -> list[tuple[float, str]]:
        """Every piece's tension and every fixed point's resultant at ``x``: (force N, name)."""
        c = self._coords(x)
        d = c[self.b] - c[self.a]
        n = np.hypot(d[:, 0], d[:, 1])
        _, T_run = self._tensions(np.bincount(self.run, n, minlength=self.n_runs))
        T = T_run[self.run]
        pull = np.divide(d, n[:, None], out=np.zeros_like(d), where=n[:, None] > 0) * T[:, None]
        at = np.zeros((len(c), 2))
        at[: len(self.fixed_ids)] = self.others
        np.add.at(at, self.a, pull)
        np.add.at(at, self.b, -pull)
        out = list(zip(T.tolist(), self.names))
        out += [(float(np.hypot(*at[i])), pid) for i, pid in enumerate(self.fixed_ids)
                if np.any(self.a == i) or np.any(self.b == i)]
        return out


def drop_peak(pot: Potential, x0: np.ndarray, x1: np.ndarray) -> Peak | None:
    """Peak force when the rig is released at rest at ``x0`` and runs straight toward ``x1`` (undamped).

    None when nothing moves or nothing is gained on the way (x0 is already the lowest energy).
    """
    d = x1 - x0
    if not np.any(d):
        return None
    e = lambda s: pot.energy(x0 + s * d)  # noqa: E731
    e0 = e(0.0)
    hi = 2.0
    while e(hi) <= e0 and hi < 1e4:
        hi *= 2.0
    low = minimize_scalar(e, bounds=(0.0, hi), method="bounded", options={"xatol": 1e-10})
    s_min = float(low.x)
    scale = max(abs(e0), 1.0)
    if e0 - float(low.fun) <= 1e-9 * scale or e(hi) <= e0:
        return None
    s_star = brentq(lambda s: e(s) - e0, s_min, hi, xtol=1e-12, rtol=1e-12)
    s_jam = _runs_into(pot, x0, d, s_star)
    how = "jam" if s_jam < s_star else "drop"
    s_star = min(s_star, s_jam)
    x_star = x0 + s_star * d
    force, at = max(pot.forces(x_star), key=lambda t: t[0])
    over = float(np.max(np.hypot(*((s_star - 1.0) * d).T))) if len(d) else 0.0
    return Peak(force, at, how, max(over, 0.0), {pid: tuple(x_star[i]) for i, pid in enumerate(pot.free)})


#: Closest two passes of a rope come on the way (m): the hardware's size; a point running into the
#: next pass on its rope stops there (the rest of its energy goes into the impact, which this model does not rate).
JAM_GAP_M = 0.1


def _runs_into(pot: Potential, x0: np.ndarray, d: np.ndarray, s_end: float) -> float:
    """The first step s in (0, s_end] at which a piece that was longer than JAM_GAP_M shortens to it (else s_end)."""
    steps = np.linspace(0.0, s_end, 401)
    lengths = pot.piece_lengths(x0[None] + steps[:, None, None] * d[None])
    if lengths.size == 0:
        return s_end
    watch = lengths[0] > JAM_GAP_M
    short = (lengths[:, watch] <= JAM_GAP_M).any(axis=1)
    if not short.any():
        return s_end
    k = int(np.argmax(short))
    f = lambda s: float(np.min(pot.piece_lengths(x0 + s * d)[watch])) - JAM_GAP_M  # noqa: E731
    return brentq(f, steps[k - 1], steps[k], xtol=1e-9) if f(steps[k - 1]) > 0 else float(steps[k])
