"""What the current does to a rig, as table rows in words and the rig's units: one wording for CLI and report.

Rows are (what, where, the current, tension at the wet ends): each current with its speed and the bearing
it flows toward, the river side (facing downstream) of each anchor, haul team and person, each rope in the
water with its bow, drag and wet-end tensions, and the current's push on each body.
"""

from __future__ import annotations

from solver.directions import bearing_text
from solver.model import Rig
from solver.result import Result
from solver.units import format_force, format_length, format_speed
from solver.water_drag import ROPE_CD
from solver.water_warnings import BOW_SHARE, TETHER_RATIO

WATER_HEADER = ("what", "where", "the current", "tension at the wet ends")
WATER_TITLE = "Moving water (river left / right facing downstream)"


def _name(rig: Rig, pid: str) -> str:
    return rig.point(pid).name if rig.has_point(pid) else pid


def water_rows(rig: Rig, result: Result, length_unit: str, force_unit: str) -> list[tuple[str, str, str, str]]:
    """The rows of the moving-water table (empty for a rig not in moving water)."""
    water = result.water
    if water is None:
        return []
    fu, lu = force_unit, length_unit
    rows: list[tuple[str, str, str, str]] = []
    for f in rig.site.features:
        if f.kind == "water" and f.flow is not None:
            rows.append(("current", f.label or f.id,
                         f"{format_speed(f.flow.speed_m_s, lu)} toward {bearing_text(f.flow.bearing_deg)}", ""))
    for pid, side in water.sides:
        rows.append(("bank", _name(rig, pid), side, ""))
    for w in water.ropes:
        rope = rig.rope(w.rope).name
        what = (f"bowed {format_length(w.sag_m, lu)} off its straight line" if w.bowed
                else "drawn straight (runs through a pulley or edge)")
        rows.append(("rope in water", f"{rope}: {_name(rig, w.from_point)} → {_name(rig, w.to_point)}",
                     f"{what}; water's push {format_force(w.drag_N, fu)}",
                     f"{format_force(w.tension_in_N, fu)} / {format_force(w.tension_out_N, fu)}"))
    for b in water.bodies:
        rows.append(("in the water", _name(rig, b.point),
                     f"current's push {format_force(b.force_N, fu)} at {format_speed(b.speed_m_s, lu)}", ""))
    return rows


def water_note() -> str:
    """How the water's push is computed, with sources and our own thresholds named."""
    return (f"Drag F = 1/2 rho Cd A v^2 on loads (Cd from C. Matthews' table, as the load estimate); on ropes "
            f"1/2 rho Cd d v_n^2 per metre with Cd {ROPE_CD:g} and v_n the speed across the rope (S. F. Hoerner, "
            f"Fluid-Dynamic Drag, cross-flow principle). Warned: a rope pulling a person or boat in fast water more "
            f"than {TETHER_RATIO:g} times its own drag, and a bowed rope whose drag exceeds {BOW_SHARE:.0%} of its "
            f"tension (both thresholds ours). Surges, waves and debris are not modelled.")
