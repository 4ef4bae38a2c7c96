"""``ropewright haul RIG --travel 6m [--throw 3m] [--json]``: the haul planned stroke by stroke.

Prints a table of strokes (rope paid in, load travel, peak haul force, throw eaten by stretch,
capture load at the reset), the number of resets, the rope paid in before the load first
moves and the rope through the team's hands; or the plan's JSON.  Distances take a unit
(``6m``, ``20 ft``; plain numbers are metres).  Exit codes as ``solve``: 0 the travel is
reached, 2 a file or option it cannot read, 3 the haul stops short (the message says at which
stroke and why; the strokes made are still shown).  The JSON's ``status`` is ``ok``, ``unreachable``
(the travel cannot be reached: the load would pass its anchor, every stroke two-blocks or uses its
throw before the load moves, an anchor or rope would fail first), ``failed`` (a step would not
solve) or ``invalid`` (no hauled rope, no load, a throw of 0 or less ...).
"""

from __future__ import annotations

import argparse
import json
import sys
from dataclasses import replace
from typing import TextIO

from solver import units
from solver.cautions import CAUTION_PARAGRAPHS
from solver.cli_solve import EXIT_BAD_INPUT, EXIT_OK, EXIT_SOLVE_FAILED, _finite, _table, _units_for, closing
from solver.errors import UnitError
from solver.haul_plan import plan_haul
from solver.haul_result import HaulPlan
from solver.haul_settings import haul_settings
from solver.haul_table import HEADER, stroke_rows, summary_lines
from solver.model import Rig

#: Subjects of a plan refused for an option typed on the command line (exit 2, not 3).
OPTION_SUBJECTS = frozenset({"travel", "throw", "steps"})


def format_plan(rig: Rig, plan: HaulPlan, length_unit: str, force_unit: str) -> str:
    """The plan as a plain-text table and totals a rigging lead reads at a glance."""
    L = lambda m: units.format_length(m, length_unit)  # noqa: E731
    load = rig.point(plan.load).name if plan.load else "the load"
    parts = [f"{rig.title or 'Untitled rig'}  —  haul of {load}: {L(plan.target_m)} in strokes of "
             f"{L(plan.throw_m)} of rope"]
    rows = [list(r) for r in stroke_rows(plan, length_unit, force_unit)]
    if rows:
        parts.append("\n" + _table(list(HEADER), rows))
    parts.append("")
    parts += summary_lines(rig, plan, length_unit, force_unit)
    if not plan.ok:
        parts.append(f"\nHAUL STOPS SHORT ({plan.status}): {plan.message}")
    return closing(parts, list(plan.warnings))


class _Bar:
    """A one-line progress bar on stderr, drawn only when stderr is a terminal."""

    def __init__(self, stream: TextIO) -> None:
        self.stream = stream
        self.on = stream.isatty()
        self.shown = -1

    def __call__(self, fraction: float) -> None:
        pct = int(100 * fraction)
        if self.on and pct != self.shown:
            self.shown = pct
            filled = pct * 30 // 100
            self.stream.write(f"\rhauling [{'#' * filled}{'.' * (30 - filled)}] {pct:3d}%")
            self.stream.flush()

    def done(self) -> None:
        if self.on and self.shown >= 0:
            self.stream.write("\r" + " " * 48 + "\r")
            self.stream.flush()


def run(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Load a rig, plan its haul and print it; returns the exit code."""
    from solver.rigfile import load_rig

    out = out or sys.stdout
    rig = load_rig(args.rig)  # RigFileError -> exit 2 via solver.cli.main
    length_unit, force_unit = _units_for(rig, args.units)
    try:
        travel = units.parse_length(str(args.travel), "m")
        planned = haul_settings(rig)
        throw = units.parse_length(str(args.throw), "m") if args.throw is not None else planned.throw_m
        spacing = units.parse_length(str(args.spacing), "m") if args.spacing is not None else planned.spacing_m
    except UnitError as exc:
        print(f"ropewright: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    # display units never change a number; the plan's sentences are worded in the units asked for
    rig = replace(rig, display=replace(rig.display, length=length_unit, force=force_unit))
    bar = _Bar(sys.stderr)
    plan = plan_haul(rig, travel, throw, spacing_m=spacing, steps=args.steps, progress=bar)
    bar.done()
    if args.json:
        doc = plan.to_json()
        doc["cautions"] = list(CAUTION_PARAGRAPHS)  # as solve --json
        json.dump(_finite(doc), out, indent=2, allow_nan=False)
        out.write("\n")
    else:
        out.write(format_plan(rig, plan, length_unit, force_unit) + "\n")
    if plan.status == "invalid" and plan.subject in OPTION_SUBJECTS:
        print(f"ropewright: {plan.message}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if not plan.ok:
        print(f"ropewright: {args.rig}: {plan.message}", file=sys.stderr)
        return EXIT_SOLVE_FAILED
    return EXIT_OK
