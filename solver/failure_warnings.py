"""Computed danger zones for the plan and the people standing in them, from a failure scan.

The plan's zones become the union of every failure's computed area
(:func:`solver.failure_zones.failure_zone`) plus the recoil band of every loaded piece
(:mod:`solver.danger`); the fixed bight triangle is not needed once the scan has run.
A person (or a haul team, outside its own rope) inside a failure's area is warned with
the failure that puts them there.
"""

from __future__ import annotations

from shapely.geometry import Point as ShPoint

from solver.danger import DangerZone, danger_zones
from solver.failures import Failure, Scan
from solver.result import Warning_


def failure_zones(scan: Scan) -> list[DangerZone]:
    """One zone per failure that sweeps an area: kind "failure", subject the component id, label in words."""
    return [DangerZone(kind="failure", subject=f.component.id, label=f"if {f.component.name} lets go",
                       geometry=f.zone, severity="danger")
            for f in scan.failures if not f.zone.is_empty]


def plan_zones(scan: Scan) -> list[DangerZone]:
    """The plan's danger zones after a scan: every failure's area, then every loaded piece's recoil band."""
    if not scan.ok:
        return []
    recoil = [z for z in danger_zones(scan.rig, scan.intact) if z.kind == "recoil"]
    return failure_zones(scan) + recoil


def _why(f: Failure, person: str) -> str:
    effect = f.effect or "the rig moves"
    return f"if {f.component.name} lets go, {effect} through where {person} stands"


def people_at_risk(scan: Scan) -> list[Warning_]:
    """A danger warning for every person or haul team inside a failure's area, naming that failure."""
    out = []
    for p in scan.rig.points:
        if p.kind not in ("person", "haul"):
            continue
        pt = ShPoint(p.x, p.y)
        for f in scan.failures:
            if f.zone.is_empty or not f.zone.contains(pt):
                continue
            if p.kind == "haul" and (any(u.point == p.id for u in f.unheld) or not any(
                    part.geometry.contains(pt) for part in f.zone_parts if p.id not in part.ends)):
                continue  # a haul team holds its own rope's end: only parts away from it count
            out.append(Warning_("person-in-failure-zone", f"{p.id},{f.component.id}",
                                _why(f, p.name)[0].upper() + _why(f, p.name)[1:] + ". Move out of its path.",
                                "danger"))
    return out
