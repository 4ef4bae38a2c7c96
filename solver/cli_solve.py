"""``ropewright solve RIG [--json] [--units si|imperial]``: solve a rig file and print its forces.

Prints a readable table (rope pieces, anchors, loads, mechanical advantage,
warnings) or the result JSON of rig-format.md.  Exit codes: 0 ok, 2 bad
file, 3 the solve failed (the message says why, in words).
"""

from __future__ import annotations

import argparse
import gc
import json
import math
import sys
from dataclasses import replace
from typing import TextIO

from solver import units
from solver.cautions import CAUTION_PARAGRAPHS, caution_lines
from solver.directions import bearing_or_none, direction_heading, direction_text
from solver.model import Rig
from solver.readouts import capacity_text, ma_long, use_text
from solver.result import Result

EXIT_OK, EXIT_BAD_INPUT, EXIT_SOLVE_FAILED = 0, 2, 3


def _units_for(rig: Rig, system: str | None) -> tuple[str, str]:
    """(length unit, force unit): the --units choice, else the rig's own display setting."""
    if system:
        return units.system_units(system)
    return rig.display.length, rig.display.force


def _table(headers: list[str], rows: list[list[str]]) -> str:
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(headers)]
    line = "  ".join(h.ljust(w) for h, w in zip(headers, widths))
    out = [line, "  ".join("-" * w for w in widths)]
    out += ["  ".join(c.rjust(w) if c[:1].isdigit() or c[:1] == "-" else c.ljust(w) for c, w in zip(r, widths))
            for r in rows]
    return "\n".join(out)


def _pct(x: float | None) -> str:
    return "—" if x is None or not math.isfinite(x) else f"{100 * x:.0f}%"


def format_result(rig: Rig, result: Result, length_unit: str, force_unit: str) -> str:
    """The result as plain-text tables a rigging lead can read at a glance."""
    f = lambda n: units.format_force(n, force_unit)  # noqa: E731
    parts = [f"{rig.title or 'Untitled rig'}  —  motion: {rig.settings.motion}, "
             f"safety factor {rig.settings.min_safety_factor:g}:1"]
    if not result.ok:
        parts.append(f"SOLVE FAILED ({result.status}): {result.message}")
    else:
        parts.append(f"Solved in {result.iterations} iterations, largest imbalance {f(result.residual_N)}.")
        rope_names = {r.id: r.name for r in rig.ropes}
        rows = [[rope_names.get(s.rope, s.rope), f"{s.from_point}→{s.to_point}", f(s.tension_N),
                 units.format_length(s.length_m, length_unit), f"{100 * s.strain:.2f}%", _pct(s.utilization)]
                for s in result.segments]
        parts.append("\nRope pieces\n" + _table(["rope", "piece", "tension", "length", "stretch", "use of MBS/SF"], rows))
        toward = direction_heading(rig.view, "pulled toward")
        if result.anchors:
            sf = float(rig.settings.min_safety_factor)
            rows = [[aid, f(a.force_N), direction_text(a.direction_deg, rig.view, a.force_N),
                     capacity_text(a, force_unit), use_text(a, sf)]
                    for aid, a in result.anchors.items()]
            parts.append("\nAnchors\n" + _table(["anchor", "resultant", toward, "capacity", "use"], rows))
        if result.loads:
            rows = [[lid, f(a.force_N), direction_text(a.direction_deg, rig.view, a.force_N),
                     *_need_cells(rig, result, lid, f)] for lid, a in result.loads.items()]
            parts.append("\nLoads (pull needed: solved on the rig, every haul team and pulling force scaled together)\n"
                         + _table(["load", "force delivered", toward, "needed", "short", "pull needed"], rows))
        if rig.forces:
            rows = [[f"{rig.point(fc.at).name if rig.has_point(fc.at) else fc.at}"
                     + (f" ({fc.label})" if fc.label else ""), f(fc.magnitude_N),
                     direction_text(fc.direction_deg, rig.view, fc.magnitude_N)] for fc in rig.forces]
            parts.append("\nForces drawn\n" + _table(["on", "size", direction_heading(rig.view, "toward")], rows))
        links = _weak_link_rows(rig, result, f)
        if links:
            parts.append("\nWeak links (knots: share of MBS kept, in the margins above; grabs: slip force)\n"
                         + _table(["rope", "at", "what", "figure used", "carries"], links))
        from solver.water_text import WATER_HEADER, WATER_TITLE, water_rows

        wet = water_rows(rig, result, length_unit, force_unit)
        if wet:
            parts.append(f"\n{WATER_TITLE}\n" + _table(list(WATER_HEADER), [list(r) for r in wet]))
        if result.haul:
            parts.append("\nHaul: " + ", ".join(f"{hid} {f(v)}" for hid, v in result.haul.items()))
        parts.append("\n" + ma_long(result))  # or why there is none (solver.ma_input)
        for rng_name, rng in (("haul", result.hold_haul_range), ("anchor", result.hold_anchor_range)):
            for k, r in rng.items():
                parts.append(f"Hold range, {rng_name} {k}: {f(r.low)} to {f(r.high)}")
        parts.append("\n" + quick_zone_line(rig, result))
    return closing(parts, [f"[{w.code}] {w.subject}: {w.message}" for w in result.warnings])


def quick_zone_line(rig: Rig, result: Result) -> str:
    """The fast path's zone legend: which shapes the person checks used, and where the computed ones are."""
    from solver.scan_warnings import QUICK_ESTIMATE_NOTE

    return (f"Danger zones checked here: a recoil band along each loaded piece and the inside of the bight at each "
            f"loaded redirect — the bight is a {QUICK_ESTIMATE_NOTE}.")


def closing(parts: list[str], warnings: list[str]) -> str:
    """``parts`` and the warnings (if any) and the caution lines, as the text a command prints."""
    if warnings:
        parts = parts + ["\nWarnings"] + [f"  {w}" for w in warnings]
    return "\n".join(parts + [""] + [f"Caution: {line}" for line in caution_lines()])


def _weak_link_rows(rig: Rig, result: Result, f) -> list[list[str]]:
    """One row per knot or rope grab (solver.weak_links): where, what, the figure its margin used, the force."""
    from solver.weak_links import weak_links

    rows = []
    for w in weak_links(rig, result):
        figure = (f"{w.efficiency:.0%} of MBS = {f(w.strength_N)}" if w.kind == "termination" and w.strength_N
                  else f"{w.efficiency:.0%} of MBS" if w.kind == "termination" else f"slips at {f(w.slip_N)}")
        carried = "—" if w.force_N is None else f(w.force_N)
        if w.kind == "grab" and w.force_N is not None and w.slip_N and w.force_N > w.slip_N:
            carried += " (slides)"
        rows.append([w.rope, w.at, w.label, figure, carried])
    return rows


def _need_cells(rig: Rig, result: Result, load_id: str, f) -> list[str]:
    """(needed, short, pull needed) cells of one load: "—" where it has no required force."""
    from solver.pull_needed import need_phrase

    need = result.needs.get(load_id)
    if need is None:
        return ["—", "—", "—"]
    return [f(need.required_N), f(need.short_N) if need.short_N > 0 else "enough", need_phrase(rig, need)]


def load_in_units(args: argparse.Namespace) -> tuple[Rig, str, str]:
    """The rig file ``args.rig`` shown in the ``--units`` asked for: (rig, length unit, force unit).

    Display units never change a number; warnings are worded in the units asked for.
    RigFileError reaches solver.cli.main (exit 2).
    """
    from solver.rigfile import load_rig

    rig = load_rig(args.rig)
    length_unit, force_unit = _units_for(rig, args.units)
    return replace(rig, display=replace(rig.display, length=length_unit, force=force_unit)), length_unit, force_unit


def write_json(data: dict, out: TextIO) -> None:
    """Strict JSON (NaN and infinities as null), indented, with a final newline."""
    json.dump(_finite(data), out, indent=2, allow_nan=False)
    out.write("\n")


def run(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Load, solve and print one rig; returns the exit code."""
    from solver.analysis import analyse

    if getattr(args, "whole_process", False):
        # the command is the whole process: what the imports made lives until it ends, so the cyclic
        # collector need not walk it (its first full pass cost about 10 ms of the first solve)
        import solver.equilibrium  # noqa: F401 - imported here so that the freeze covers it

        gc.freeze()
    out = out or sys.stdout
    rig, length_unit, force_unit = load_in_units(args)
    result = analyse(rig)
    if args.json:
        write_json(result_document(rig, result), out)
    else:
        out.write(format_result(rig, result, length_unit, force_unit) + "\n")
    if not result.ok:
        print(f"ropewright: {args.rig}: {result.message}", file=sys.stderr)
        return EXIT_SOLVE_FAILED
    return EXIT_OK


def result_document(rig: Rig, result: Result) -> dict:
    """The ``solve --json`` object: the Result JSON (bearings in plan), the forces drawn, and the cautions."""
    out = result.to_json(rig.view)
    out["forces"] = [{"at": fc.at, "label": fc.label, "magnitude_N": fc.magnitude_N,
                      "direction_deg": fc.direction_deg,
                      "bearing_deg": bearing_or_none(fc.direction_deg, rig.view, fc.magnitude_N)}
                     for fc in rig.forces]
    out["cautions"] = list(CAUTION_PARAGRAPHS)
    return out


def _finite(obj: object) -> object:
    """The same JSON tree with NaN and infinities as null (strict JSON has neither)."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: _finite(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_finite(v) for v in obj]
    return obj
