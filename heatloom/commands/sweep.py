"""``heatloom sweep``: energy, area, units and cost targets against ΔTmin, and the optimum."""

from __future__ import annotations

import argparse

from .. import defaults
from .common import (
    ProgressBars,
    add_cost_target_options,
    add_output_options,
    add_table_options,
    check_cost_target_inputs,
    finish,
    fmt,
    match_rules,
    note,
    note_lines,
    number_list,
    positive,
    read_inputs,
)

__all__ = ["register", "run", "format_sweep", "parse_range", "parse_designs"]

EPILOG_SWEEP = """\
examples:
  heatloom sweep streams.csv --dtmin 5:40
  heatloom sweep streams.csv --dtmin 5:40 --step 0.25 --utilities utilities.csv --costs costs.json --out results
  heatloom sweep streams.csv --dtmin 5:30 --designs 10,20 --default-h 0.5 --json
  heatloom sweep streams.csv --dtmin 2:60 --cluster tcp://scheduler:8786

Area and cost targets need a film coefficient h for every stream and utility (column h, kW/(m²·K));
--default-h assumes one where it is missing, and the output says so. --cluster needs the optional
extra heatloom[dask] here and heatloom on every worker of the cluster.
"""


def parse_range(text: str) -> tuple[float, float]:
    """``"LO:HI"`` → (LO, HI) [K], for ``--dtmin``.

    Examples
    --------
    >>> parse_range("5:40")
    (5.0, 40.0)
    """
    parts = str(text).split(":")
    if len(parts) != 2:
        raise argparse.ArgumentTypeError(f"expected LO:HI in kelvin, e.g. 5:40, got {text!r}")
    try:
        lo, hi = (float(p) for p in parts)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected LO:HI in kelvin, e.g. 5:40, got {text!r}") from None
    if not (lo > 0 and hi > lo and hi != float("inf")):
        raise argparse.ArgumentTypeError(f"need 0 < LO < HI (finite, kelvin), got {text!r}")
    return lo, hi


def parse_designs(text: str) -> tuple[float, ...]:
    """``"10,20"`` → (10.0, 20.0) [K], for ``--designs``.

    Examples
    --------
    >>> parse_designs("10, 20.5")
    (10.0, 20.5)
    """
    return number_list(text, what="ΔTmin values in kelvin", example="10,20", zero_allowed=False)


def register(sub) -> None:
    p = sub.add_parser("sweep", help="targets and costs against ΔTmin, the optimum",
                       description="Energy, area, units and total annual cost targets over a range of ΔTmin "
                                   "(breakpoints located where the pinch or the unit targets change), the "
                                   "ΔTmin of lowest total annual cost, and optionally designed networks "
                                   "beside the targets.",
                       epilog=EPILOG_SWEEP, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="stream table: CSV or .xlsx (film coefficients in column h)")
    p.add_argument("--dtmin", type=parse_range, default=None, metavar="LO:HI",
                   help=f"ΔTmin range [K] (default {defaults.SWEEP_RANGE[0]:g}:{defaults.SWEEP_RANGE[1]:g})")
    p.add_argument("--step", type=positive, default=defaults.SWEEP_STEP, metavar="K",
                   help=f"grid step [K] (default {defaults.SWEEP_STEP:g})")
    p.add_argument("--utilities", metavar="FILE",
                   help="utility table (CSV or .xlsx): name,T_supply,T_target,cost [money/(kW·year)],h")
    p.add_argument("--hours-per-year", type=positive, default=None, metavar="H",
                   help="operating hours per year [h/year], to read utility prices given per kWh or MWh")
    p.add_argument("--costs", metavar="FILE", help="cost laws and annualisation (JSON, YAML or .xlsx)")
    p.add_argument("--designs", type=parse_designs, default=(), metavar="LIST",
                   help="also design a network at these ΔTmin values [K], e.g. 10,20")
    p.add_argument("--least-utility-flow", action="store_true",
                   help="with --designs: keep hot oil and cooling water at the least flow of their energy targets, "
                        "returned at their design temperatures (as `design --least-utility-flow`)")
    add_cost_target_options(p)
    add_output_options(p)
    add_table_options(p)
    p.set_defaults(handler=run)


OUTPUT_FILES = ("sweep.json", "sweep_points.csv", "sweep.xlsx", "cost_vs_dtmin.png", "cost_vs_dtmin.svg",
                "targets_vs_dtmin.png", "targets_vs_dtmin.svg")
"""Files written into --out."""


def format_sweep(result, source: str, range_note: str, runner: str) -> str:
    """The human summary: range, breakpoints, optimum, a short table, designs, basis."""
    cur = result.currency
    lo, hi = result.dt_min_range
    o = result.optimum
    lines = [f"heatloom sweep: {source}",
             f"  ΔTmin          {lo:g} to {hi:g} K by {result.step:g} K ({range_note}); {len(result.points)} points, "
             f"run on {runner}",
             f"  optimum        ΔTmin {o.dt_min:.2f} K: total annual cost {o.total_annual_cost:,.0f} {cur}/year "
             f"(capital {o.capital_cost:,.0f}, energy {o.energy_cost:,.0f})",
             f"                 hot utility {fmt(o.hot_utility)}, cold utility {fmt(o.cold_utility)}, area "
             f"{o.area:,.1f} m², {o.units_mer} units (MER), {o.shells} shells"]
    if result.breakpoints:
        lines.append(f"  breakpoints    {len(result.breakpoints)}:")
        for b in result.breakpoints[:12]:
            lines.append(f"    {0.5 * (b.low + b.high):8.3f} K  {b.change}")
        if len(result.breakpoints) > 12:
            lines.append(f"    ... {len(result.breakpoints) - 12} more (see --json or --out)")
    else:
        lines.append("  breakpoints    none in the range")
    grid = [p for p in result.points if p.kind == "grid"]
    every = max(1, -(-len(grid) // 12))
    shown = grid[::every]
    if grid and shown[-1] is not grid[-1]:
        shown.append(grid[-1])
    lines += ["",
              f"  {'ΔTmin':>7} {'hot util':>10} {'cold util':>10} {'area':>9} {'units':>5} {'capital':>11} "
              f"{'energy':>11} {'total':>11}",
              f"  {'[K]':>7} {'[kW]':>10} {'[kW]':>10} {'[m²]':>9} {'[-]':>5} {'[' + cur + '/year]':>11} "
              f"{'[' + cur + '/year]':>11} {'[' + cur + '/year]':>11}"]
    for p in shown:
        if not p.feasible:
            lines.append(f"  {p.dt_min:>7.2f}  not feasible with the utilities given")
            continue
        lines.append(f"  {p.dt_min:>7.2f} {p.hot_utility:>10,.1f} {p.cold_utility:>10,.1f} {p.area:>9,.1f} "
                     f"{p.units_mer:>5d} {p.capital_cost:>11,.0f} {p.energy_cost:>11,.0f} "
                     f"{p.total_annual_cost:>11,.0f}")
    if result.designs:
        lines += ["", "  designed networks (maximum energy recovery, fewest units):"]
        for d in result.designs:
            if d.error:
                lines.append(f"    ΔTmin {d.dt_min:g} K: no design ({d.error})")
            else:
                lines.append(f"    ΔTmin {d.dt_min:g} K: {d.units} units, area {d.area:,.1f} m², total annual cost "
                             f"{d.total_annual_cost:,.0f} {cur}/year")
    lines += note_lines([*result.notes, result.basis])
    return "\n".join(lines)


def run(args) -> int:
    from ..errors import InputError
    from ..pinch.area import missing_film_coefficients
    from ..studies.sweep import describe_executor, sweep

    if args.least_utility_flow and not args.designs:
        raise InputError("--least-utility-flow applies to the designs of --designs only (give --designs LIST)")
    streams, utilities, costs = read_inputs(args)
    rng, range_note = (args.dtmin, "given") if args.dtmin is not None else (defaults.SWEEP_RANGE, "default; set with --dtmin LO:HI")
    missing = missing_film_coefficients(streams, utilities or ())
    check_cost_target_inputs(missing, args.default_h, args.cluster)
    out = None
    if args.out:
        from ..io.export import OutputDirectory

        out = OutputDirectory(args.out, [p for p in (args.file, args.utilities, args.costs) if p], force=args.force)
        out.check(OUTPUT_FILES)
    if missing:
        note(args, f"heatloom: film coefficient {args.default_h:g} kW/(m²·K) assumed for {', '.join(missing)}")
    # the designs keep the stream table's forbidden and required matches
    rules = match_rules(args, streams, utilities, args.designs[0]) if args.designs else None
    bars = ProgressBars("heatloom sweep", enabled=not (args.quiet or args.json))
    runner_name = describe_executor(args.workers, args.cluster)
    try:
        result = sweep(streams, rng, utilities, costs, step=args.step, designs=args.designs, workers=args.workers,
                       cluster=args.cluster, default_film_coefficient=args.default_h,
                       capital_basis=args.capital_basis, progress=bars, rules=rules,
                       least_utility_flow=args.least_utility_flow)
    finally:
        bars.close()
    data = result.to_dict()
    data["source"] = str(args.file)
    data["dtmin_source"] = range_note
    if missing:
        data["notes"].append(f"film coefficient {args.default_h:g} kW/(m²·K) assumed for {', '.join(missing)}")
    if out is not None:
        import pandas as pd

        from ..io.sweep_figures import cost_figure, targets_figure

        out.json("sweep.json", data)
        frame = result.to_frame()
        out.csv("sweep_points.csv", frame)
        sheets = {"points": frame,
                  "optimum": pd.DataFrame([result.optimum.to_dict()]),
                  "breakpoints": pd.DataFrame([b.to_dict() for b in result.breakpoints],
                                              columns=["dtmin_low", "dtmin_high", "change"]),
                  "basis": pd.DataFrame({"note": [*data["notes"], result.basis, defaults.SAFETY_NOTE]})}
        if result.designs:
            sheets["designs"] = pd.DataFrame([d.to_dict() for d in result.designs])
        out.workbook("sweep.xlsx", sheets)
        out.figures("cost_vs_dtmin", cost_figure(result))
        out.figures("targets_vs_dtmin", targets_figure(result))
    return finish(args, data, format_sweep(result, str(args.file), range_note, runner_name), out)
