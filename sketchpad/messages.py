"""A failed solve in words, the same everywhere it is shown: the canvas banner, the Forces dock, the
scheduler's status, drawings, reports and the command line (no Qt: plain text).
"""

from __future__ import annotations

from solver.model import Rig
from solver.result import Result


def failure_text(result: Result, rig: Rig | None = None) -> str:
    """One line for a banner: what failed, the solver's reason and the point or rope it is about."""
    head = {"invalid": "The rig cannot be solved as drawn", "mechanism": "The rig is not held in place",
            "diverged": "No equilibrium found"}.get(result.status, "The solve failed")
    subject = result.subject
    where = ""
    if subject and rig is not None:
        if rig.has_point(subject):
            p = rig.point(subject)
            where = f" — at point {p.name}" + (f" ({p.id})" if p.label else "")
        elif any(r.id == subject for r in rig.ropes):
            r = rig.rope(subject)
            where = f" — on rope {r.name}" + (f" ({r.id})" if r.label else "")
        else:
            where = f" — at {subject}"
    elif subject:
        where = f" — at {subject}"
    reason = result.message.strip() or result.status
    return f"{head}{where}: {reason}"


def failure_sentence(rig: Rig, result: Result) -> str:
    """A failed solve in a rigger's words (the banner text the canvas shows)."""
    return f"{failure_text(result, rig)}. No forces are shown: fix the rig and export again."
