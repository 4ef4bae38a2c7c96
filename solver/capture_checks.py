"""What a rigger is warned of about progress captures in a solved rig.

A capture runs like its pulley while the rope is hauled in and holds the rope with its grab
when it runs back (rig-format.md).  Two findings: in lowering the capture would hold what should
run (it must be released and tended), and a grab whose slip force is below the tension it would
hold when the team lets go slides instead of holding (check-values.md "Knots and grabs": a 3-wrap
prusik begins to slip around 7-9.5 kN; the grab is a designed slip point).
"""

from __future__ import annotations

from solver.errors import RigModelError
from solver.materials import hardware_for
from solver.model import Rig
from solver.result import Result, Warning_
from solver.units import format_force


def check_captures(rig: Rig, result: Result) -> list[Warning_]:
    """Warnings for every capture pass of ``rig`` solved as ``result`` (N, in the rig's force unit)."""
    out: list[Warning_] = []
    fu = rig.display.force
    tensions = {(s.rope, s.index): s.tension_N for s in result.segments}
    for rope in rig.ropes:
        for k, ps in enumerate(rope.path):
            if ps.how != "capture":
                continue
            where = rig.point(ps.at).name if rig.has_point(ps.at) else ps.at
            subject = f"{rope.id}@{ps.at}"
            if rig.settings.motion == "lower":
                out.append(Warning_("capture-lowering", subject,
                                    f"The progress capture at {where} on {rope.name} holds the rope as it runs back: "
                                    "to lower, release it and tend it by hand.", "warning"))
            held = tensions.get((rope.id, k - 1))  # the piece from the load side into the capture
            if not ps.grab or held is None:
                continue
            try:
                grab = hardware_for(rig, ps.grab)
            except RigModelError:
                continue
            if grab.slip_N is not None and held > grab.slip_N:
                out.append(Warning_("capture-slips", subject,
                                    f"The capture at {where} would hold {format_force(held, fu)} when the team lets go, "
                                    f"more than its grab ({grab.name}) holds before it slips "
                                    f"({format_force(grab.slip_N, fu)}): it would slide.", "danger"))
    return out
