"""Parameter sweeps: solve one rig over a range of one parameter and tabulate the answers.

``sweep(rig, "haul:H1", values)`` solves the rig once per value, each solve warm-started
from the last good geometry, and returns a table with one row per value: status,
nominal, ideal and actual mechanical advantage, anchor forces (N), largest rope tension (N) and
utilisation (tension x safety factor / MBS), deflection angles (degrees) and the force
delivered to each load (N).  The command
``ropewright sweep`` writes that table as CSV (after the cautions as ``#`` lines) and plots MA and
peak anchor force in the rig's display units, with the cautions as a footnote.

What can vary (``--vary``), values in SI:
``force:SEL`` an external force's magnitude (SEL = its label, the point it acts on,
1-based number ``2`` or ``F2``); ``haul:ID`` a haul team's total force; ``point:ID.x`` /
``point:ID.y`` a point's position; ``hardware:ID.efficiency`` (or ``.friction_coefficient``,
``.mbs_N``), the spec embedded in the rig; ``material:ID.mbs_N``; ``pretension:ROPE``.
"""

from __future__ import annotations

import argparse
import csv
import logging
import math
import sys
from dataclasses import dataclass, field, replace
from functools import partial
from pathlib import Path
from typing import Callable, Iterable

from solver import memo
from solver.errors import RigModelError, RopewrightError
from solver.model import Hardware, Material, Rig, Rigging
from solver.nominal_ma import nominal_ma
from solver.result import Result

log = logging.getLogger(__name__)

EXIT_OK, EXIT_BAD_INPUT, EXIT_SOLVE_FAILED = 0, 2, 3

VARY_KINDS = ("force", "haul", "point", "hardware", "material", "pretension")
HARDWARE_FIELDS = ("efficiency", "friction_coefficient", "mbs_N")
MATERIAL_FIELDS = ("mbs_N",)
#: SI unit of each kind of varied value, for column headers and plot axes.
VARY_UNITS = {"force": "N", "haul": "N", "point": "m", "pretension": "N", "mbs_N": "N",
              "efficiency": "", "friction_coefficient": ""}

#: Solve function: (rig, start) -> Result.  Defaults to solver.equilibrium.solve.
SolveFn = Callable[..., Result]
Progress = Callable[[int, int], None]


class SweepError(RopewrightError):
    """A --vary that names nothing in the rig, or values that cannot be used."""


@dataclass(frozen=True)
class Vary:
    """A parsed ``--vary``: what kind of thing, which one, and which field of it."""

    kind: str
    target: str
    attr: str = ""
    text: str = ""

    @property
    def unit(self) -> str:
        return VARY_UNITS.get(self.attr or self.kind, "")

    @property
    def label(self) -> str:
        return f"{self.text} ({self.unit})" if self.unit else self.text


def parse_vary(text: str) -> Vary:
    """Read ``kind:target[.field]``; raises SweepError saying what is accepted."""
    help_text = ("use force:LABEL|POINT|N, haul:HAUL_ID, point:ID.x or point:ID.y, "
                 "hardware:ID.efficiency, material:ID.mbs_N or pretension:ROPE_ID")
    kind, sep, rest = text.strip().partition(":")
    kind = kind.strip().lower()
    rest = rest.strip()
    if not sep or kind not in VARY_KINDS or not rest:
        raise SweepError(f"cannot read '{text}'; {help_text}", where="--vary")
    if kind == "point":
        target, dot, attr = rest.rpartition(".")
        if not dot or attr not in ("x", "y") or not target:
            raise SweepError(f"'{text}': say which coordinate, e.g. point:{rest.split('.')[0]}.x",
                             where="--vary")
        return Vary(kind, target, attr, text)
    if kind in ("hardware", "material"):
        fields = HARDWARE_FIELDS if kind == "hardware" else MATERIAL_FIELDS
        target, dot, attr = rest.rpartition(".")
        if not dot or attr not in fields or not target:
            raise SweepError(f"'{text}': a {kind} sweep varies one of "
                             + ", ".join(f"{kind}:ID.{f}" for f in fields), where="--vary")
        return Vary(kind, target, attr, text)
    return Vary(kind, rest, "", text)


def _force_index(rig: Rig, sel: str) -> int:
    """Which external force ``sel`` means: its label, the point it acts on, or its 1-based number."""
    by_label = [i for i, f in enumerate(rig.forces) if f.label and f.label == sel]
    if len(by_label) == 1:
        return by_label[0]
    by_at = [i for i, f in enumerate(rig.forces) if f.at == sel]
    if len(by_at) == 1:
        return by_at[0]
    if len(by_label) > 1 or len(by_at) > 1:
        raise SweepError(f"more than one force matches '{sel}'; use its number (1 to {len(rig.forces)})",
                         where="--vary")
    num = sel[1:] if sel[:1] in ("F", "f") else sel
    if num.isdigit() and 1 <= int(num) <= len(rig.forces):
        return int(num) - 1
    have = ", ".join(f"{i + 1} ({f.label or 'on ' + f.at})" for i, f in enumerate(rig.forces)) or "none"
    raise SweepError(f"no force '{sel}' in the rig (forces: {have})", where="--vary")


def _hardware_spec(rig: Rig, hw_id: str) -> Hardware:
    from solver.materials import hardware_for

    try:
        return hardware_for(rig, hw_id)
    except RigModelError:
        raise SweepError(f"no hardware '{hw_id}' in the rig or the library", where="--vary") from None


def _material_spec(rig: Rig, mat_id: str) -> Material:
    from solver.materials import material_for

    try:
        return material_for(rig, mat_id)
    except RigModelError:
        raise SweepError(f"no material '{mat_id}' in the rig or the library", where="--vary") from None


def setter(rig: Rig, vary: Vary) -> Callable[[float], Rig]:
    """A function value -> new Rig with the varied parameter set; checks the target exists now."""
    if vary.kind == "force":
        idx = _force_index(rig, vary.target)

        def set_force(v: float) -> Rig:
            forces = list(rig.forces)
            forces[idx] = replace(forces[idx], magnitude_N=float(v))
            return replace(rig, forces=tuple(forces))
        return set_force
    if vary.kind in ("haul", "point"):
        if not rig.has_point(vary.target):
            raise SweepError(f"no point '{vary.target}' in the rig", where="--vary")
        p = rig.point(vary.target)
        if vary.kind == "haul":
            if p.kind != "haul":
                raise SweepError(f"'{p.name}' is not a haul team point", where="--vary")
            return lambda v: rig.with_point(replace(p, force_N=float(v), team=None, force_per_person_N=None))
        return lambda v: rig.moved(p.id, float(v), p.y) if vary.attr == "x" else rig.moved(p.id, p.x, float(v))
    if vary.kind == "hardware":
        spec = _hardware_spec(rig, vary.target)
        others = tuple(h for h in rig.hardware if h.id != spec.id)
        return lambda v: replace(rig, hardware=others + (replace(spec, **{vary.attr: float(v)}),))
    if vary.kind == "material":
        spec_m = _material_spec(rig, vary.target)
        others_m = tuple(m for m in rig.materials if m.id != spec_m.id)
        return lambda v: replace(rig, materials=others_m + (replace(spec_m, **{vary.attr: float(v)}),))
    if vary.kind == "pretension":
        try:
            rope = rig.rope(vary.target)
        except KeyError:
            raise SweepError(f"no rope '{vary.target}' in the rig", where="--vary") from None
        if rope.is_hauled and len(rope.runs()) == 1:
            raise SweepError(f"rope '{rope.name}' is hauled: its tension is set by the haul force, "
                             "not a pretension", where="--vary")
        return lambda v: rig.with_rope(replace(rope, rigged=Rigging(slack_m=0.0, pretension_N=float(v))))
    raise SweepError(f"cannot vary '{vary.text}'", where="--vary")  # pragma: no cover (parse_vary)


@dataclass(frozen=True)
class SweepResult:
    """One row per value: ``columns`` names the fields; failed rows carry NaN and a message."""

    vary: Vary
    columns: tuple[str, ...]
    rows: tuple[dict[str, float | str], ...]
    results: tuple[Result, ...] = field(repr=False, default=())

    @property
    def values(self) -> list[float]:
        return [float(r["value"]) for r in self.rows]

    def column(self, name: str) -> list[float]:
        """One numeric column (NaN where missing or failed)."""
        out = []
        for r in self.rows:
            v = r.get(name, math.nan)
            out.append(float(v) if isinstance(v, (int, float)) else math.nan)
        return out

    @property
    def failed(self) -> list[dict[str, float | str]]:
        return [r for r in self.rows if r["status"] != "ok"]

    def write_csv(self, path: str | Path) -> None:
        """The table as CSV (SI units in the headers; empty cells where a solve failed), after the cautions
        as ``#`` comment lines (``csv`` readers: skip lines starting with ``#``, e.g. pandas ``comment="#"``)."""
        from solver.cautions import caution_lines

        with open(path, "w", newline="", encoding="utf-8") as fh:
            for line in caution_lines():
                fh.write(f"# Caution: {line}\n")
            fh.write(f"# Units: value = {self.vary.text} in {self.vary.unit or 'no unit'}; columns ending _N in "
                     "newtons, _deg in degrees; MAs and utilization are ratios\n")
            w = csv.writer(fh)
            w.writerow(self.columns)
            for r in self.rows:
                w.writerow(["" if (isinstance(v := r.get(c, ""), float) and not math.isfinite(v)) else v
                            for c in self.columns])


def _row(value: float, res: Result) -> dict[str, float | str]:
    row: dict[str, float | str] = {"value": float(value), "status": res.status, "message": res.message}
    if not res.ok:
        return row
    nan = math.nan
    row["ma_actual"] = res.ma_actual if res.ma_actual is not None else nan
    row["ma_ideal"] = res.ma_ideal if res.ma_ideal is not None else nan
    row["ma_nominal"] = res.ma_nominal if res.ma_nominal is not None else nan
    anchors = {k: a.force_N for k, a in res.anchors.items()}
    row["peak_anchor_N"] = max(anchors.values()) if anchors else nan
    row["max_tension_N"] = max((s.tension_N for s in res.segments), default=nan)
    row["max_utilization"] = max((s.utilization for s in res.segments), default=nan)
    for k, f in anchors.items():
        row[f"anchor_{k}_N"] = f
    for k, a in res.loads.items():
        row[f"load_{k}_N"] = a.force_N
    for k, d in res.deflection_deg.items():
        row[f"deflection_{k}_deg"] = d
    return row


def _default_solve() -> SolveFn:
    """The solver with a trail of its own: a sweep's warm steps follow each other, never an earlier solve."""
    from solver.equilibrium import solve
    return partial(solve, trail=memo.Trail())


def sweep(rig: Rig, vary: str | Vary, values: Iterable[float], progress: Progress | None = None,
          solve: SolveFn | None = None) -> SweepResult:
    """Solve ``rig`` once per value of the varied parameter (SI), warm-starting each solve."""
    v = parse_vary(vary) if isinstance(vary, str) else vary
    vals = [float(x) for x in values]
    bad = [x for x in vals if not math.isfinite(x)]
    if bad or not vals:
        raise SweepError("give at least one finite value to sweep", where="--vary")
    make = setter(rig, v)
    solve = solve or _default_solve()
    start: dict[str, tuple[float, float]] | None = None
    rows: list[dict[str, float | str]] = []
    results: list[Result] = []
    for i, x in enumerate(vals):
        try:
            r = make(x)
            res = solve(r, start=start)
            if res.ma_actual is not None and res.ma_nominal is None:
                res = replace(res, ma_nominal=nominal_ma(r, res.points))
        except RopewrightError as exc:  # a value the rig cannot take (e.g. efficiency 0): a failed row
            res = Result(status="invalid", message=str(exc))
        if res.ok:
            # warm start from the solved free points (a moved fixed point keeps its new place)
            start = {pid: xy for pid, xy in res.points.items()
                     if r.has_point(pid) and not r.point(pid).is_fixed}
        rows.append(_row(x, res))
        results.append(res)
        if progress is not None:
            progress(i + 1, len(vals))
    cols = ["value", "status", "ma_nominal", "ma_ideal", "ma_actual", "peak_anchor_N", "max_tension_N",
            "max_utilization"]
    extra: list[str] = []
    for row in rows:
        for k in row:
            if k not in cols and k != "message" and k not in extra:
                extra.append(k)
    order = {"anchor": 0, "load": 1, "deflection": 2}
    extra.sort(key=lambda k: order.get(k.split("_", 1)[0], 3))
    columns = tuple(cols + extra + ["message"])
    return SweepResult(v, columns, tuple(rows), tuple(results))


# --- command line ---------------------------------------------------------------------

class _TextBar:
    """A one-line progress bar on stderr: [#####.....] 12/50."""

    def __init__(self, stream=None, width: int = 30) -> None:
        self.stream = stream or sys.stderr
        self.width = width

    def __call__(self, done: int, total: int) -> None:
        filled = int(self.width * done / max(total, 1))
        bar = f"solving [{'#' * filled}{'.' * (self.width - filled)}] {done}/{total}"
        if getattr(self.stream, "isatty", lambda: False)():
            self.stream.write("\r" + bar + ("\n" if done >= total else ""))
        elif done >= total or (10 * done) // total != (10 * (done - 1)) // total:
            self.stream.write(bar + "\n")  # a log file gets a line per tenth, not a carriage-return smear
        self.stream.flush()


def axis_values(vary: Vary, values: list[float], force_unit: str, length_unit: str) -> tuple[list[float], str]:
    """The varied values in the display units and the axis label naming that unit (forces and lengths
    follow the rig's units, like every other axis; efficiencies and friction coefficients have none)."""
    from solver.units import force_to, length_to

    if vary.unit == "N":
        return [force_to(v, force_unit) for v in values], f"{vary.text} ({force_unit})"
    if vary.unit == "m":
        return [length_to(v, length_unit) for v in values], f"{vary.text} ({length_unit})"
    return list(values), vary.label


def plot(result: SweepResult, path: str | Path, force_unit: str = "kN", title: str = "",
         length_unit: str = "m") -> None:
    """Plot nominal/ideal/actual MA and peak anchor force against the varied value (matplotlib, Agg),
    every axis in the display units, with the cautions as a footnote."""
    from matplotlib.figure import Figure  # no pyplot: no global backend, nothing Qt
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from solver.cautions import caution_lines
    from solver.units import force_to

    x, x_label = axis_values(result.vary, result.values, force_unit, length_unit)
    fig = Figure(figsize=(8, 6.4), dpi=100)
    FigureCanvasAgg(fig)
    ax1, ax2 = fig.subplots(2, 1, sharex=True)
    ax1.plot(x, result.column("ma_actual"), "o-", label="actual MA (friction, stretch)", markersize=3)
    ax1.plot(x, result.column("ma_ideal"), "--", label="ideal MA (frictionless, drawn angles)")
    if any(math.isfinite(v) for v in result.column("ma_nominal")):
        ax1.plot(x, result.column("ma_nominal"), ":", color="black", label="nominal MA (strand count)")
    ax1.set_ylabel("mechanical advantage (:1)")
    ax1.legend(loc="best")
    ax1.grid(True, alpha=0.3)
    peak = [force_to(f, force_unit) if math.isfinite(f) else math.nan for f in result.column("peak_anchor_N")]
    ax2.plot(x, peak, "o-", color="tab:red", markersize=3, label="peak anchor force")
    ax2.set_ylabel(f"peak anchor force ({force_unit})")
    ax2.set_xlabel(x_label)
    ax2.grid(True, alpha=0.3)
    failed = [x[i] for i, r in enumerate(result.rows) if r["status"] != "ok"]
    for xv in failed:
        for ax in (ax1, ax2):
            ax.axvline(float(xv), color="grey", alpha=0.3, linewidth=4)
    fig.suptitle(title or f"Sweep of {result.vary.text}" + (" (grey: did not solve)" if failed else ""))
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    fig.text(0.01, 0.01, "\n".join(f"Caution: {line}" for line in caution_lines()), fontsize=7,
             ha="left", va="bottom", style="italic")
    fig.savefig(str(path))


def _default_paths(rig_path: str, output: str | None, plot_path: str | None) -> tuple[Path, Path]:
    rp = Path(rig_path)
    stem = rp.name[: -len(".rig.json")] if rp.name.endswith(".rig.json") else rp.stem
    csv_path = Path(output) if output else rp.with_name(f"{stem}-sweep.csv")
    return csv_path, Path(plot_path) if plot_path else csv_path.with_suffix(".png")


def values_between(start: float, stop: float, steps: int) -> list[float]:
    """``steps`` evenly spaced values from start to stop inclusive (one value if steps is 1)."""
    if steps < 1:
        raise SweepError(f"--steps must be 1 or more (got {steps})", where="--steps")
    if steps == 1:
        return [float(start)]
    return [start + (stop - start) * i / (steps - 1) for i in range(steps)]


def run_cli(args: argparse.Namespace) -> int:
    """``ropewright sweep RIG --vary ... --from A --to B [--steps N]``: CSV + plot; exit 0/2/3."""
    from solver.rigfile import load_rig

    try:
        vary = parse_vary(args.vary)
        vals = values_between(args.start, args.stop, args.steps)
        rig = load_rig(args.rig)
        csv_path, plot_path = _default_paths(args.rig, args.output, args.plot)
        progress = None if getattr(args, "no_progress", False) or len(vals) < 5 else _TextBar()
        result = sweep(rig, vary, vals, progress=progress)
    except RopewrightError as exc:
        print(f"ropewright sweep: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    try:
        result.write_csv(csv_path)
        plot(result, plot_path, rig.display.force, f"{rig.title or Path(args.rig).name}: {vary.text}",
             rig.display.length)
    except OSError as exc:
        print(f"ropewright sweep: cannot write the output: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    print(f"wrote {csv_path} and {plot_path}", file=sys.stderr)
    failed = result.failed
    if failed:
        first = failed[0]
        print(f"ropewright sweep: {len(failed)} of {len(result.rows)} values did not solve; "
              f"first at {first['value']:g}: {first['message']}", file=sys.stderr)
        return EXIT_SOLVE_FAILED
    return EXIT_OK


__all__ = ["Vary", "SweepResult", "SweepError", "parse_vary", "setter", "sweep", "plot", "run_cli",
           "values_between", "VARY_KINDS"]
