"""``heatloom evaluate``: the checks, sizing and costing of a design, for a network the engineer drew."""

from __future__ import annotations

import argparse
import sys

from .. import defaults
from .common import (
    EXIT_INFEASIBLE,
    add_shared,
    add_table_options,
    assumed_utilities,
    dt_min_of,
    finish,
    fmt,
    note_lines,
    positive,
    price_hours,
    read_cost_settings,
    settle_currency,
)
from .design import unit_lines

__all__ = ["register", "run", "format_evaluation", "OUTPUT_NAMES"]

OUTPUT_NAMES = ("evaluation.json", "evaluation_units.csv")
"""Files written with --out."""

EPILOG_EVALUATE = """\
examples:
  heatloom evaluate streams.csv network.csv --dtmin 10 --utilities utilities.csv
  heatloom evaluate streams.csv network.csv --dtmin 10 --utilities utilities.csv --costs costs.json --json
  heatloom evaluate streams.csv network.csv --utilities utilities.csv --default-h 0.5 --out results

NETWORK is a network table, one row per unit: unit, hot, cold, area and/or duty, U, hot_order, cold_order,
type, shells, hot_fraction, cold_fraction (the table retrofit reads; a split's branches share one
position and give their fractions). A unit given by its duty does that duty; one given by its area
is rated at it; the heater or cooler at the end of a stream takes what brings it to its target.

The network is checked as every design is (energy balance of every unit and stream, ΔTmin at both ends
and inside every unit), temperature crosses are named unit by unit, the utilities are compared with the
energy targets at ΔTmin, and every unit is sized and costed as a new design. Exit code 3 when a check
fails (the failures are listed). With --out: evaluation.json and evaluation_units.csv (your rows,
positions and branches, with the simulated duties, temperatures, areas and costs; it reads back as a
network table).
"""


def register(sub) -> None:
    p = sub.add_parser("evaluate", help="check, size and cost a network you drew",
                       description="Evaluate a heat-exchanger network given as a network table: balances, ΔTmin "
                                   "in every unit, temperature crosses, distance from the energy targets, "
                                   "areas and costs as for a new design.",
                       epilog=EPILOG_EVALUATE, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("streams", metavar="STREAMS", help="stream table (CSV or .xlsx)")
    p.add_argument("network", metavar="NETWORK", help="network table (CSV or .xlsx), one row per unit")
    add_shared(p)
    add_table_options(p)
    p.add_argument("--costs", metavar="FILE", help="cost laws and annualisation (JSON, YAML or .xlsx)")
    p.add_argument("--default-h", type=positive, metavar="H",
                   help="film coefficient [kW/(m²·K)] assumed for streams and utilities without one")
    p.set_defaults(handler=run)


def format_evaluation(ev, source: str, dt_note: str) -> str:
    """The human summary: the verdict, the targets, one line per unit, the costs and the notes."""
    net = ev.network
    cur = net.currency or "money"
    verdict = "passes every check" if ev.ok else f"FAILS {len(ev.failures) + len(ev.crosses)} check(s)"
    lines = [f"heatloom evaluate: {source}",
             f"  ΔTmin {ev.dt_min:g} K ({dt_note}); {net.units} units; the network {verdict}",
             f"  hot utility {fmt(net.hot_utility)} (target {fmt(ev.hot_utility_target)}), cold utility "
             f"{fmt(net.cold_utility)} (target {fmt(ev.cold_utility_target)}): "
             + ("targets met" if ev.targets_met else
                f"{fmt(ev.hot_utility_excess)} hot and {fmt(ev.cold_utility_excess)} cold above the targets"), ""]
    lines += [f"  cross: {c}" for c in ev.crosses]
    lines += [f"  fails: {f}" for f in ev.failures]
    if ev.crosses or ev.failures:
        lines.append("")
    lines += unit_lines(net, sized=ev.sized)
    if ev.sized:
        lines += ["",
                  f"  capital (annualised)  {net.capital_cost:>14,.0f} {cur}/year",
                  f"  utilities             {net.operating_cost:>14,.0f} {cur}/year",
                  f"  total annual cost     {net.total_annual_cost:>14,.0f} {cur}/year"]
    lines += note_lines(ev.notes)
    return "\n".join(lines)


def run(args) -> int:
    from ..io import read_streams, read_utilities
    from ..io.network_table import read_network
    from ..io.tables import parse_column_mapping
    from ..retrofit.evaluate import evaluate_network, with_default_film_coefficient
    from ..retrofit.existing import ExistingNetwork

    dt_min, dt_note = dt_min_of(args)
    out = None
    if args.out:
        from ..io.export import OutputDirectory

        out = OutputDirectory(args.out, [p for p in (args.streams, args.network, args.utilities, args.costs) if p],
                              force=args.force)
        out.check(list(OUTPUT_NAMES))
    columns = parse_column_mapping(args.columns) if args.columns else None
    read_notes: list[str] = []
    streams = read_streams(args.streams, sheet=args.sheet, columns=columns, fit_tolerance=args.fit_tolerance,
                           notes=read_notes, strict=args.strict)
    costs = read_cost_settings(args.costs, args.hours_per_year)
    utilities = ()
    if args.utilities:
        utilities = read_utilities(args.utilities, sheet=args.utilities_sheet, process=streams,
                                   hours_per_year=price_hours(costs), notes=read_notes, strict=args.strict)
        costs = settle_currency(costs, utilities)
    if not args.quiet:
        for n in read_notes:
            print(f"note: {n} (ignored; --strict refuses unknown columns)", file=sys.stderr)
    table = read_network(args.network)
    assumed = None
    if not args.utilities:
        utilities, assumed = assumed_utilities(table, streams, dt_min)
        if assumed and not args.quiet:
            print(f"note: {assumed}", file=sys.stderr)
    streams, utilities, given = with_default_film_coefficient(streams, utilities, args.default_h)
    network = ExistingNetwork.from_table(streams, table, utilities)
    ev = evaluate_network(network, dt_min, costs=costs)
    if given:
        from dataclasses import replace

        ev = replace(ev, notes=ev.notes + (f"film coefficient {args.default_h:g} kW/(m²·K) assumed for "
                                           f"{', '.join(given)}",))
    result = ev.to_dict()
    result["source"] = {"streams": str(args.streams), "network": str(args.network)}
    result["dtmin_note"] = dt_note
    result["safety_note"] = defaults.SAFETY_NOTE
    if out is not None:
        out.json("evaluation.json", result)
        out.csv("evaluation_units.csv", ev.units_frame())
    code = finish(args, result, format_evaluation(ev, str(args.network), dt_note), out)
    if not ev.ok:
        if not args.quiet:
            print(f"heatloom: the network fails {len(ev.failures) + len(ev.crosses)} check(s): "
                  + "; ".join([*ev.crosses, *ev.failures]), file=sys.stderr)
        return EXIT_INFEASIBLE
    return code
