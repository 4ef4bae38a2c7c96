"""Solve a rig and run its safety checks: the one call the app, the CLI and reports use.

``analyse(rig)`` = :func:`solver.equilibrium.solve` + the nominal MA (:mod:`solver.nominal_ma`)
+ :func:`solver.checks.run_checks`,
returning a new frozen :class:`Result` whose ``warnings`` are the solver's own first,
then the checks' (a finding with the same code, subject and message is kept once).
It never raises for a bad rig: a failed solve keeps its status and message, and only
the checks on the drawn geometry run.
"""

from __future__ import annotations

import logging
from dataclasses import replace
from typing import Mapping

from solver.checks import run_checks
from solver.errors import RigModelError, RopewrightError
from solver.memo import Trail
from solver.model import Rig
from solver.nominal_ma import nominal_ma
from solver.result import Result, Warning_

log = logging.getLogger(__name__)


def merge_warnings(first: tuple[Warning_, ...], then: tuple[Warning_, ...]) -> tuple[Warning_, ...]:
    """``first`` then ``then``, dropping repeats of the same (code, subject, message)."""
    seen: set[tuple[str, str, str]] = set()
    out: list[Warning_] = []
    for w in (*first, *then):
        key = (w.code, w.subject, w.message)
        if key not in seen:
            seen.add(key)
            out.append(w)
    return tuple(out)


def with_needs(rig: Rig, result: Result) -> Result:
    """``result`` with the pull each load with a ``required_N`` really needs, solved (solver.pull_needed)."""
    from solver.pull_needed import load_needs

    if not result.ok:
        return result
    try:
        return replace(result, needs=load_needs(rig, result))
    except Exception:  # noqa: BLE001 - the forces stand without it; the load check then says nothing more
        log.exception("pull needed failed on rig %r", rig.title)
        return result


def analyse(rig: Rig, start: Mapping[str, tuple[float, float]] | None = None, trail: Trail | None = None) -> Result:
    """Equilibrium of ``rig`` (warm-started from ``start`` if given) with every safety finding merged in;
    ``trail``: the live drag's (:func:`solver.equilibrium.solve`), else the answer depends on the arguments alone."""
    from solver.equilibrium import solve

    try:
        result = solve(rig, start=start, trail=trail)
    except RopewrightError as exc:  # solve promises not to raise; keep that promise for callers anyway
        subject = exc.subject if isinstance(exc, RigModelError) else ""
        result = Result(status="invalid", message=exc.message, subject=subject)
    except Exception as exc:  # noqa: BLE001 - a bug must not take the user's drawing down with it
        log.exception("solver crashed on rig %r", rig.title)
        result = Result(status="diverged", message=f"The solver failed unexpectedly ({type(exc).__name__}); "
                                                   f"the rig could not be checked.")
    result = with_needs(rig, result)
    if result.ma_actual is not None:  # the strand count, named beside the ideal and actual MA
        try:
            result = replace(result, ma_nominal=nominal_ma(rig, result.points))
        except Exception:  # noqa: BLE001 - a missing strand count must not cost the user the forces
            log.exception("nominal MA failed on rig %r", rig.title)
    try:
        found = run_checks(rig, result)
    except Exception as exc:  # noqa: BLE001 - say so loudly rather than show an unchecked rig as safe
        log.exception("safety checks crashed on rig %r", rig.title)
        found = (Warning_("checks-failed", "", f"The safety checks could not run ({type(exc).__name__}): "
                                               f"treat this rig as unchecked.", "danger"),)
    return replace(result, warnings=merge_warnings(tuple(result.warnings), found))
