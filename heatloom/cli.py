"""The ``heatloom`` command line.

Only this module (with the public API) ties reading, computing and writing together.  Every command
prints a short readable summary, or exactly one JSON object on stdout with ``--json``; messages and
progress go to stderr.  Exit codes: 0 ok, 2 bad input, 3 infeasible problem, 1 anything unexpected.
"""

from __future__ import annotations

import argparse
import sys

from . import __version__
from .errors import HeatloomError, InfeasibleError, InputError, SolverError

__all__ = ["main", "build_parser", "COMMANDS"]

from .commands.common import EXIT_INFEASIBLE, EXIT_INPUT, EXIT_UNEXPECTED

COMMANDS = ("target", "design", "evaluate", "sweep", "site", "scenarios", "retrofit", "report")
"""Command modules under heatloom.commands, in the order of the help text; each has register(sub)."""


def build_parser() -> argparse.ArgumentParser:
    import importlib

    parser = argparse.ArgumentParser(
        prog="heatloom",
        description="Pinch analysis and heat-exchanger networks: energy targets from plant stream tables, "
                    "network design, sizing and costing.",
        epilog="run 'heatloom COMMAND --help' for the options and examples of each command")
    parser.add_argument("--version", action="version", version=f"heatloom {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name in COMMANDS:
        importlib.import_module(f"heatloom.commands.{name}").register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    from .commands.common import input_limit

    try:
        with input_limit(args):      # --max-input-mb holds for every file the run reads
            return args.handler(args)
    except InputError as e:
        print(f"heatloom: error: {e}", file=sys.stderr)
        if args.debug:
            raise
        return EXIT_INPUT
    except InfeasibleError as e:
        print(f"heatloom: infeasible: {e}", file=sys.stderr)
        if args.debug:
            raise
        return EXIT_INFEASIBLE
    except SolverError as e:
        print(f"heatloom: solver error: {e}", file=sys.stderr)
        if args.debug:
            raise
        return EXIT_UNEXPECTED
    except KeyboardInterrupt:
        print("heatloom: interrupted", file=sys.stderr)
        return 130
    except HeatloomError as e:  # pragma: no cover - every subclass is handled above
        print(f"heatloom: error: {e}", file=sys.stderr)
        return EXIT_UNEXPECTED
    except Exception as e:  # noqa: BLE001 - the last line of defence of a command-line tool
        if args.debug:
            raise
        print(f"heatloom: unexpected error ({type(e).__name__}: {e}). This is a bug in heatloom: please "
              "report it with the input files and the output of the same command with --debug.",
              file=sys.stderr)
        return EXIT_UNEXPECTED


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
