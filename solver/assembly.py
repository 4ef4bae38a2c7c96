"""The compiled-rig toolkit under the names it has always been imported by: compile, evaluate, tangent.

Each name lives in the module of its one job (:mod:`solver.system`, :mod:`solver.compile`,
:mod:`solver.laws`, :mod:`solver.runs`, :mod:`solver.evaluate`, :mod:`solver.tangent`); new code
imports from there.
"""

from solver.compile import (
    BARE_MIN_SPACING,
    COINCIDENT_M,
    DEFAULT_MIN_SPACING_M,
    GEOMETRY_FIELDS,
    Topology,
    compile_rig,
    compile_topology,
    same_structure,
    with_forces,
    with_geometry,
)
from solver.evaluate import CONTACT_STIFFNESS, State, contact_stiffness, directions, evaluate, reweighted
from solver.laws import by_material
from solver.runs import solve_run_tensions
from solver.system import PASS_EDGE, PASS_NONE, PASS_PULLEY, PASS_SLIDING, Grouping, MiddlePass, System
from solver.tangent import PartPattern, part_pattern, part_tangent, tangent_values

__all__ = [
    "BARE_MIN_SPACING", "COINCIDENT_M", "CONTACT_STIFFNESS", "DEFAULT_MIN_SPACING_M", "GEOMETRY_FIELDS", "Grouping",
    "MiddlePass", "PASS_EDGE", "PASS_NONE", "PASS_PULLEY", "PASS_SLIDING", "PartPattern", "State", "System",
    "Topology", "by_material", "compile_rig", "compile_topology", "contact_stiffness", "directions", "evaluate",
    "part_pattern", "part_tangent", "reweighted", "same_structure", "solve_run_tensions", "tangent_values",
    "with_forces", "with_geometry",
]
