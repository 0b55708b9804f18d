"""The ``heatloom`` command line.

Only this module (with the public API) ties reading, computing and writing together.  Every command
prints a short readable summary, or exactly one JSON object on stdout with ``--json``; messages and
progress go to stderr.  Exit codes: 0 ok, 2 bad input, 3 infeasible problem, 1 anything unexpected.
"""

from __future__ import annotations

import argparse
import json
import sys

from . import __version__
from .errors import HeatloomError, InfeasibleError, InputError, SolverError

__all__ = ["main", "build_parser", "format_targets", "format_network"]

EXIT_OK, EXIT_UNEXPECTED, EXIT_INPUT, EXIT_INFEASIBLE = 0, 1, 2, 3
DEFAULT_DT_MIN = 10.0
"""Default minimum approach temperature [K] (*common practice* for a first look at liquid–liquid
duties; gas streams and refrigeration usually need other values). Stated in every output."""

SAFETY_NOTE = ("Targets and designs from heatloom are screening estimates. Check every design against "
               "local codes and have it reviewed by qualified, licensed engineers.")

EPILOG_TARGET = """\
examples:
  heatloom target streams.csv --dtmin 10
  heatloom target plant.xlsx --sheet "Stream data" --dtmin 15 --utilities utilities.csv
  heatloom target export.csv --columns "Stream=name,Tin=T_supply,Tout=T_target,FCp=CP" --json
  heatloom target streams.csv --out results --plot

input: a CSV or .xlsx table with columns name, T_supply, T_target, CP (°C and kW/K unless the header
says otherwise, e.g. "T_supply [degF]", "CP [MW/K]"); optional h [kW/m2K], dT_min_contrib [K], duty [kW].
"""


EPILOG_DESIGN = """\
examples:
  heatloom design streams.csv --dtmin 10
  heatloom design streams.csv --dtmin 10 --utilities utilities.csv --costs costs.json --out results
  heatloom design table.csv --dtmin 20 --default-h 0.5 --json

Areas need a film coefficient h for every stream and utility (column h, kW/(m²·K)); --default-h assumes
one where it is missing, and the output says so.
"""


def _positive_or_zero(text: str) -> float:
    try:
        x = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of kelvin, got {text!r}") from None
    if not (x >= 0) or x == float("inf"):
        raise argparse.ArgumentTypeError(f"must be a finite number >= 0, got {text!r}")
    return x


def _positive(text: str) -> float:
    x = _positive_or_zero(text)
    if not x > 0:
        raise argparse.ArgumentTypeError(f"must be > 0, got {text!r}")
    return x


def _add_shared(p: argparse.ArgumentParser) -> None:
    p.add_argument("--dtmin", type=_positive_or_zero, default=None, metavar="K",
                   help=f"minimum approach temperature [K] (default {DEFAULT_DT_MIN:g} K)")
    p.add_argument("--utilities", metavar="FILE",
                   help="utility table (CSV or .xlsx): name,T_supply,T_target,cost [money per kW·year]")
    p.add_argument("--json", action="store_true", help="print one JSON object on stdout and nothing else")
    p.add_argument("--out", metavar="DIR", help="folder for result files (CSV, XLSX, JSON, figures)")
    p.add_argument("--force", action="store_true",
                   help="replace result files already in --out (input files are never replaced)")
    p.add_argument("--quiet", action="store_true", help="no progress or notes on stderr")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")


def _add_table_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--sheet", metavar="NAME", help="worksheet of the stream table (default: the first)")
    p.add_argument("--utilities-sheet", metavar="NAME", help="worksheet of the utility table")
    p.add_argument("--columns", metavar="MAP",
                   help='map foreign column headers, e.g. "Stream=name,Tin=T_supply,Tout=T_target,FCp=CP"')
    p.add_argument("--fit-tolerance", type=_positive, default=0.5, metavar="K",
                   help="largest temperature error when fitting temperature–duty points into linear "
                        "segments [K] (default 0.5 K; the fit is always on the safe side)")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="heatloom",
        description="Pinch analysis and heat-exchanger networks: energy targets from plant stream tables.",
        epilog="run 'heatloom COMMAND --help' for the options and examples of each command")
    parser.add_argument("--version", action="version", version=f"heatloom {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    p = sub.add_parser("target", help="energy targets, pinch, composite curves, utility levels",
                       description="Minimum hot and cold utility, pinch and heat recovery of a stream table "
                                   "(problem table algorithm), with composite and grand composite curves "
                                   "and the duties of several utility levels.",
                       epilog=EPILOG_TARGET, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="stream table: CSV or .xlsx")
    _add_shared(p)
    _add_table_options(p)
    p.add_argument("--plot", action="store_true",
                   help="write composite and grand composite curve figures (PNG and SVG) into --out")
    p.set_defaults(handler=_cmd_target)

    p = sub.add_parser("design", help="a new network: maximum energy recovery with the fewest units",
                       description="Design a heat-exchanger network that reaches the energy targets with the "
                                   "fewest units (transshipment LP, minimum-matches MILP per pinch subnetwork, "
                                   "then placement with temperatures and splits), then size and cost it.",
                       epilog=EPILOG_DESIGN, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="stream table: CSV or .xlsx (film coefficients in column h)")
    _add_shared(p)
    _add_table_options(p)
    p.add_argument("--mode", choices=["mer"], default="mer",
                   help="mer: maximum energy recovery with the fewest units (default)")
    p.add_argument("--costs", metavar="FILE", help="cost laws and annualisation (JSON, YAML or .xlsx)")
    p.add_argument("--default-h", type=_positive, metavar="H",
                   help="film coefficient [kW/(m²·K)] assumed for streams and utilities without one")
    p.add_argument("--solver", choices=["highs", "cbc"], default=None,
                   help="MILP solver (default: HiGHS when installed, else CBC)")
    p.add_argument("--time-limit", type=_positive, default=60.0, metavar="S",
                   help="time limit of each solve [s] (default 60 s)")
    p.set_defaults(handler=_cmd_design)
    return parser


def _note(args, text: str) -> None:
    if not args.quiet:
        print(text, file=sys.stderr)


def _read_inputs(args):
    from .io import parse_column_mapping, read_streams, read_utilities

    columns = parse_column_mapping(args.columns) if args.columns else None
    streams = read_streams(args.file, sheet=args.sheet, columns=columns, fit_tolerance=args.fit_tolerance)
    utilities = None
    if args.utilities:
        utilities = read_utilities(args.utilities, sheet=args.utilities_sheet, process=streams)
    return streams, utilities


def _fmt(x: float, unit: str = "kW") -> str:
    return f"{x:,.1f} {unit}"


def format_targets(targets, source: str, dt_min_note: str) -> str:
    """The human summary of a targeting run (a few lines and one table)."""
    s = targets.streams
    n_seg = sum(len(x.segments) for x in s)
    lines = [f"heatloom target: {source}",
             f"  streams        {len(s.hot)} hot, {len(s.cold)} cold ({n_seg} segments)",
             f"  ΔTmin          {targets.dt_min:g} K ({dt_min_note})"]
    own = sum(1 for x in s for g in x.segments if g.dt_min_contribution is not None)
    if own:
        lines.append(f"                 {own} segments use their own ΔTmin contribution")
    lines += [f"  hot utility    {_fmt(targets.hot_utility):>14}   minimum",
              f"  cold utility   {_fmt(targets.cold_utility):>14}   minimum",
              f"  heat recovery  {_fmt(targets.heat_recovery):>14}   of {_fmt(targets.hot_process_duty)} "
              "hot process duty"]
    if targets.pinch is not None:
        p = targets.pinch
        more = f" (+{len(targets.pinches) - 1} more pinch points)" if len(targets.pinches) > 1 else ""
        lines.append(f"  pinch          {p.hot:g} °C hot side / {p.cold:g} °C cold side "
                     f"(shifted {p.shifted:g} °C){more}")
    else:
        lines.append("  pinch          none")
    if targets.threshold is not None:
        lines.append(f"  threshold      yes: {targets.threshold.value} is needed")
    if targets.placement is None:
        lines.append("  utilities      none given: ideal utilities assumed (hotter and colder than every "
                     "process temperature); give --utilities FILE to place real levels")
    else:
        lines.append("  utility levels (cheapest placement against the grand composite curve):")
        lines.append(f"    {'name':<20} {'kind':<5} {'T_supply':>9} {'T_target':>9} {'duty':>12} "
                     f"{'cost/yr':>12}")
        lines.append(f"    {'':<20} {'':<5} {'[°C]':>9} {'[°C]':>9} {'[kW]':>12} {'[money]':>12}")
        for d in targets.placement.duties:
            u = d.utility
            lines.append(f"    {u.name[:20]:<20} {u.kind.value:<5} {u.supply_temperature:>9g} "
                         f"{u.target_temperature:>9g} {d.duty:>12,.1f} {d.annual_cost:>12,.0f}")
        for t in targets.placement.utility_pinches:
            lines.append(f"    utility pinch at {t:g} °C shifted")
    lines.append(f"  note: {SAFETY_NOTE}")
    return "\n".join(lines)


def _cmd_target(args) -> int:
    from .pinch import target

    if args.plot and not args.out:
        raise InputError("--plot writes figures into a folder: add --out DIR (e.g. --out results)")
    streams, utilities = _read_inputs(args)
    dt_min = DEFAULT_DT_MIN if args.dtmin is None else args.dtmin
    dt_note = "default; set with --dtmin" if args.dtmin is None else "given"
    out = None
    if args.out:
        from .io.export import OutputDirectory

        out = OutputDirectory(args.out, [p for p in (args.file, args.utilities) if p], force=args.force)
        names = ["targets.json", "streams.csv", "problem_table.csv", "targets.xlsx"]
        if args.plot:
            names += [f"{n}.{e}" for n in ("composite_curves", "shifted_composite_curves",
                                          "grand_composite_curve") for e in ("png", "svg")]
        out.check(names)  # refuse before computing anything, so nothing is half written
    t = target(streams, dt_min, utilities)
    result = t.to_dict()
    result["dtmin_source"] = dt_note
    result["source"] = str(args.file)
    if out is not None:
        from .io.export import targets_workbook_sheets

        out.json("targets.json", result)
        out.csv("streams.csv", streams.to_frame())
        out.csv("problem_table.csv", t.table.to_frame())
        out.workbook("targets.xlsx", targets_workbook_sheets(t))
        if args.plot:
            import matplotlib.pyplot as plt

            from .io.figures import composite_figure, grand_composite_figure

            for name, make in (("composite_curves", lambda: composite_figure(t)),
                               ("shifted_composite_curves", lambda: composite_figure(t, shifted=True)),
                               ("grand_composite_curve", lambda: grand_composite_figure(t))):
                fig = make()
                for ext in ("png", "svg"):
                    out.figure(f"{name}.{ext}", fig)
                plt.close(fig)
    if args.json:
        from .io.export import to_jsonable

        print(json.dumps(to_jsonable(result), ensure_ascii=False))
    else:
        print(format_targets(t, str(args.file), dt_note))
        if out is not None:
            print(f"  wrote {len(out.written)} files to {out.path}/")
    return EXIT_OK


def solves_summary(reports) -> str:
    """One line on the solves behind a result: how many, their statuses, total time, solver."""
    from collections import Counter

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


def format_network(net, source: str, dt_note: str) -> str:
    """The human summary of a design: one line per unit, then the costs."""
    cur = net.currency
    lines = [f"heatloom design: {source}",
             f"  ΔTmin {net.dt_min:g} K ({dt_note}); {net.units} units"
             + (f" (minimum-units target {net.unit_target})" if net.unit_target is not None else ""),
             f"  hot utility {_fmt(net.hot_utility)}, cold utility {_fmt(net.cold_utility)}, "
             f"heat recovery {_fmt(net.heat_recovery)}",
             "",
             f"  {'unit':<5} {'hot side':<18} {'cold side':<18} {'duty':>9} {'hot in→out':>15} "
             f"{'cold in→out':>15} {'split h/c':>10} {'area':>8} {'cost/yr':>10}",
             f"  {'':<5} {'':<18} {'':<18} {'[kW]':>9} {'[°C]':>15} {'[°C]':>15} {'[-]':>10} {'[m²]':>8} "
             f"{'[' + cur + ']':>10}"]

    def row(tag, hot, cold, duty, hi, ho, ci, co, fh, fc, area, cost):
        split = f"{fh:.2f}/{fc:.2f}" if (fh < 0.9995 or fc < 0.9995) else "-"
        return (f"  {tag:<5} {hot[:18]:<18} {cold[:18]:<18} {duty:>9,.1f} {f'{hi:.1f}→{ho:.1f}':>15} "
                f"{f'{ci:.1f}→{co:.1f}':>15} {split:>10} {area:>8,.1f} {cost:>10,.0f}")

    for k, e in enumerate(net.exchangers, 1):
        lines.append(row(f"E{k}", e.hot, e.cold, e.duty, e.hot_in, e.hot_out, e.cold_in, e.cold_out,
                         e.hot_fraction, e.cold_fraction, e.area, e.cost))
    for k, h in enumerate(net.heaters, 1):
        lines.append(row(f"H{k}", h.utility, h.cold, h.duty, h.utility_in, h.utility_out, h.cold_in, h.cold_out,
                         1.0, h.cold_fraction, h.area, h.cost))
    for k, c in enumerate(net.coolers, 1):
        lines.append(row(f"C{k}", c.hot, c.utility, c.duty, c.hot_in, c.hot_out, c.utility_in, c.utility_out,
                         c.hot_fraction, 1.0, c.area, c.cost))
    lines += ["",
              f"  capital (annualised)  {net.capital_cost:>14,.0f} {cur}/yr",
              f"  utilities             {net.operating_cost:>14,.0f} {cur}/yr",
              f"  total annual cost     {net.total_annual_cost:>14,.0f} {cur}/yr"]
    lines.append("  " + solves_summary(net.solves))
    for n in net.notes:
        lines.append(f"  note: {n}")
    lines.append(f"  note: {SAFETY_NOTE}")
    return "\n".join(lines)


def _cmd_design(args) -> int:
    from .network import design_mer

    streams, utilities = _read_inputs(args)
    costs = None
    if args.costs:
        from .io import read_costs

        costs = read_costs(args.costs)
    dt_min = DEFAULT_DT_MIN if args.dtmin is None else args.dtmin
    dt_note = "default; set with --dtmin" if args.dtmin is None else "given"
    out = None
    if args.out:
        from .io.export import OutputDirectory

        out = OutputDirectory(args.out, [p for p in (args.file, args.utilities, args.costs) if p],
                              force=args.force)
        out.check(["network.json", "network.csv", "network.xlsx", "grid_diagram.png", "grid_diagram.svg"])
    net = design_mer(streams, dt_min, utilities, costs=costs, solver=args.solver, time_limit=args.time_limit,
                     default_film_coefficient=args.default_h)
    result = net.to_dict()
    result["source"] = str(args.file)
    result["mode"] = args.mode
    if out is not None:
        import matplotlib.pyplot as plt

        from .io.figures import grid_diagram

        out.json("network.json", result)
        frame = net.to_frame()
        out.csv("network.csv", frame)
        out.workbook("network.xlsx", {"units": frame, "streams": streams.to_frame()})
        fig = grid_diagram(net, streams)
        for ext in ("png", "svg"):
            out.figure(f"grid_diagram.{ext}", fig)
        plt.close(fig)
    if args.json:
        from .io.export import to_jsonable

        print(json.dumps(to_jsonable(result), ensure_ascii=False))
    else:
        print(format_network(net, str(args.file), dt_note))
        if out is not None:
            print(f"  wrote {len(out.written)} files to {out.path}/")
    return EXIT_OK


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
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
