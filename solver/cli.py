"""The ``ropewright`` command: a thin shell over the functions the app uses.

``ropewright [FILE]`` opens the app; ``solve`` prints a result; ``sweep``,
``render``, ``report`` and ``screenshot`` live in their own modules and are
imported only when asked for, so ``ropewright solve`` never loads Qt.
Exit codes: 0 ok, 2 bad file or arguments, 3 solve failed.
"""

from __future__ import annotations

import argparse
import gc
import importlib
import logging
import sys
from typing import Callable, Sequence

from solver.cautions import HELP_EPILOG
from solver.errors import RopewrightError

EXIT_OK = 0
EXIT_BAD_INPUT = 2
EXIT_SOLVE_FAILED = 3

#: keeps the caution epilog on its one line
_RAW = argparse.RawDescriptionHelpFormatter

#: Commands that, run as the whole process, do one thing and end (the cyclic collector stays off).
ONE_SHOT = frozenset({"solve"})

SUBCOMMANDS = ("solve", "haul", "failures", "sweep", "render", "report", "brief", "manual", "screenshot", "open")

#: subcommand -> "module:function" taking the parsed args and returning an exit code
HANDLERS: dict[str, str] = {
    "solve": "solver.cli_solve:run",
    "haul": "solver.cli_haul:run",
    "failures": "solver.cli_failures:run",
    "sweep": "solver.sweep:run_cli",
    "render": "sketchpad.pages.output:render_cli",
    "report": "sketchpad.report:report_cli",
    "brief": "sketchpad.pages.brief:brief_cli",
    "manual": "sketchpad.pages.manual:manual_cli",
    "screenshot": "sketchpad.app:screenshot_cli",
    "open": "sketchpad.app:open_cli",
}


def build_parser() -> argparse.ArgumentParser:
    """The argument parser for every subcommand."""
    parser = argparse.ArgumentParser(
        prog="ropewright",
        description="Rope-rescue rigging sketchpad and solver. A planning aid only.",
        epilog=HELP_EPILOG,
        formatter_class=_RAW,
    )
    sub = parser.add_subparsers(dest="command")

    p = sub.add_parser("solve", epilog=HELP_EPILOG, formatter_class=_RAW, help="solve a rig and print its forces")
    p.add_argument("rig", help="a .rig.json file")
    p.add_argument("--json", action="store_true", help="print the result JSON (rig-format.md)")
    p.add_argument("--units", choices=("si", "imperial"), default=None,
                   help="display units (default: the rig's own display setting)")

    from solver.cli_haul_args import add_parser as add_haul_parser

    add_haul_parser(sub, epilog=HELP_EPILOG, formatter_class=_RAW)

    p = sub.add_parser("failures", epilog=HELP_EPILOG, formatter_class=_RAW,
                       help="let each component go in turn: what holds, what runs free, where not to stand")
    p.add_argument("rig", help="a .rig.json file")
    p.add_argument("--json", action="store_true", help='print {"failures": [...]} (rig-format.md)')
    p.add_argument("--units", choices=("si", "imperial"), default=None,
                   help="display units (default: the rig's own display setting)")

    p = sub.add_parser("sweep", epilog=HELP_EPILOG, formatter_class=_RAW, help="solve a rig over a range of one parameter; write CSV and a plot")
    p.add_argument("rig")
    p.add_argument("--vary", required=True,
                   help="what to vary, e.g. force:F1, point:A2.x, haul:H1, hardware:pulley-large.efficiency")
    p.add_argument("--from", dest="start", type=float, required=True)
    p.add_argument("--to", dest="stop", type=float, required=True)
    p.add_argument("--steps", type=int, default=50)
    p.add_argument("-o", "--output", default=None, help="CSV path (default: RIG-sweep.csv)")
    p.add_argument("--plot", default=None, help="plot path (.png/.svg/.pdf; default beside the CSV)")
    p.add_argument("--no-progress", action="store_true")

    p = sub.add_parser("render", epilog=HELP_EPILOG, formatter_class=_RAW, help="draw the rig and its forces to PNG, SVG or PDF")
    p.add_argument("rig")
    p.add_argument("-o", "--output", required=True)
    p.add_argument("--size", default=None, help="WxH pixels for PNG (default 1600x1100)")
    p.add_argument("--schematic", action="store_true",
                   help="draw the schematic: strands side by side, pulleys as sheaves, tensions in units of the haul force")
    p.add_argument("--greyscale", action="store_true", help="write in grey levels (every meaning kept by pattern)")

    p = sub.add_parser("report", epilog=HELP_EPILOG, formatter_class=_RAW, help="write a PDF report of the rig")
    p.add_argument("rig")
    p.add_argument("-o", "--output", required=True)
    p.add_argument("--greyscale", action="store_true", help="write in grey levels (every meaning kept by pattern)")

    p = sub.add_parser("brief", epilog=HELP_EPILOG, formatter_class=_RAW,
                       help="write the one-page briefing sheet: rig, commands, roles, worst loads, sign-off")
    p.add_argument("rig")
    p.add_argument("-o", "--output", required=True)
    p.add_argument("--greyscale", action="store_true", help="write in grey levels (every meaning kept by pattern)")

    p = sub.add_parser("manual", epilog=HELP_EPILOG, formatter_class=_RAW,
                       help="write many rigs into one PDF manual: title page, contents, each rig's pages")
    p.add_argument("rigs", nargs="+", metavar="RIG")
    p.add_argument("-o", "--output", required=True)
    p.add_argument("--title", default="Rigging manual", help="the manual's title (title page and footers)")
    p.add_argument("--greyscale", action="store_true", help="write in grey levels (every meaning kept by pattern)")
    p.add_argument("--no-progress", action="store_true", help="do not print progress")

    p = sub.add_parser("screenshot", epilog=HELP_EPILOG, formatter_class=_RAW, help="render the whole main window offscreen with a rig open")
    p.add_argument("rig")
    p.add_argument("-o", "--output", required=True)
    p.add_argument("--size", default="1400x900", help="WxH pixels")

    p = sub.add_parser("open", epilog=HELP_EPILOG, formatter_class=_RAW, help="open the app (default when only a file is given)")
    p.add_argument("rig", nargs="?", default=None)
    p.add_argument("--copy", action="store_true",
                   help="open the file as an untitled copy (Save asks where; samples always open this way)")
    return parser


def _handler(command: str) -> Callable[[argparse.Namespace], int]:
    module_name, func_name = HANDLERS[command].split(":")
    return getattr(importlib.import_module(module_name), func_name)


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``ropewright`` script."""
    logging.basicConfig(level=logging.WARNING, format="%(levelname)s: %(message)s")
    args_list = list(sys.argv[1:] if argv is None else argv)
    if not args_list or (args_list[0] not in SUBCOMMANDS and not args_list[0].startswith("-")):
        args_list = ["open", *args_list]
    parser = build_parser()
    args = parser.parse_args(args_list)
    args.whole_process = argv is None  # the console script itself, not a call from Python
    if args.whole_process and args.command in ONE_SHOT:
        # one load, one analysis, one print, then the process ends: the cyclic collector would only walk
        # what the imports made (about 3 % of the run); the few cycles a solve leaves go with the process
        gc.disable()
    try:
        code = _handler(args.command)(args)
    except RopewrightError as exc:
        print(f"ropewright: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        return 130
    return int(code or 0)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
