"""The haul a rig asks for: load travel, throw per stroke and reset spacing, kept in the rig file.

An optional top-level ``"haul_plan": {"travel_m", "throw_m", "spacing_m"}`` entry (unknown top-level
keys are kept on load and save, rig-format.md); the app's Haul plan panel edits it undoably and the
report and ``ropewright haul`` read it.  Metres.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Mapping

from solver.model import Rig

#: Default closest spacing of a travelling pulley to the one it runs toward before the team resets, m.
DEFAULT_SPACING_M = 0.2
#: Top-level rig-file key holding the planned haul: {"travel_m", "throw_m", "spacing_m"} (all optional).
HAUL_KEY = "haul_plan"
#: Default travel and throw when a rig names none, m.
DEFAULT_TRAVEL_M = 2.0
DEFAULT_THROW_M = 3.0
#: Default solved steps per stroke of a planned haul (``ropewright haul --steps``).
DEFAULT_STEPS = 100


@dataclass(frozen=True)
class HaulSettings:
    """The haul asked for: load travel, throw per stroke and closest pulley spacing, m."""

    travel_m: float = DEFAULT_TRAVEL_M
    throw_m: float = DEFAULT_THROW_M
    spacing_m: float = DEFAULT_SPACING_M


def haul_settings(rig: Rig) -> HaulSettings:
    """The rig's planned haul (its ``haul_plan`` entry), defaults where it names none."""
    raw = rig.extra.get(HAUL_KEY)
    if not isinstance(raw, Mapping):
        return HaulSettings()
    out = HaulSettings()
    for name in ("travel_m", "throw_m", "spacing_m"):
        v = raw.get(name)
        if isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v):
            out = replace(out, **{name: float(v)})
    return out


def with_haul_settings(rig: Rig, settings: HaulSettings) -> Rig:
    """``rig`` with its planned haul set (kept in the file as the ``haul_plan`` entry)."""
    extra = dict(rig.extra)
    extra[HAUL_KEY] = {"travel_m": settings.travel_m, "throw_m": settings.throw_m, "spacing_m": settings.spacing_m}
    return replace(rig, extra=extra)
