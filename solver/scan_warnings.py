"""One story about where nobody may stand: the person-in-zone warnings of a rig once its failure scan has run.

The quick checks (:func:`solver.checks.check_people`) warn a person standing in the fixed
bight shape of :mod:`solver.danger` — a quick estimate, worded as such.  Once the failure
scan (:mod:`solver.failures`) has run, the drawn zones are the computed failure areas
(:func:`solver.failure_warnings.plan_zones`), so the warnings must follow them: this
module swaps every fixed-bight warning of a result for the scan's failure-named ones
(:func:`solver.failure_warnings.people_at_risk`).  Recoil-band warnings stay: the recoil
bands are drawn in both cases.
"""

from __future__ import annotations

from dataclasses import replace

from solver.danger import QUICK_ESTIMATE_NOTE  # noqa: F401 - its wording, named here too
from solver.model import Rig
from solver.result import Result, Warning_



def quick_bight_warnings(rig: Rig, result: Result) -> list[Warning_]:
    """The person-in-zone warnings the quick checks make for the fixed bight shapes of ``result``."""
    from solver.checks import check_people
    from solver.danger import danger_zones

    if not result.ok:
        return []
    return check_people(rig, result, [z for z in danger_zones(rig, result) if z.kind == "bight"])


def scanned_result(result: Result, scan) -> Result:
    """``result`` with its fixed-bight person warnings replaced by the scan's failure-named ones.

    ``scan`` is a :class:`solver.failures.Scan` of the same rig; when it did not run (not ``ok``)
    ``result`` comes back unchanged, quick-estimate warnings and all.  The failure warnings take
    the place of the first warning they replace (or go last), so a report keeps its order.
    """
    from solver.failure_warnings import people_at_risk

    if scan is None or not scan.ok or not result.ok:
        return result
    quick = set(quick_bight_warnings(scan.rig, result))
    computed = people_at_risk(scan)
    out: list[Warning_] = []
    placed = False
    for w in result.warnings:
        if w in quick:
            if not placed:
                out += computed
                placed = True
            continue
        out.append(w)
    if not placed:
        out += computed
    return replace(result, warnings=tuple(out))
