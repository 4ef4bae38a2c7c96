"""Who stands where: the people on the plan, their roles, where they stand and whether that is inside a danger zone.

Pure (no Qt).  A ``person`` point may carry a ``role`` (``solver.model.PERSON_ROLES``).  Where
a person stands is given as distance and bearing from the nearest anchor, load or haul team
(the words a briefing uses: "6.2 m at 045° (NE) from bank boulder"), and the danger zones are
those of :func:`solver.danger.danger_zones` for the solved rig.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from solver.model import Rig
from solver.result import Result

NO_ROLE = "no role set"


@dataclass(frozen=True)
class Placement:
    """One person on the plan: name, role, where they stand (words) and the zones they stand in."""

    point: str
    name: str
    role: str
    where: str
    zones: tuple[str, ...]  # labels of the danger zones that contain the point; () if none or unknown
    zones_known: bool  # False when the rig did not solve (no zones to test against)

    @property
    def in_zone(self) -> bool:
        return bool(self.zones)

    @property
    def zone_text(self) -> str:
        if not self.zones_known:
            return "unknown (the rig did not solve)"
        return "INSIDE: " + "; ".join(self.zones) if self.zones else "clear of every zone"


def where_text(rig: Rig, pid: str) -> str:
    """Distance and bearing (plan) or side (elevation) from the nearest anchor, load or haul team."""
    from solver.directions import bearing_of, bearing_text
    from solver.units import format_length

    p = rig.point(pid)
    refs = [q for q in rig.points if q.kind in ("anchor", "load", "haul") and q.id != pid]
    if not refs:
        return f"at ({format_length(p.x, rig.display.length)}, {format_length(p.y, rig.display.length)})"
    q = min(refs, key=lambda q: math.hypot(p.x - q.x, p.y - q.y))
    d = math.hypot(p.x - q.x, p.y - q.y)
    dist = format_length(d, rig.display.length)
    if d < 1e-6:
        return f"at {q.name}"
    if rig.view == "plan":
        return f"{dist} at {bearing_text(bearing_of(p.x - q.x, p.y - q.y))} from {q.name}"
    side = "right" if p.x > q.x else "left"
    level = "above" if p.y > q.y else "below"
    return f"{dist} {side} and {level} {q.name}"


def placements(rig: Rig, result: Result | None) -> list[Placement]:
    """Every person on the plan, in file order, with role, place and the zones around them."""
    from shapely.geometry import Point as ShapelyPoint

    zones = []
    known = result is not None and result.ok
    if known:
        from solver.danger import danger_zones

        zones = danger_zones(rig, result)
    out = []
    for p in rig.points:
        if p.kind != "person":
            continue
        here = ShapelyPoint(p.x, p.y)
        inside = tuple(dict.fromkeys(z.label for z in zones if z.geometry.contains(here)))
        out.append(Placement(p.id, p.name, p.role or NO_ROLE, where_text(rig, p.id), inside, known))
    return out
