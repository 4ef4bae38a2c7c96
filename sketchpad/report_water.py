"""The report's "Moving water" table and assumption lines: currents, river sides, bowed ropes, bodies.

Every number comes from the Result's ``water`` (solver.water_result) in the rig's display units; river
left / right are named facing downstream (the trade's convention).
"""

from __future__ import annotations

from solver.directions import bearing_text
from solver.model import Rig
from solver.result import Result
from solver.units import format_force, format_length, format_speed
from solver.water_drag import ROPE_CD
from solver.water_warnings import BOW_SHARE, TETHER_RATIO


def _name(rig: Rig, pid: str) -> str:
    return rig.point(pid).name if rig.has_point(pid) else pid


def water_table(rig: Rig, result: Result):
    """A report Table of what the current does to the rig, or None for a rig not in moving water."""
    from sketchpad.report import Table

    water = result.water
    if water is None:
        return None
    fu, lu = rig.display.force, rig.display.length
    rows: list[tuple[str, ...]] = []
    for f in rig.site.features:
        if f.kind == "water" and f.flow is not None:
            rows.append(("current", f.label or f.id, f"{format_speed(f.flow.speed_m_s, lu)} toward "
                                                      f"{bearing_text(f.flow.bearing_deg)}", ""))
    for pid, side in water.sides:
        rows.append(("bank", _name(rig, pid), side, ""))
    for w in water.ropes:
        rope = rig.rope(w.rope).name
        what = (f"bowed {format_length(w.sag_m, lu)} downstream" if w.bowed
                else "drawn straight (runs through a pulley or edge)")
        rows.append(("rope in water", f"{rope}: {_name(rig, w.from_point)} → {_name(rig, w.to_point)}",
                     f"{what}; water's push {format_force(w.drag_N, fu)}",
                     f"{format_force(w.tension_in_N, fu)} / {format_force(w.tension_out_N, fu)}"))
    for b in water.bodies:
        rows.append(("in the water", _name(rig, b.point),
                     f"current's push {format_force(b.force_N, fu)} at {format_speed(b.speed_m_s, lu)}", ""))
    return Table("Moving water (river left / right facing downstream)",
                 ("what", "where", "the current", "tension at the wet ends"), rows, (1.2, 3.0, 3.6, 2.2),
                 note=water_note())


def water_note() -> str:
    """How the water's push is computed, with sources and our own thresholds named."""
    return (f"Drag F = 1/2 rho Cd A v^2 on loads (Cd from C. Matthews' table, as the load estimate); on ropes "
            f"1/2 rho Cd d v_n^2 per metre with Cd {ROPE_CD:g} and v_n the speed across the rope (S. F. Hoerner, "
            f"Fluid-Dynamic Drag, cross-flow principle). Warned: a rope pulling a person or boat in fast water more "
            f"than {TETHER_RATIO:g} times its own drag, and a bowed rope whose drag exceeds {BOW_SHARE:.0%} of its "
            f"tension (both thresholds ours). Surges, waves and debris are not modelled.")
