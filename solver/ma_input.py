"""What a mechanical advantage is measured against: the pull put into a rig, and why a rig may have none.

A mechanical advantage is the force delivered to the loads over the pull that produced it
(rig-format.md, ``mechanical_advantage``). The pull is the haul teams' force on hauled rope
ends or, without one, the forces drawn on free points that are not loads (a sideways pull on
a rope). A force acting on a load itself (its weight in plan, the current pushing a held
boat) is what the rig holds, not a pull the rig multiplies: a rig with no other pull has no
mechanical advantage, and every surface says so in the same words (``NO_PULL``).
"""

from __future__ import annotations

from solver.model import Rig

#: Why a solved rig with a load shows no mechanical advantage (dock, plan key, CLI, JSON, report).
NO_PULL = ("nothing hauls or pulls on the rig (no haul team, no force drawn off the load): the load is held, "
           "not hauled, and a mechanical advantage needs a pull to multiply")
NO_LOAD = "the rig has no load point to deliver force to"
NOT_SOLVED = "the rig did not solve"


def drawn_pull_N(rig: Rig) -> float:
    """The forces drawn on free points that are not loads, summed by magnitude (N): the pull of a rig with no
    haul team. Forces on loads (held, not multiplied) and on fixed points (not part of the solve) are left out."""
    total = 0.0
    for f in rig.forces:
        if not rig.has_point(f.at):
            continue
        p = rig.point(f.at)
        if p.kind != "load" and not p.is_fixed:
            total += abs(float(f.magnitude_N))
    return total


def hauls(rig: Rig) -> bool:
    """True when some rope ends hauled (its pull is the haul team's force)."""
    return any(r.path and r.path[-1].how == "hauled" for r in rig.ropes)


def rescaled_to_user(ma: float | None, solved_pull_N: float, user_pull_N: float) -> float | None:
    """An MA measured against ``solved_pull_N`` (the drawn pull of a rig with added forces: the current's drag on
    ropes) measured instead against the user's own drawn pull; None when the user's rig has no pull."""
    if ma is None or user_pull_N <= 0.0 or solved_pull_N <= 0.0:
        return None
    return ma * solved_pull_N / user_pull_N


def no_ma_reason(ok: bool, has_loads: bool, ma_actual: float | None) -> str | None:
    """The words for a missing mechanical advantage, or None when there is one."""
    if ma_actual is not None:
        return None
    if not ok:
        return NOT_SOLVED
    return NO_PULL if has_loads else NO_LOAD


__all__ = ["NO_PULL", "NO_LOAD", "NOT_SOLVED", "drawn_pull_N", "hauls", "rescaled_to_user", "no_ma_reason"]
