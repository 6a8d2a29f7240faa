"""The ``subsurf`` command: one entry point, one subcommand per job.

Each subcommand lives in ``subsurf/cli/<name>.py`` and provides ``HELP`` (one
line), ``EXAMPLE`` (a real invocation), ``add_arguments(parser)`` and ``run(args) -> int``.
Command modules import numpy, scipy, xarray and matplotlib inside ``run`` only, so that
``subsurf --help`` stays quick.

Exit codes: 0 success; 1 invalid input or a model/physics refusal (one line on stderr);
2 command-line usage error; 3 an output exists and ``--force`` was not given;
4 an unexpected internal error (rerun with ``--debug`` for the traceback).
"""

from __future__ import annotations

import argparse
import importlib
import sys

#: subcommand name -> module path (order = order in --help)
COMMANDS: dict[str, str] = {
    "demo": "subsurf.cli.demo",
    "medium": "subsurf.cli.medium",
    "choose": "subsurf.cli.choose",
    "setup": "subsurf.cli.setup",
    "depth": "subsurf.cli.depth",
    "velocity": "subsurf.cli.velocity",
    "calibrate": "subsurf.cli.calibrate",
    "map": "subsurf.cli.map",
    "region": "subsurf.cli.region",
    "report": "subsurf.cli.report",
}

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_EXISTS, EXIT_INTERNAL = 0, 1, 2, 3, 4

EPILOG = """examples:
  subsurf demo --out subsurf-demo
  subsurf medium --texture loam --moisture "20 %" --pore-water-ec "50 mS/m"
  subsurf medium --eps 9 --sigma "5 mS/m" --freq "100 MHz" --freq "400 MHz" --json
  subsurf choose --texture loamy_sand --moisture "12 %" --target line --depth 1.2 --size "15 cm" --material metal
  subsurf map surveys/example-site/survey.toml --out maps-example

exit codes: 0 ok, 1 invalid input, 2 usage error, 3 output exists (use --force),
4 internal error (rerun with --debug)"""


def _available_commands():
    found = {}
    for name, path in COMMANDS.items():
        try:
            found[name] = importlib.import_module(path)
        except ModuleNotFoundError as exc:  # a subcommand not yet installed in this build
            if exc.name != path:
                raise
    return found


def build_parser() -> argparse.ArgumentParser:
    from .. import __version__

    parser = argparse.ArgumentParser(
        prog="subsurf",
        description="Plan and interpret ground-penetrating-radar surveys.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"subsurf {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, module in _available_commands().items():
        p = sub.add_parser(
            name,
            help=module.HELP,
            description=module.HELP,
            epilog="example:\n  " + module.EXAMPLE.strip().replace("\n", "\n  "),
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        p.add_argument("--json", action="store_true", help="print the result as JSON instead of a table")
        p.add_argument("--debug", action="store_true", help="show the full traceback on errors")
        p.add_argument("--quiet", action="store_true", help="no progress bars or notes on stderr")
        module.add_arguments(p)
        p.set_defaults(_module=module)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return EXIT_USAGE
    from ..errors import OutputExistsError, SubsurfError

    try:
        return int(args._module.run(args) or 0)
    except OutputExistsError as exc:
        if args.debug:
            raise
        print(f"subsurf {args.command}: error: {exc}", file=sys.stderr)
        return EXIT_EXISTS
    except SubsurfError as exc:
        if args.debug:
            raise
        print(f"subsurf {args.command}: error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print(f"subsurf {args.command}: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # the reader went away (e.g. `subsurf choose --json | head`): not an error of ours
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())  # no second error at exit flush
        return 0
    except Exception as exc:  # noqa: BLE001 - last-resort one-line report
        if args.debug:
            raise
        print(
            f"subsurf {args.command}: internal error: {type(exc).__name__}: {exc} "
            "(rerun with --debug for the traceback)",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
