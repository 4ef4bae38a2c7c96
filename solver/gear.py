"""Gear and rope budget of a rig: how much of each rope the rig uses against what is carried, and a gear list.

Pure (no Qt).  The rope budget adds up each rope's straight pieces as solved (stretched,
metres; the drawn geometry when the solve failed) plus the tail the team leaves beyond each
end (``settings.tail_m``: knot tails, the haul team's grip) and compares it with the rope
actually carried (``Rope.length_m``).  Stretched length is used because it is the longer one:
a rope that reaches stretched reaches unloaded too.

The gear list counts what the drawing implies, by our own counting rule (one item per
connection; a team counts again on site and carries spares):

* pulleys: every pass over a sheave (``pulley``, and a progress ``capture``);
* captures: every ``capture`` pass;
* rope grabs: every rope gripped where it goes on (a ``tied`` middle pass at a free point),
  every capture that names a grab, and every pass whose hardware is a rope grab;
* carabiners: one per pulley or capture (clips it to its point), one per grab, one per rope
  end tied to a point (its knot clipped in), and one per sliding or tied pass whose hardware
  is itself a carabiner or ring;
* anchor slings: one per anchor a pulley, capture or ring hangs from, plus every rope drawn
  in a sling material;
* ropes, by kind (rope, cord, sling) and spec: how many, and the metres used and carried.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass

from solver.model import Rig, Rope
from solver.result import Result

#: Passes over a sheave (a capture is a pulley that holds when the rope runs back).
SHEAVE_HOWS = frozenset({"pulley", "capture"})


@dataclass(frozen=True)
class RopeBudget:
    """One rope's length used against the length carried, metres."""

    rope: str
    name: str
    stretched_m: float  # the rope's pieces as solved (as drawn when the solve failed)
    tails_m: float  # tail left beyond both ends
    carried_m: float | None  # Rope.length_m, None when not given

    @property
    def needed_m(self) -> float:
        return self.stretched_m + self.tails_m

    @property
    def short_m(self) -> float | None:
        """How much rope is missing (> 0: it will not reach), None when the carried length is not known."""
        return None if self.carried_m is None else self.needed_m - self.carried_m

    @property
    def reaches(self) -> bool | None:
        short = self.short_m
        return None if short is None else short <= 0.0


def _drawn_lengths(rig: Rig, rope: Rope) -> float:
    """Sum of the straight pieces between the rope's passes as drawn, m."""
    pts = {p.id: p for p in rig.points}
    xy = [(pts[ps.at].x, pts[ps.at].y) for ps in rope.path if ps.at in pts]
    return float(sum(math.dist(a, b) for a, b in zip(xy, xy[1:])))


def rope_budget(rig: Rig, result: Result | None = None) -> list[RopeBudget]:
    """Every rope's stretched length plus two tails (``settings.tail_m`` each) against ``length_m``, m."""
    tail = float(rig.settings.tail_m)
    solved: dict[str, float] = {}
    if result is not None and result.ok:
        for s in result.segments:
            solved[s.rope] = solved.get(s.rope, 0.0) + float(s.length_m)
    out = []
    for r in rig.ropes:
        used = solved[r.id] if r.id in solved else _drawn_lengths(rig, r)
        out.append(RopeBudget(r.id, r.name, used, 2.0 * tail, None if r.length_m is None else float(r.length_m)))
    return out


def short_ropes(rig: Rig, result: Result | None = None) -> list[RopeBudget]:
    """The ropes that will not reach (needed > carried)."""
    return [b for b in rope_budget(rig, result) if b.reaches is False]


@dataclass(frozen=True)
class RopeKind:
    """Ropes of one spec: their kind (rope, cord, sling), how many, and metres used and carried."""

    kind: str
    material: str
    name: str
    count: int
    needed_m: float
    carried_m: float | None  # None when any of them has no length given


@dataclass(frozen=True)
class GearList:
    """Totals of the hardware and software a rig uses (the counting rule is the module docstring's)."""

    pulleys: int
    captures: int
    grabs: int
    carabiners: int
    slings: int
    ropes: tuple[RopeKind, ...]
    pulley_specs: tuple[tuple[str, int], ...] = ()  # (spec name, how many)

    def rows(self) -> list[tuple[str, int, str]]:
        """(item, count, what it is) for tables and the briefing sheet."""
        rows = [
            ("Pulleys", self.pulleys, ", ".join(f"{n} × {name}" for name, n in self.pulley_specs) or "—"),
            ("Progress captures", self.captures, "pulley that holds when the rope runs back"),
            ("Rope grabs", self.grabs, "on a rope where it goes on, and on each capture"),
            ("Carabiners", self.carabiners, "one per pulley, grab and tied rope end"),
            ("Slings", self.slings, "anchor slings for pulleys and rings, and sling ropes drawn"),
        ]
        for k in self.ropes:
            rows.append((f"{k.kind.capitalize()}: {k.name}", k.count, f"{k.needed_m:.1f} m used"
                         + (f", {k.carried_m:.1f} m carried" if k.carried_m is not None else "")))
        return rows


def _hardware_kind(rig: Rig, hw_id: str | None) -> str | None:
    from solver.errors import RopewrightError
    from solver.materials import hardware_for

    if not hw_id:
        return None
    try:
        return hardware_for(rig, hw_id).kind
    except (RopewrightError, KeyError):
        return None


def _hardware_name(rig: Rig, hw_id: str | None) -> str:
    from solver.errors import RopewrightError
    from solver.materials import hardware_for

    if not hw_id:
        return "pulley (spec not given)"
    try:
        return hardware_for(rig, hw_id).name
    except (RopewrightError, KeyError):
        return hw_id


def _material_of(rig: Rig, mat_id: str):
    from solver.errors import RopewrightError
    from solver.materials import material_for

    try:
        return material_for(rig, mat_id)
    except (RopewrightError, KeyError):
        return None


def gear_list(rig: Rig, result: Result | None = None) -> GearList:
    """Count pulleys, captures, grabs, carabiners, slings and ropes by kind (module docstring's rule)."""
    kinds = {p.id: p.kind for p in rig.points}
    pulleys = captures = grabs = carabiners = 0
    specs: Counter[str] = Counter()
    sling_anchors: set[str] = set()
    for r in rig.ropes:
        n = len(r.path)
        for i, ps in enumerate(r.path):
            end = i in (0, n - 1)
            hw_kind = _hardware_kind(rig, ps.hardware)
            if ps.how in SHEAVE_HOWS:
                pulleys += 1
                carabiners += 1
                specs[_hardware_name(rig, ps.hardware)] += 1
                if kinds.get(ps.at) == "anchor":
                    sling_anchors.add(ps.at)
            if ps.how == "capture":
                captures += 1
                if getattr(ps, "grab", None):
                    grabs += 1
                    carabiners += 1
            if ps.how == "sliding" and hw_kind in ("carabiner", "ring") and kinds.get(ps.at) == "anchor":
                sling_anchors.add(ps.at)
            if hw_kind == "grab":
                grabs += 1
                carabiners += 1
            elif ps.how == "tied" and not end and kinds.get(ps.at) == "point":
                grabs += 1  # the rope is gripped where it goes on
                carabiners += 1
            if ps.how == "tied" and end:
                carabiners += 1
            elif ps.how in ("sliding", "tied") and hw_kind in ("carabiner", "ring"):
                carabiners += 1
    budgets = {b.rope: b for b in rope_budget(rig, result)}
    groups: dict[tuple[str, str], list] = {}
    sling_ropes = 0
    for r in rig.ropes:
        mat = _material_of(rig, r.material)
        kind = mat.kind if mat is not None else "rope"
        if kind == "sling":
            sling_ropes += 1
        groups.setdefault((kind, r.material), []).append((r, mat))
    ropes = []
    for (kind, mat_id), members in groups.items():
        mat = members[0][1]
        carried = [r.length_m for r, _ in members]
        ropes.append(RopeKind(kind, mat_id, mat.name if mat is not None else mat_id, len(members),
                              sum(budgets[r.id].needed_m for r, _ in members),
                              None if any(c is None for c in carried) else float(sum(carried))))
    return GearList(pulleys, captures, grabs, carabiners, len(sling_anchors) + sling_ropes, tuple(ropes),
                    tuple(sorted(specs.items())))
