"""``ropewright failures RIG [--json] [--units si|imperial]``: what happens if each component lets go.

A row per component (anchor, pass, rope piece, sling leg): whether the rest holds or runs
free, the worst new load and where, how far things move, the shock estimate; then what
each failure does in words, the people standing in a failure's path, and the cautions.
``--json`` prints ``{"failures": [...]}`` (rig-format.md).  Exit codes as ``solve``:
0 scanned, 2 bad file, 3 the intact rig does not solve (no scan; the message says why).
"""

from __future__ import annotations

import argparse
import sys
from typing import TextIO

from solver import units
from solver.cautions import caution_lines
from solver.cli_solve import EXIT_OK, EXIT_SOLVE_FAILED, _table, load_in_units, write_json
from solver.failure_shock import SHOCK_CAUTION
from solver.failure_zones import FLIGHT_MARGIN_M
from solver.failures import Failure, Scan, scan

def zone_assumption(length_unit: str) -> str:
    """Where the zone numbers come from, and which constant is the project's own choice."""
    return (f"Danger areas are computed: what each failure sweeps (rope pieces, swings, hardware flight), "
            f"with a margin of {units.format_length(FLIGHT_MARGIN_M, length_unit)} around it — that margin is "
            f"Ropewright's own choice, not a published value.")


def failure_row(f: Failure, force_unit: str, length_unit: str) -> list[str]:
    """One table row: component, kind, outcome, worst new load (where, use), farthest move, shock estimate."""
    fmt = lambda n: units.format_force(n, force_unit)  # noqa: E731
    worst = f.worst()
    worst_text = "—" if worst is None else (
        f"{fmt(worst[0])} at {worst[1]}" + (f" ({100 * worst[2]:.0f}%)" if worst[2] is not None else ""))
    far = max(f.moved, key=lambda m: m.distance_m, default=None)
    moved = "—" if far is None else f"{far.point} {units.format_length(far.distance_m, length_unit)}"
    shock = "—" if f.peak is None else f"{fmt(f.peak.force_N)} at {f.peak.at} ({f.peak.how})"
    return [f.component.id, f.component.kind, f.status, worst_text, moved, shock]


HEADERS = ["component", "kind", "then", "worst new load (use)", "moves most", "shock estimate"]


def format_scan(s: Scan, length_unit: str, force_unit: str) -> str:
    """The scan as a table and a list of what each failure does, with the cautions."""
    from solver.failure_warnings import people_at_risk

    rig = s.rig
    parts = [f"{rig.title or 'Untitled rig'}  —  if something lets go (motion: {rig.settings.motion})"]
    if not s.ok:
        parts.append(f"NO SCAN: {s.reason}")
    else:
        parts.append(_table(HEADERS, [failure_row(f, force_unit, length_unit) for f in s.failures]))
        parts.append("\nWhat happens")
        parts += [f"  {f.component.id}: {f.message}." for f in s.failures]
        people = people_at_risk(s)
        if people:
            parts.append("\nPeople in a failure's path")
            parts += [f"  [{w.code}] {w.message}" for w in people]
        parts.append("\n" + SHOCK_CAUTION)
        parts.append(zone_assumption(length_unit))
    parts.append("")
    parts += [f"Caution: {line}" for line in caution_lines()]
    return "\n".join(parts)


def run(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Load a rig, scan every failure and print it; returns the exit code."""
    out = out or sys.stdout
    rig, length_unit, force_unit = load_in_units(args)
    result = scan(rig)
    if args.json:
        write_json(scan_json(result), out)
    else:
        out.write(format_scan(result, length_unit, force_unit) + "\n")
    if not result.ok:
        print(f"ropewright: {args.rig}: {result.reason}", file=sys.stderr)
        return EXIT_SOLVE_FAILED
    return EXIT_OK


def failure_json(f: Failure, view: str = "plan") -> dict:
    """One entry of ``ropewright failures --json``: the solve records after the failure (as ``solve --json``
    writes them: bearings in plan), peak and zone."""
    from solver.failure_zones import rings

    records = f.after.to_json(view)
    worst = f.worst()
    return {
        "component": f.component.id,
        "kind": f.component.kind,
        "name": f.component.name,
        "status": f.status,
        "message": f.message,
        "anchors": records["anchors"],
        "loads": records["loads"],
        "segments": records["segments"],
        "moved": [{"point": m.point, "from": list(m.before), "to": list(m.after), "distance_m": m.distance_m}
                  for m in f.moved],
        "runs_free": [{"point": u.point, "direction_deg": u.direction_deg, "message": u.words} for u in f.unheld],
        "worst": None if worst is None else {"force_N": worst[0], "at": worst[1], "utilization": worst[2]},
        "peak_force_N": None if f.peak is None else f.peak.force_N,
        "peak_at": None if f.peak is None else f.peak.at,
        "peak_how": None if f.peak is None else f.peak.how,
        "zone": rings(f.zone),
    }


def scan_json(s: Scan) -> dict:
    """The whole scan as JSON: ``{"failures": [...], "reason", "shock_caution", "cautions"}`` (cautions as
    ``solve --json`` gives them)."""
    from solver.cautions import CAUTION_PARAGRAPHS

    return {"failures": [failure_json(f, s.rig.view) for f in s.failures], "reason": s.reason or None,
            "shock_caution": SHOCK_CAUTION, "cautions": list(CAUTION_PARAGRAPHS)}
