"""The system summary as sentences a lead reads in five seconds: what the load gets against what it needs,
who is pulling, and the safety factor.  Shared by the plan's key, the Forces dock and drawing exports.

"2.37 kN of 2.00 kN needed -> 4 haulers needed" read as a contradiction; here each fact is its
own sentence: "Reaches pinned raft: 2.37 kN (needs 2.00 kN)." "4 haulers pulling."  The mechanical
advantage line stays where the overlay and the dock write it.
"""

from __future__ import annotations

from sketchpad.short_text import drawn  # a very long name is cut as on the plan
from solver.model import Rig
from solver.pull_needed import need_phrase
from solver.result import Result
from solver.units import format_force

MOTION_WORDS = {"haul": "hauling", "hold": "holding", "lower": "lowering"}


def _point_and_name(rig: Rig, pid: str):
    """The rig's point ``pid`` (None if gone) and what a person calls it (as drawn)."""
    try:
        p = rig.point(pid)  # one look-up: this runs for every load and haul team on every drag step
    except KeyError:
        return None, drawn(pid)
    return p, drawn(p.name)


def _each(rig: Rig, records, sentence) -> list[str]:
    """``sentence(point or None, name, record)`` for each (point id, record), each ending in a full stop."""
    return [sentence(*_point_and_name(rig, pid), record) + "." for pid, record in records.items()]


def haul_sentences(rig: Rig, result: Result) -> list[str]:
    """One sentence per haul team: what it pulls in total and per hauler, and the range a hold allows."""
    unit = rig.display.force

    def pulls(p, name: str, force: float) -> str:
        text = f"{name[:1].upper()}{name[1:]} pulls {format_force(force, unit)}"
        if p is not None and p.team:
            text += f" ({p.team} × {format_force(force / p.team, unit)})"
        hold = result.hold_haul_range.get(p.id if p is not None else "")
        if hold is not None:
            text += f"; a hold allows {format_force(hold.low, unit)} – {format_force(hold.high, unit)}"
        return text

    return _each(rig, result.haul, pulls)


def load_sentences(rig: Rig, result: Result) -> list[str]:
    """One sentence per load: the force it gets and, when known, what it needs and by how much it falls short."""
    unit = rig.display.force

    def reaches(p, name: str, f) -> str:
        text = f"Reaches {name}: {format_force(f.force_N, unit)}"
        if p is not None and p.required_N is not None:
            text += f" (needs {format_force(p.required_N, unit)})"
            short = float(p.required_N) - float(f.force_N)
            if short > 0:
                text += f", short by {format_force(short, unit)}"
        return text

    return _each(rig, result.loads, reaches)


def haulers_sentence(rig: Rig, result: Result) -> str | None:
    """How many haulers pull now (None: no haul team)."""
    pulling = sum(int(rig.point(h).team or 0) for h in result.haul if rig.has_point(h))
    if not pulling:
        return None
    return f"{pulling} hauler{'s' if pulling != 1 else ''} pulling."


def need_sentences(rig: Rig, result: Result) -> list[str]:
    """What freeing each load takes, as the solver found it (solver.pull_needed; after the drawing is still)."""
    return _each(rig, result.needs, lambda _p, name, need: f"To free {name}: {need_phrase(rig, need)}")


def safety_sentence(rig: Rig) -> str:
    motion = MOTION_WORDS.get(rig.settings.motion, rig.settings.motion)
    return f"Safety factor {rig.settings.min_safety_factor:g}:1, {motion}."


def sentences(rig: Rig, result: Result) -> list[str]:
    """Everything after the MA line, in reading order: loads, what freeing them takes, haulers, haul teams,
    safety factor."""
    out = load_sentences(rig, result) + need_sentences(rig, result)
    who = haulers_sentence(rig, result)
    if who:
        out.append(who)
    out += haul_sentences(rig, result)
    out.append(safety_sentence(rig))
    return out
