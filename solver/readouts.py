"""The wording of the three mechanical advantages and of an anchor's margin, shared by every surface.

Plan labels, the Forces dock, the CLI table, drawings and the PDF report all write
the MA as the same three named numbers: **nominal** (the strand count of the rope
graph, :mod:`solver.nominal_ma`), **ideal** (every pass frictionless at the drawn
angles) and **actual** (with the rig's friction and stretch); and an anchor's
capacity with the kind of number it is (:mod:`solver.capacity`).  Pure text, no Qt.
"""

from __future__ import annotations

import math

from solver.capacity import KIND_TAGS, kind_of, margin_words
from solver.ma_input import no_ma_reason
from solver.nominal_ma import ma_text
from solver.result import AnchorResult, Result
from solver.units import format_force

#: What each MA means, said once where the three are explained (report, CLI, dock tooltip).
MA_MEANINGS: tuple[tuple[str, str], ...] = (
    ("nominal", "strand count: frictionless passes, parallel strands"),
    ("ideal", "frictionless passes at the drawn angles"),
    ("actual", "with the rig's friction and stretch"),
)


def _ratio(ma: float | None) -> str:
    return "—" if ma is None or not math.isfinite(ma) else f"{ma:.2f}:1"


def ma_values(result: Result, pending: str = "—") -> tuple[str, str, str]:
    """(nominal, ideal, actual) as text; ``pending`` stands for an ideal or nominal not yet worked out."""
    nominal = ma_text(result.ma_nominal) if result.ma_nominal is not None else (
        "none (no strand count)" if result.ma_ideal is not None else pending)
    ideal = _ratio(result.ma_ideal) if result.ma_ideal is not None else pending
    return nominal, ideal, _ratio(result.ma_actual)


def ma_short(result: Result, pending: str = "when still") -> str:
    """One line for labels and summaries: ``"MA nominal 3:1 · ideal 2.98:1 · actual 2.71:1"``."""
    nominal, ideal, actual = ma_values(result, pending)
    if result.ma_nominal is None and result.ma_ideal is not None:
        return f"MA ideal {ideal} · actual {actual}"  # a vector pull: no strand count to show
    return f"MA nominal {nominal} · ideal {ideal} · actual {actual}"


def ma_long(result: Result) -> str:
    """A sentence naming all three with their meaning (CLI, report)."""
    if result.ma_actual is None:
        return f"Mechanical advantage: none — {no_ma_reason(result.ok, bool(result.loads), None)}."
    nominal, ideal, actual = ma_values(result)
    parts = []
    if result.ma_nominal is not None:
        parts.append(f"nominal {nominal} ({MA_MEANINGS[0][1]})")
    else:
        parts.append("no nominal strand count (a sideways pull, or strands that do not fix it)")
    parts.append(f"ideal {ideal} ({MA_MEANINGS[1][1]})")
    parts.append(f"actual {actual} ({MA_MEANINGS[2][1]})")
    return "Mechanical advantage: " + "; ".join(parts) + "."


def capacity_text(a: AnchorResult, force_unit: str) -> str:
    """An anchor's capacity with its kind: ``"20.0 kN strength"``, ``"2.00 kN working load"``, or "not given"."""
    if a.capacity_N is None:
        return "not given"
    return f"{format_force(a.capacity_N, force_unit)} {KIND_TAGS[kind_of(a.capacity_kind)]}"


def use_text(a: AnchorResult, safety_factor: float) -> str:
    """An anchor's use with the margin it was taken against: ``"45 % of strength ÷ 10"``, or "—"."""
    if a.utilization is None or not math.isfinite(a.utilization):
        return "—"
    return f"{100 * a.utilization:.0f} % {margin_words(a.capacity_kind, safety_factor)}"
