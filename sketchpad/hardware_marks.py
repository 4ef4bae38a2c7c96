"""Overloaded hardware on the plan: a pulley, carabiner or edge loaded past its MBS ÷ safety factor gets a
label at its pass, coloured like an overloaded anchor's, so it is not only in the Forces dock.

The load on each piece of hardware is :func:`solver.checks.pass_loads` (the vector sum of the rope
legs there), the same number the dock's Hardware table and the warnings use.  Only hardware at or
past its limit is labelled: the plan stays readable, and what the lead must act on stands out.
"""

from __future__ import annotations

import logging
from typing import Mapping

from sketchpad import theme
from solver.model import Rig
from solver.result import Result
from solver.capacity import margin_words
from solver.units import format_force

log = logging.getLogger(__name__)

#: label when use (load x SF / MBS) reaches this: at the allowed load
MARK_FROM_UTIL = 1.0


def overloaded_hardware(rig: Rig, result: Result) -> list[tuple[str, str, str, float, float]]:
    """(rope id, point id, hardware kind, load N, use) of every pass whose hardware is at or past its limit."""
    from solver.checks import pass_loads
    from solver.errors import RopewrightError
    from solver.materials import hardware_for

    sf = float(rig.settings.min_safety_factor)
    out = []
    for rope_id, k, at, force in pass_loads(rig, result):
        try:
            hw = hardware_for(rig, rig.rope(rope_id).path[k].hardware or "")
        except (RopewrightError, KeyError):
            continue
        if not hw.mbs_N:
            continue
        use = force * sf / float(hw.mbs_N)
        if use >= MARK_FROM_UTIL:
            out.append((rope_id, at, hw.kind, force, use))
    return out


def hardware_labels(rig: Rig, result: Result, pos: Mapping[str, tuple[float, float]]) -> list:
    """Overlay labels (kind "hardware") for the overloaded hardware of an ok ``result``; none if it cannot tell."""
    from sketchpad.overlay.labels import OverlayLabel, fmt_percent

    if not result.ok:
        return []
    try:
        marks = overloaded_hardware(rig, result)
    except Exception:  # noqa: BLE001 - a label must never hide the forces; the dock and warnings still say it
        log.exception("hardware marks failed")
        return []
    unit, sf = rig.display.force, float(rig.settings.min_safety_factor)
    labels = []
    for rope_id, at, kind, force, use in marks:
        if at not in pos:
            continue
        labels.append(OverlayLabel(  # short, like an anchor's: the point's own name is beside it
            kind="hardware", key=f"{rope_id}@{at}#hw",
            lines=(f"{kind} {format_force(force, unit)}", f"{fmt_percent(use)} {margin_words('strength', sf)}"),
            values={"force_N": force, "utilization": use}, colour=theme.utilization_colour(use),
            priority=93.0 + min(use, 3.0), base=pos[at], prefer=(0.0, 1.0)))
    return labels
