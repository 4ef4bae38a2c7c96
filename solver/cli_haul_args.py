"""The ``ropewright haul`` subcommand's arguments, apart from the command itself.

Every command's parser is built at start-up (``--help`` lists them all), so the arguments live
here, light, and :mod:`solver.cli_haul` (the haul planner and its solver) is imported only when
``haul`` is the command run.
"""

from __future__ import annotations

from solver.haul_settings import DEFAULT_STEPS


def add_parser(sub, **kwargs) -> None:
    """The ``haul`` subcommand's arguments (``kwargs`` as every subcommand's: the caution epilog)."""
    p = sub.add_parser("haul", help="plan a haul stroke by stroke: rope paid in, stretch, resets", **kwargs)
    p.add_argument("rig", help="a .rig.json file")
    p.add_argument("--travel", required=True, help="how far the load must come, e.g. 6m or 20ft (plain: metres)")
    p.add_argument("--throw", default=None,
                   help="rope the team takes in per stroke (default: the rig's planned haul, else 3m)")
    p.add_argument("--spacing", default=None,
                   help="closest a travelling pulley may come to the next before a reset "
                        "(default: the rig's planned haul, else 0.2m)")
    p.add_argument("--steps", type=int, default=DEFAULT_STEPS,
                   help=f"solved steps per stroke (default {DEFAULT_STEPS})")
    p.add_argument("--json", action="store_true", help="print the plan as JSON")
    p.add_argument("--units", choices=("si", "imperial"), default=None,
                   help="display units (default: the rig's own display setting)")
