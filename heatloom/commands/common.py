"""What every command shares: option parsers, reading the inputs, number formats, notes on stderr."""

from __future__ import annotations

import argparse
import sys
from collections import Counter

EXIT_OK, EXIT_UNEXPECTED, EXIT_INPUT, EXIT_INFEASIBLE = 0, 1, 2, 3
"""Exit codes of every command."""

__all__ = ["EXIT_OK", "EXIT_UNEXPECTED", "EXIT_INPUT", "EXIT_INFEASIBLE", "DEFAULT_DT_MIN", "SAFETY_NOTE", "positive", "positive_or_zero", "add_shared", "add_table_options",
           "note", "read_inputs", "dt_min_of", "fmt", "solves_summary", "print_json", "finish"]

DEFAULT_DT_MIN = 10.0
"""Default minimum approach temperature [K] (*common practice* for a first look at liquid–liquid
duties; gas streams and refrigeration usually need other values). Stated in every output."""

SAFETY_NOTE = ("Targets and designs from heatloom are screening estimates. Check every design against "
               "local codes and have it reviewed by qualified, licensed engineers.")

def positive_or_zero(text: str) -> float:
    try:
        x = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of kelvin, got {text!r}") from None
    if not (x >= 0) or x == float("inf"):
        raise argparse.ArgumentTypeError(f"must be a finite number >= 0, got {text!r}")
    return x


def positive(text: str) -> float:
    x = positive_or_zero(text)
    if not x > 0:
        raise argparse.ArgumentTypeError(f"must be > 0, got {text!r}")
    return x


def add_shared(p: argparse.ArgumentParser) -> None:
    p.add_argument("--dtmin", type=positive_or_zero, default=None, metavar="K",
                   help=f"minimum approach temperature [K] (default {DEFAULT_DT_MIN:g} K)")
    p.add_argument("--utilities", metavar="FILE",
                   help="utility table (CSV or .xlsx): name,T_supply,T_target,cost [money per kW·year]")
    p.add_argument("--hours-per-year", type=positive, default=None, metavar="H",
                   help="operating hours per year [h/year], to read utility prices given per kWh or MWh "
                        "(e.g. 'cost [USD/kWh]'); prices are otherwise per kW·year")
    p.add_argument("--json", action="store_true", help="print one JSON object on stdout and nothing else")
    p.add_argument("--out", metavar="DIR", help="folder for result files (CSV, XLSX, JSON, figures)")
    p.add_argument("--force", action="store_true",
                   help="replace result files already in --out (input files are never replaced)")
    p.add_argument("--quiet", action="store_true", help="no progress or notes on stderr")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")


def add_table_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--sheet", metavar="NAME", help="worksheet of the stream table (default: the first)")
    p.add_argument("--utilities-sheet", metavar="NAME", help="worksheet of the utility table")
    p.add_argument("--columns", metavar="MAP",
                   help='map foreign column headers, e.g. "Stream=name,Tin=T_supply,Tout=T_target,FCp=CP"')
    p.add_argument("--fit-tolerance", type=positive, default=0.5, metavar="K",
                   help="largest temperature error when fitting temperature–duty points into linear "
                        "segments [K] (default 0.5 K; the fit is always on the safe side)")


def note(args, text: str) -> None:
    if not args.quiet:
        print(text, file=sys.stderr)


def read_inputs(args):
    from ..io import parse_column_mapping, read_streams, read_utilities

    columns = parse_column_mapping(args.columns) if args.columns else None
    streams = read_streams(args.file, sheet=args.sheet, columns=columns, fit_tolerance=args.fit_tolerance)
    utilities = None
    if args.utilities:
        utilities = read_utilities(args.utilities, sheet=args.utilities_sheet, process=streams,
                                   hours_per_year=args.hours_per_year)
    return streams, utilities


def fmt(x: float, unit: str = "kW") -> str:
    return f"{x:,.1f} {unit}"


def solves_summary(reports) -> str:
    """One line on the solves behind a result: how many, their statuses, total time, solver."""
    if not reports:
        return "solves: none"
    statuses = Counter(r.status.value for r in reports)
    solvers = sorted({r.solver for r in reports})
    worst = [r for r in reports if not r.optimal]
    text = (f"solves: {len(reports)} ({', '.join(f'{n} {s}' for s, n in statuses.items())}), "
            f"{sum(r.wall_time for r in reports):.2f} s, solver {'/'.join(solvers)}")
    for r in worst:
        gap = f", gap {100 * r.gap:.2g} %" if r.gap is not None else ""
        text += f"; not proven optimal: {r.problem} ({r.status.value}{gap})"
    return text




def dt_min_of(args) -> tuple[float, str]:
    """The ΔTmin of a run [K] and how it was chosen (stated in every output)."""
    if args.dtmin is None:
        return DEFAULT_DT_MIN, "default; set with --dtmin"
    return args.dtmin, "given"


def print_json(result) -> None:
    """Exactly one JSON object on stdout."""
    import json

    from ..io.export import to_jsonable

    print(json.dumps(to_jsonable(result), ensure_ascii=False))


def finish(args, result: dict, summary: str, out) -> int:
    """Print the run's outcome: the JSON object with --json, else the summary and the files written."""
    if args.json:
        print_json(result)
    else:
        print(summary)
        if out is not None:
            print(f"  wrote {len(out.written)} files to {out.path}/")
    return EXIT_OK
