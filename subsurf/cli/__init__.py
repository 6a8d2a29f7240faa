"""The ``subsurf`` command: one entry point, one subcommand per job.

Each subcommand lives in ``subsurf/cli/<name>.py`` and provides ``HELP`` (one
line), ``EXAMPLE`` (a real invocation), ``add_arguments(parser)`` and ``run(args) -> int``.
Command modules import numpy, scipy, xarray and matplotlib inside ``run`` only, so that
``subsurf --help`` stays quick.

Exit codes: 0 success; 1 invalid input, a model/physics refusal, or a file that cannot be
read or written (one line on stderr naming it); 2 command-line usage error; 3 an output
exists and ``--force`` was not given, or another run is writing it; 4 an unexpected internal
error (rerun with ``--debug`` for the traceback); 128 + n when stopped by signal n (SIGINT,
SIGTERM, SIGHUP), with every unfinished output removed.  How errors are reported, in text
and under ``--json``, is in :mod:`subsurf.cli._guard`.
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

exit codes: 0 ok, 1 invalid input or unusable file, 2 usage error, 3 output exists (use --force)
or busy, 4 internal error (rerun with --debug), 128+n stopped by signal n (outputs rolled back)"""


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
    from ._guard import OneLineParser

    parser = OneLineParser(
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
    """Run one ``subsurf`` command line; returns the exit code (see :mod:`subsurf.cli._guard`)."""
    from ._guard import run_guarded

    return run_guarded(build_parser, sys.argv[1:] if argv is None else list(argv), COMMANDS)


def entry() -> None:
    """The ``subsurf`` console command: :func:`main`, then a quick exit with its code.

    Once the command has finished (every output committed, every file closed), the process ends
    without tearing the interpreter down module by module: finalising the ~1,500 modules a map run
    loads (xarray, matplotlib, the GDAL and netCDF bindings, scipy) took 0.6 s of a 4.5 s
    ``subsurf map``.  The handlers registered with :mod:`atexit` (logging, temporary folders,
    worker pools, weakref finalisers) still run first, then stdout and stderr are flushed.  Where
    the interpreter lacks the hook to run them, the exit is the ordinary one.
    """
    import atexit
    import os

    from ..io import png_split
    from . import _collector, _numpy_only

    _numpy_only.enable()  # one command, then the process ends: map/demo/report may spare xarray's probes
    png_split.enable()  # ... and may draw figures in forked figure processes
    _collector.enable()  # ... and need not garbage-collect their imports
    code = main()
    run_exit_handlers = getattr(atexit, "_run_exitfuncs", None)
    if run_exit_handlers is None:  # pragma: no cover - CPython and PyPy have it
        sys.exit(code)
    run_exit_handlers()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a closed pipe (| head) or a closed stream: nothing left to say
            pass
    os._exit(code)


if __name__ == "__main__":  # pragma: no cover
    entry()
