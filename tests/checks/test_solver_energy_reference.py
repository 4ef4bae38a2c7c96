"""The solver against an independent energy minimisation on random frictionless rigs.

Reference (written here, no project code): total potential
Π(x) = Σ_runs U_r(L_r(x)) − Σ F·x over the free-point coordinates, with a linear,
tension-only rope U = EA/(2 L0) (L − L0)² when L > L0, else 0 (minimum total potential
energy; convex cable statics, Kanno, Ohsaki & Ito, IJNME 2002).  It is minimised with
scipy.optimize.minimize (BFGS) and polished with scipy.optimize.root on ∇Π = 0; the
solver's positions and tensions must agree.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import minimize, root

from solver import equilibrium
from tests import rigs

solve = equilibrium.solve

BOX = 20.0  # m, size of the random site


class RandomRig:
    """A random frictionless rig and the data the reference needs (runs as lists of point ids)."""

    def __init__(self, seed: int, sliding: bool) -> None:
        rnd = np.random.default_rng(seed)
        n_anchor = int(rnd.integers(2, 5))
        n_free = int(rnd.integers(1, 5))
        pos: dict[str, np.ndarray] = {}
        points = []
        for i in range(n_anchor):
            pid = f"A{i}"
            pos[pid] = rnd.uniform(0, BOX, 2)
            points.append(rigs.anchor(pid, *pos[pid]))
        free_ids = []
        for i in range(n_free):
            pid = f"P{i}"
            pos[pid] = rnd.uniform(0.2 * BOX, 0.8 * BOX, 2)
            points.append(rigs.free(pid, *pos[pid]))
            free_ids.append(pid)
        mats = []
        ropes = []
        self.runs: list[tuple[str, list[str], float, float]] = []  # (rope id, point ids, EA, L0)

        def add_rope(path_ids: list[str], hows: list[str]) -> None:
            rid = f"r{len(ropes)}"
            ea = float(rnd.uniform(2e4, 2e5))
            mid = f"m{len(mats)}"
            mats.append(rigs.linear_material(mid, ea))
            mode = rnd.integers(0, 3)
            single_run = all(h != "tied" for h in hows[1:-1])  # slack only where the rope is one run
            slack = float(rnd.uniform(0, 0.5)) if (mode == 1 and single_run) else 0.0
            pre = float(rnd.uniform(50, 800)) if mode == 2 else None
            passes = [(p, h) for p, h in zip(path_ids, hows)]
            ropes.append(rigs.rope(rid, passes, material=mid, slack_m=slack, pretension_N=pre))
            # split into runs at tied passes (rig-format.md) and set each run's L0
            start = 0
            for k in range(1, len(path_ids)):
                if k == len(path_ids) - 1 or hows[k] == "tied":
                    ids = path_ids[start : k + 1]
                    drawn = sum(float(np.linalg.norm(pos[b] - pos[a])) for a, b in zip(ids, ids[1:]))
                    l0 = drawn / (1.0 + pre / ea) if pre is not None else drawn + slack
                    self.runs.append((rid, ids, ea, l0))
                    start = k

        for i, pid in enumerate(free_ids):
            earlier = [f"A{j}" for j in range(n_anchor)] + free_ids[:i]
            picks = rnd.choice(len(earlier), size=min(2, len(earlier)), replace=False)
            for j in picks:
                other = earlier[int(j)]
                add_rope([other, pid], ["tied", "tied"])
        # a longer rope through two or three points: tied chain, or through sliding rings
        if n_free >= 1:
            a, b = rnd.choice(n_anchor, size=2, replace=False)
            mids = list(rnd.choice(free_ids, size=min(len(free_ids), int(rnd.integers(1, 3))), replace=False))
            ids = [f"A{a}"] + [str(m) for m in mids] + [f"A{b}"]
            hows = ["tied"] + [("sliding" if sliding else "tied") for _ in mids] + ["tied"]
            add_rope(ids, hows)
        forces = []
        self.f = {pid: np.zeros(2) for pid in free_ids}
        for pid in free_ids:
            mag, ang = float(rnd.uniform(200, 2000)), float(rnd.uniform(0, 360))
            forces.append(rigs.force(pid, mag, ang))
            self.f[pid] += mag * np.array([math.cos(math.radians(ang)), math.sin(math.radians(ang))])
        self.rig = rigs.make_rig(points, ropes, forces, materials=mats)
        self.pos = pos
        self.free_ids = free_ids

    # --- the reference: Π and ∇Π in numpy ---------------------------------------------------
    def _positions(self, x: np.ndarray) -> dict[str, np.ndarray]:
        p = dict(self.pos)
        for i, pid in enumerate(self.free_ids):
            p[pid] = x[2 * i : 2 * i + 2]
        return p

    def run_lengths(self, x: np.ndarray) -> list[float]:
        p = self._positions(x)
        return [sum(float(np.linalg.norm(p[b] - p[a])) for a, b in zip(ids, ids[1:])) for _, ids, _, _ in self.runs]

    def energy(self, x: np.ndarray) -> float:
        e = 0.0
        for (_, _, ea, l0), ln in zip(self.runs, self.run_lengths(x)):
            if ln > l0:
                e += 0.5 * ea / l0 * (ln - l0) ** 2
        return e - sum(float(self.f[pid] @ x[2 * i : 2 * i + 2]) for i, pid in enumerate(self.free_ids))

    def gradient(self, x: np.ndarray) -> np.ndarray:
        p = self._positions(x)
        index = {pid: i for i, pid in enumerate(self.free_ids)}
        g = np.zeros_like(x)
        for (_, ids, ea, l0), ln in zip(self.runs, self.run_lengths(x)):
            t = ea * (ln / l0 - 1.0) if ln > l0 else 0.0
            if t == 0.0:
                continue
            for a, b in zip(ids, ids[1:]):
                d = p[b] - p[a]
                u = d / np.linalg.norm(d)
                if b in index:
                    g[2 * index[b] : 2 * index[b] + 2] += t * u
                if a in index:
                    g[2 * index[a] : 2 * index[a] + 2] -= t * u
        for pid, i in index.items():
            g[2 * i : 2 * i + 2] -= self.f[pid]
        return g

    def reference(self) -> tuple[dict[str, np.ndarray], list[float]]:
        x0 = np.concatenate([self.pos[pid] for pid in self.free_ids])
        fmax = max(float(np.linalg.norm(v)) for v in self.f.values())
        m = minimize(self.energy, x0, jac=self.gradient, method="BFGS", options={"gtol": 1e-9 * fmax, "maxiter": 10000})
        r = root(self.gradient, m.x, method="hybr", options={"xtol": 1e-15})
        x = r.x if np.max(np.abs(self.gradient(r.x))) < np.max(np.abs(self.gradient(m.x))) else m.x
        assert np.max(np.abs(self.gradient(x))) < 1e-9 * fmax, "reference minimisation did not converge"
        lens = self.run_lengths(x)
        tens = [ea * (ln / l0 - 1.0) if ln > l0 else 0.0 for (_, _, ea, l0), ln in zip(self.runs, lens)]
        return self._positions(x), tens


def check_against_reference(seed: int, sliding: bool) -> None:
    rr = RandomRig(seed, sliding)
    ref_pos, ref_t = rr.reference()
    res = solve(rr.rig)
    assert res.status == "ok", f"seed {seed}: " + rigs.describe(res)
    fmax = max(max(ref_t), max(float(np.linalg.norm(v)) for v in rr.f.values()))
    for pid in rr.free_ids:
        np.testing.assert_allclose(
            rigs.xy(res, pid), ref_pos[pid], atol=1e-6 * BOX, err_msg=f"seed {seed}: position of {pid} vs energy minimum"
        )
    # every piece of a run carries the run's tension (frictionless)
    seg_t = {(s.rope, s.from_point, s.to_point, s.index): s.tension_N for s in res.segments}
    for (rid, ids, _, _), t in zip(rr.runs, ref_t):
        for a, b in zip(ids, ids[1:]):
            got = [v for (r, fa, fb, _), v in seg_t.items() if r == rid and fa == a and fb == b]
            assert got, f"seed {seed}: no segment {rid} {a}->{b} in result"
            assert got[0] == pytest.approx(t, rel=1e-6, abs=1e-7 * fmax), (
                f"seed {seed}: rope {rid} {a}->{b} tension expected {t} N, got {got[0]} N"
            )


@pytest.mark.parametrize("seed", range(40))
def test_random_tied_rig_matches_independent_energy_minimum(seed):
    check_against_reference(seed, sliding=False)


@pytest.mark.parametrize("seed", range(100, 125))
def test_random_rig_with_sliding_rings_matches_independent_energy_minimum(seed):
    check_against_reference(seed, sliding=True)


def test_reference_itself_reproduces_a_closed_form():
    # Sanity of the reference (so it can fail): one point hanging from one anchor by a
    # hand-tight rope of EA under force W sits at distance L0 (1 + W/EA) along W.
    rr = RandomRig(0, False)
    rr.pos = {"A0": np.zeros(2), "P0": np.array([3.0, 4.0])}
    rr.free_ids = ["P0"]
    rr.runs = [("r0", ["A0", "P0"], 1e4, 5.0)]
    rr.f = {"P0": np.array([0.0, -500.0])}
    pos, t = rr.reference()
    np.testing.assert_allclose(pos["P0"], [0.0, -5.0 * (1 + 500.0 / 1e4)], atol=1e-9)
    assert t[0] == pytest.approx(500.0, rel=1e-9)
