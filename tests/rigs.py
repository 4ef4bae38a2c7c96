"""Small builders of test Rigs from the model dataclasses, with every spec embedded.

The solver checks build their rigs here so that they depend only on
``solver.model`` (never on the materials library): each rig embeds a linear
rope material (stretch table ``[(EA * 0.01, 0.01)]``, i.e. T = EA * strain) and
pulleys / edges with the efficiency or friction coefficient the test wants.
Also holds test-side arithmetic (free-point force balance) written with numpy
only, so no reference value ever comes from project numerics.  Units: m, N.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Iterable, Mapping, Sequence

import numpy as np

from solver.model import Force, Hardware, Material, Pass, Point, Rig, Rigging, Rope, Settings

#: A "practically inextensible" rope: 1e9 N axial stiffness (strain 1e-6 at 1 kN).
STIFF_EA = 1.0e9
#: Strength so large no utilisation check ever matters in these tests.
BIG_MBS = 1.0e12


def linear_material(mat_id: str = "lin", ea: float = 1.0e5, mbs: float = BIG_MBS) -> Material:
    """A linear-elastic rope T = EA * strain (N), one stretch point (EA * 0.01, 0.01)."""
    return Material(id=mat_id, kind="rope", mbs_N=mbs, stretch=((ea * 0.01, 0.01),), label=f"linear EA {ea:g} N")


def pulley(hw_id: str = "pul", efficiency: float = 1.0) -> Hardware:
    """A pulley with efficiency eta = tension on the side the rope comes from / on the side it goes to
    (check-values.md; at most 1: the pulled side is the higher)."""
    return Hardware(id=hw_id, kind="pulley", efficiency=efficiency, mbs_N=BIG_MBS, label=f"pulley eta {efficiency:g}")


def edge(hw_id: str = "edge", mu: float = 0.44) -> Hardware:
    """An edge the rope rubs over with friction coefficient mu (capstan equation)."""
    return Hardware(id=hw_id, kind="edge", friction_coefficient=mu, mbs_N=BIG_MBS, label=f"edge mu {mu:g}")


def anchor(pid: str, x: float, y: float, **kw) -> Point:
    return Point(id=pid, kind="anchor", x=float(x), y=float(y), **kw)


def free(pid: str, x: float, y: float, **kw) -> Point:
    """A free junction (kind ``point``): rope grab, travelling pulley, hand."""
    return Point(id=pid, kind="point", x=float(x), y=float(y), **kw)


def load(pid: str, x: float, y: float, fixed: bool = True, **kw) -> Point:
    return Point(id=pid, kind="load", x=float(x), y=float(y), fixed=fixed, **kw)


def haul(pid: str, x: float, y: float, force: float, **kw) -> Point:
    return Point(id=pid, kind="haul", x=float(x), y=float(y), force_N=float(force), **kw)


def ps(at: str, how: str = "tied", hardware: str | None = None) -> Pass:
    return Pass(at=at, how=how, hardware=hardware)


def rope(
    rid: str,
    passes: Sequence[Pass | str | tuple],
    material: str = "lin",
    slack_m: float = 0.0,
    pretension_N: float | None = None,
) -> Rope:
    """A rope along ``passes``; a bare id means a tied pass, a tuple is (at, how[, hardware])."""
    path = []
    for p in passes:
        if isinstance(p, Pass):
            path.append(p)
        elif isinstance(p, str):
            path.append(Pass(at=p))
        else:
            path.append(Pass(*p))
    return Rope(id=rid, material=material, path=tuple(path), rigged=Rigging(slack_m=slack_m, pretension_N=pretension_N))


def force(at: str, magnitude: float, direction_deg: float) -> Force:
    return Force(at=at, magnitude_N=float(magnitude), direction_deg=float(direction_deg))


def make_rig(
    points: Iterable[Point],
    ropes: Iterable[Rope],
    forces: Iterable[Force] = (),
    materials: Iterable[Material] = (),
    hardware: Iterable[Hardware] = (),
    motion: str = "haul",
    ea: float = 1.0e5,
) -> Rig:
    """A plan-view rig; embeds ``linear_material('lin', ea)`` unless a material 'lin' is given."""
    mats = tuple(materials)
    if not any(m.id == "lin" for m in mats):
        mats = (linear_material("lin", ea),) + mats
    return Rig(
        points=tuple(points),
        ropes=tuple(ropes),
        forces=tuple(forces),
        materials=mats,
        hardware=tuple(hardware),
        settings=Settings(motion=motion),
        title="test rig",
    )


# --- rig transformations (for invariance properties) ---------------------------------


def transformed(rig: Rig, *, scale: float = 1.0, angle_deg: float = 0.0, shift=(0.0, 0.0), mirror: bool = False) -> Rig:
    """The rig mapped by x -> shift + R(angle) * S(mirror) * (scale * x); forces turned alike, slack scaled."""
    c, s = math.cos(math.radians(angle_deg)), math.sin(math.radians(angle_deg))

    def mp(x: float, y: float) -> tuple[float, float]:
        if mirror:
            x = -x
        x, y = scale * x, scale * y
        return shift[0] + c * x - s * y, shift[1] + s * x + c * y

    def md(d: float) -> float:
        if mirror:
            d = 180.0 - d
        return d + angle_deg

    pts = tuple(replace(p, x=mp(p.x, p.y)[0], y=mp(p.x, p.y)[1]) for p in rig.points)
    fs = tuple(replace(f, direction_deg=md(f.direction_deg)) for f in rig.forces)
    ropes = tuple(replace(r, rigged=replace(r.rigged, slack_m=r.rigged.slack_m * scale)) for r in rig.ropes)
    return replace(rig, points=pts, forces=fs, ropes=ropes)


def map_point(xy, *, scale: float = 1.0, angle_deg: float = 0.0, shift=(0.0, 0.0), mirror: bool = False) -> np.ndarray:
    c, s = math.cos(math.radians(angle_deg)), math.sin(math.radians(angle_deg))
    x, y = float(xy[0]), float(xy[1])
    if mirror:
        x = -x
    x, y = scale * x, scale * y
    return np.array([shift[0] + c * x - s * y, shift[1] + s * x + c * y])


# --- test-side statics (numpy only) -----------------------------------------------------


def free_point_residuals(rig: Rig, result) -> dict[str, np.ndarray]:
    """Force imbalance (N, vector) on every free point from the Result's positions and segment tensions.

    Each straight piece pulls both its ends toward each other with its tension;
    external forces add; in equilibrium every free point sums to zero.
    """
    pos = {k: np.asarray(v, dtype=float) for k, v in result.points.items()}
    res = {p.id: np.zeros(2) for p in rig.points if p.is_structural and not p.is_fixed}
    for seg in result.segments:
        a, b = pos[seg.from_point], pos[seg.to_point]
        d = b - a
        n = float(np.hypot(*d))
        if n == 0.0:
            continue
        u = d / n
        if seg.from_point in res:
            res[seg.from_point] += seg.tension_N * u
        if seg.to_point in res:
            res[seg.to_point] -= seg.tension_N * u
    for f in rig.forces:
        if f.at in res:
            t = math.radians(f.direction_deg)
            res[f.at] += f.magnitude_N * np.array([math.cos(t), math.sin(t)])
    return res


def largest_force(rig: Rig, result) -> float:
    """The largest force present (N): any segment tension or external force or haul force."""
    vals = [abs(s.tension_N) for s in result.segments] + [abs(f.magnitude_N) for f in rig.forces]
    vals += [p.haul_force or 0.0 for p in rig.points]
    return max(vals) if vals else 0.0


def tension(result, rope_id: str, index: int) -> float:
    """Tension (N) of piece ``index`` of rope ``rope_id`` in ``result``."""
    for s in result.segments:
        if s.rope == rope_id and s.index == index:
            return s.tension_N
    raise KeyError(f"{rope_id}[{index}] not in result segments")


def xy(result, pid: str) -> np.ndarray:
    return np.asarray(result.points[pid], dtype=float)


def describe(result) -> str:
    """A one-line summary for assertion messages."""
    return f"status={result.status!r} message={result.message!r} subject={result.subject!r} residual={result.residual_N}"


def start_from(result) -> Mapping[str, tuple[float, float]]:
    return {k: (float(v[0]), float(v[1])) for k, v in result.points.items()}


def with_bystander(rig: Rig) -> Rig:
    """The rig plus an unrelated free point Q hanging 5 m from its own anchor AQ far away (100 N).

    Gives an all-fixed rig one free point, so a check can tell the physics of its
    passes apart from the solver's handling of a rig with nothing free.
    """
    return replace(
        rig,
        points=rig.points + (anchor("AQ", 500.0, 500.0), free("Q", 500.0, 495.0)),
        ropes=rig.ropes + (rope("q", ["AQ", "Q"], material="lin" if rig.embedded_material("lin") else rig.ropes[0].material),),
        forces=rig.forces + (force("Q", 100.0, 270.0),),
    )
