"""The report's "If something lets go" section: the failure scan as a table, the people in a failure's path.

One row per component (:func:`solver.failures.scan`), the same numbers as ``ropewright
failures`` and the What-if dock, in the rig's units; rows where something runs free or a
remaining part is pushed past its margin are flagged red.  Under it: the shock caution and
the one zone constant that remains (the project's own choice).
"""

from __future__ import annotations

from dataclasses import dataclass

from solver.failure_shock import SHOCK_CAUTION
from solver.failures import Scan, scan
from solver.model import Rig
from solver.result import Result, Warning_
from solver.units import format_force, format_length

def recoil_assumption(length_unit: str) -> str:
    """The report's assumptions line on the danger zones: which constants remain, labelled as our own choice."""
    from solver.danger import RECOIL_M_PER_J, RECOIL_MAX_M, RECOIL_MIN_M
    from solver.failure_zones import FLIGHT_MARGIN_M

    m = lambda x: format_length(x, length_unit)  # noqa: E731
    return (f"Danger zones: the failure areas are computed by letting each component go (If something lets go), "
            f"with a {m(FLIGHT_MARGIN_M)} margin; that margin, the recoil bands along loaded rope "
            f"({m(RECOIL_MIN_M)} at any load plus {m(RECOIL_M_PER_J * 400.0)} per 400 J stored, at most "
            f"{m(RECOIL_MAX_M)}) and the fixed bight shape are Ropewright's own choices, not published values or "
            f"common practice.")


@dataclass
class FailureSection:
    """What the report prints under "If something lets go": the table, then lines of text."""

    scan: Scan
    table: object  # sketchpad.report.Table
    people: list[Warning_]

    def draw_zones_on(self, drawing) -> None:
        """Give the report's drawing (sketchpad.export.Drawing) the computed zones the app's plan shows, and its
        result the failure-named person warnings (read the result back from ``drawing.result``)."""
        drawing.use_scan(self.scan)

    def add_to(self, flow) -> None:
        """Append the section to a report page flow (sketchpad.report.Flow)."""
        from sketchpad.export import page_font
        from sketchpad.report_flow import INK, LOW_SF

        if not self.scan.ok:
            flow.heading("If something lets go")
            flow.text(f"No scan: {self.scan.reason}", page_font(9), INK)
            return
        flow.table(self.table)
        for w in self.people:
            flow.text(f"DANGER: {w.message}", page_font(9, bold=True), LOW_SF, indent=8)


def failure_table(rig: Rig, s: Scan):
    """One row per outcome: the components whose failure ends the same way share a row (then, worst new load
    and where, farthest move, shock estimate), so the table stays short enough to read at a glance."""
    from sketchpad.pages.table import Table

    fu, lu = rig.display.force, rig.display.length
    t = Table("If something lets go", ("If this lets go", "Then", "Worst new load (use)", "Moves most",
                                        "Shock (estimate)"), [], (2.6, 0.8, 1.6, 0.9, 1.5), frozenset(),
              note=f"Each component let go alone; the rest solved again with the same motion and forces. "
                   f"{SHOCK_CAUTION}")
    rows: dict[tuple, list[str]] = {}
    flagged: set[tuple] = set()
    for f in s.failures:
        worst = f.worst()
        worst_text = "—" if worst is None else f"{format_force(worst[0], fu)} at {worst[1]}" + (
            f" ({100 * worst[2]:.0f} %)" if worst[2] is not None else "")
        far = max(f.moved, key=lambda m: m.distance_m, default=None)
        moved = "—" if far is None else f"{far.point} {format_length(far.distance_m, lu)}"
        shock = "—" if f.peak is None else f"{format_force(f.peak.force_N, fu)} at {f.peak.at} ({f.peak.how})"
        key = (f.status, worst_text, moved, shock)
        rows.setdefault(key, []).append(f"{f.component.id} ({f.component.kind})")
        if not f.holds or (worst is not None and worst[2] is not None and worst[2] > 1.0):
            flagged.add(key)
    for key, names in rows.items():
        t.rows.append((", ".join(names), *key))
        if key in flagged:
            t.flagged.add(len(t.rows) - 1)
    return t


def failure_section(rig: Rig, result: Result, finished: Scan | None = None) -> FailureSection | None:
    """The section for a solved rig (scanned once per report, unless ``finished`` is a scan of it made already);
    None when the rig did not solve."""
    from solver.failure_warnings import people_at_risk

    if not result.ok:
        return None
    s = finished if finished is not None else scan(rig, result)
    return FailureSection(s, failure_table(rig, s), people_at_risk(s) if s.ok else [])
