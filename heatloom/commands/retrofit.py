"""``heatloom retrofit``: diagnose an existing network and rank costed retrofit options."""

from __future__ import annotations

import argparse
from pathlib import Path

from .. import defaults
from ..errors import InputError
from .common import (
    add_shared,
    add_table_options,
    assumed_utilities,
    dt_min_of,
    find_case_files,
    finish,
    fmt,
    input_limit,
    note,
    note_lines,
    positive,
    price_hours,
    read_cost_settings,
    settle_currency,
    solves_summary,
    whole_number,
)

__all__ = ["register", "run", "find_inputs", "format_retrofit", "OUTPUT_NAMES", "FIGURE_STEMS"]

EPILOG_RETROFIT = """\
examples:
  heatloom retrofit network.csv --streams streams.csv --utilities utilities.csv --dtmin 10
  heatloom retrofit case_studies/existing_network --budget 60000 --max-payback 1.5
  heatloom retrofit case_studies/existing_network --json
  heatloom retrofit plant/ --costs plant/costs.json --out plant/retrofit --force

NETWORK is the existing network table (one row per unit: unit, hot, cold, area and/or duty, U,
hot_order, cold_order, type, shells, role, hot_fraction, cold_fraction), or a case folder whose files
are found by name: 'streams', 'network', 'utilities' and 'costs' (CSV or .xlsx; costs JSON, YAML or
.xlsx); options given on the command line take precedence. A heater or cooler last on its stream may leave area and duty empty: it
takes the rest of the stream's duty. The units table 'heatloom design' writes (design_units.csv, or
the sheet 'units' of design.xlsx) is a network table too. A stream split is one position shared by the
units on its branches, each giving its fraction of the stream's flow (the fractions add up to 1).
The costs file may carry a 'retrofit' section pricing new exchangers, added area, repiping and
resequencing (illustrative defaults otherwise).

Options are ranked by net present value (interest rate and plant life from the costs file); every
option is simulated after the change and keeps the minimum approach in every unit.
"""

OUTPUT_NAMES = ("retrofit.json", "retrofit_options.csv", "retrofit_changes.csv", "retrofit.xlsx")
"""Files written with --out (no name contains 'streams', 'network', 'utilities' or 'costs', so writing
into a case folder never adds an input)."""
FIGURE_STEMS = ("retrofit_grid_existing", "retrofit_grid_proposed", "retrofit_savings")

ROLES = {"streams": "streams", "network": "network", "utilities": "utilities", "costs": "costs"}
"""Keyword in a case folder's file name → role (see :func:`heatloom.commands.common.find_case_files`)."""


def register(sub) -> None:
    p = sub.add_parser("retrofit", help="diagnose an existing network, ranked costed options",
                       description="Simulate an existing network at its areas, show its distance from the "
                                   "energy targets, the heat crossing the pinch and its area efficiency, then "
                                   "search for retrofit changes (added area, new exchangers, resequencing, "
                                   "repiping), select them with a MILP whose every choice is confirmed by "
                                   "simulation, and rank the options by net present value.",
                       epilog=EPILOG_RETROFIT, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("network", metavar="NETWORK", help="existing network table (CSV or .xlsx), or a case folder")
    p.add_argument("--streams", metavar="FILE", help="stream table (CSV or .xlsx); found by name in a case folder")
    p.add_argument("--network-sheet", metavar="NAME", help="worksheet of the network table (default: the first)")
    add_shared(p)
    add_table_options(p)
    p.add_argument("--costs", metavar="FILE", help="cost laws, interest rate, plant life and an optional "
                                                   "'retrofit' section (JSON, YAML or .xlsx)")
    p.add_argument("--budget", type=positive, default=None, metavar="MONEY",
                   help="largest investment of an option [money]")
    p.add_argument("--max-payback", type=positive, default=None, metavar="YEARS",
                   help="largest simple payback of an option [years]")
    p.add_argument("--min-approach", type=positive, default=None, metavar="K",
                   help="smallest approach any unit may be left with [K] (default: ΔTmin)")
    p.add_argument("--max-changes", type=whole_number(1), default=3, metavar="N",
                   help="most changes in one option (default 3)")
    p.add_argument("--sizes", type=_fractions, default=None, metavar="LIST",
                   help="sizes tried for added area and new exchangers, as fractions of the largest extra duty "
                        "(default 0.25,0.5,0.75,1)")
    p.add_argument("--max-candidates", type=whole_number(1), default=12, metavar="N",
                   help="the MILP chooses among the N candidates best by NPV and the N best by saving, at all "
                        "their sizes (default 12)")
    p.add_argument("--default-h", type=positive, metavar="H",
                   help="film coefficient [kW/(m²·K)] assumed for streams and utilities without one")
    p.add_argument("--solver", choices=["highs", "cbc"], default=None,
                   help="MILP solver (default: HiGHS when installed, else CBC)")
    p.add_argument("--time-limit", type=positive, default=10.0, metavar="S",
                   help="time limit of each MILP solve [s] (default 10 s)")
    p.set_defaults(handler=run)


def _fractions(text: str) -> tuple[float, ...]:
    out = []
    for part in str(text).split(","):
        try:
            x = float(part)
        except ValueError:
            raise argparse.ArgumentTypeError(f"expected fractions separated by commas, e.g. 0.5,1, got {text!r}") \
                from None
        if not (0 < x <= 1):
            raise argparse.ArgumentTypeError(f"each size must be a fraction in (0, 1], got {part.strip()!r}")
        out.append(x)
    return tuple(out)


def find_inputs(args) -> tuple[dict[str, Path], list[str]]:
    """The input files by role (``streams``, ``network``, ``utilities``, ``costs``) and how they were found.

    A folder's own files are matched by name (case ignored); options given on the command line win.
    """
    path = Path(args.network)
    files: dict[str, Path] = {}
    notes: list[str] = []
    if path.is_dir():
        files = find_case_files(path, ROLES, required=())
        notes.append(f"case folder {path}: " + "; ".join(f"{r} {f.name}" for r, f in files.items()))
    elif path.is_file():
        files["network"] = path
    else:
        raise InputError("file or folder not found", file=str(path))
    for role, option in (("streams", args.streams), ("utilities", args.utilities), ("costs", args.costs)):
        if option:
            files[role] = Path(option)
    for role in ("streams", "network"):
        if role not in files:
            what = "--streams FILE" if role == "streams" else "a network table (a file named with 'network')"
            raise InputError(f"no {role} table: give {what}", file=str(path))
    return files, notes


def format_retrofit(result, source: str, dt_note: str) -> str:
    """The human summary: where the network stands, then the ranked options with their changes."""
    sim = result.simulation
    cur = result.costs.currency
    lines = [f"heatloom retrofit: {source}",
             f"  ΔTmin {result.dt_min:g} K ({dt_note}); minimum approach of every unit {result.min_approach:g} K",
             f"  now:     hot utility {fmt(sim.hot_utility)}, cold utility {fmt(sim.cold_utility)}",
             f"  targets: hot utility {fmt(sim.hot_utility_target)}, cold utility {fmt(sim.cold_utility_target)}"]
    if result.efficiency is not None:
        e = result.efficiency
        lines.append(f"  area efficiency α {e.alpha:.2f}: {e.area_existing:,.1f} m² installed, {e.area_target:,.1f} m² "
                     f"would do at the same energy use")
    if result.cross_pinch is not None and result.cross_pinch.units:
        parts = [f"{u.unit} {round(u.net):,} kW" for u in sorted(result.cross_pinch.units, key=lambda u: -u.net)]  # no "-0"
        lines.append("  heat across the pinch: " + ", ".join(parts))
    lines.append("")
    if not result.options:
        lines.append("  no retrofit option saves energy within the limits given")
    else:
        lines.append(f"  options ranked by net present value ({100 * result.costs.interest_rate:g} % over "
                     f"{result.costs.years:g} years), money in {cur}:")
        lines.append(f"  {'rank':>4} {'saving':>10} {'saving/year':>12} {'investment':>12} {'payback':>8} "
                     f"{'NPV':>12} {'hot utility':>12}")
        lines.append(f"  {'':>4} {'[kW]':>10} {f'[{cur}/year]':>12} {f'[{cur}]':>12} {'[year]':>8} {f'[{cur}]':>12} "
                     f"{'after [kW]':>12}")
        for o in result.options:
            payback = f"{o.payback_years:.2f}" if o.payback_years is not None else "-"
            lines.append(f"  {o.rank:>4} {o.saving:>10,.1f} {o.saving_per_year:>12,.0f} {o.investment:>12,.0f} "
                         f"{payback:>8} {o.npv:>12,.0f} {o.hot_utility:>12,.1f}")
            for step in o.steps:
                lines.append(f"  {'':>6}- {step}")
    lines.append("")
    kept = ", ".join(f"{k} {b}/{a}" for k, (a, b) in result.candidates.items())
    lines.append(f"  candidates that work alone and save energy / tried: {kept}; {result.evaluations} simulations")
    lines.append("  " + solves_summary(result.solves))
    from ..retrofit.selection import SetValue, agree

    off = [o.rank for o in result.options if not agree(
        SetValue(True, o.milp_saving, 0.0, o.milp_saving_per_year, o.milp_investment),
        SetValue(True, o.saving, 0.0, o.saving_per_year, o.investment))]
    lines.append("  every option's saving is its simulated one (areas fixed after the change, ε-NTU); "
                 + ("the MILP's estimates agree within 0.1 %" if not off else
                    f"the MILP's estimates differ beyond 0.1 % for option(s) {', '.join(map(str, off))}"))
    lines += note_lines([*result.notes, f"{result.costs.describe()} {result.retrofit_costs.describe(cur)}"],
                        caution="Retrofit changes also need the plant's hydraulics, materials and fouling checked.")
    return "\n".join(lines)


def _frames(result):
    import pandas as pd

    options = result.to_frame()
    changes = pd.DataFrame([{"rank": o.rank, "step": k, "change": c.kind.value, "unit": c.unit,
                             "area [m²]": c.area, f"investment [{result.costs.currency}]": c.investment,
                             "description": text}
                            for o in result.options for k, (c, text) in enumerate(zip(o.changes, o.steps), start=1)])
    existing = result.simulation.to_frame()
    sheets = {"options": options, "changes": changes, "existing units": existing}
    if result.best is not None:
        sheets["best option units"] = result.best.simulation.to_frame()
    return options, changes, sheets


def run(args) -> int:
    with input_limit(args):
        return _run(args)


def _run(args) -> int:
    from ..io import read_streams, read_utilities
    from ..io.costs import read_retrofit_costs
    from ..io.network_table import read_network
    from ..io.tables import parse_column_mapping
    from ..retrofit.existing import ExistingNetwork

    files, notes = find_inputs(args)
    dt_min, dt_note = dt_min_of(args)
    out = None
    if args.out:
        from ..io.export import FIGURE_FORMATS, OutputDirectory

        out = OutputDirectory(args.out, [str(p) for p in files.values()], force=args.force)
        out.check(list(OUTPUT_NAMES) + [f"{s}.{e}" for s in FIGURE_STEMS for e in FIGURE_FORMATS])
    for n in notes:
        note(args, n)
    columns = parse_column_mapping(args.columns) if args.columns else None
    streams = read_streams(files["streams"], sheet=args.sheet, columns=columns, fit_tolerance=args.fit_tolerance)
    costs = read_cost_settings(files.get("costs"), args.hours_per_year)
    utilities = ()
    if "utilities" in files:
        utilities = read_utilities(files["utilities"], sheet=args.utilities_sheet, process=streams,
                                   hours_per_year=price_hours(costs))
        costs = settle_currency(costs, utilities)
    column_notes: list[str] = []
    table = read_network(files["network"], sheet=args.network_sheet, notes=column_notes, strict=args.strict)
    for n in column_notes:
        note(args, f"note: {n} (ignored; --strict refuses unknown columns)")
    if "utilities" not in files:
        utilities, assumed = assumed_utilities(table, streams, dt_min)
        if assumed:
            note(args, f"note: {assumed}")
    network = ExistingNetwork.from_table(streams, table, utilities)
    rcosts = read_retrofit_costs(files["costs"]) if "costs" in files else None
    from ..retrofit.options import retrofit_options

    result = retrofit_options(network, dt_min, costs=costs, retrofit_costs=rcosts, budget=args.budget,
                              max_payback=args.max_payback, min_approach=args.min_approach,
                              max_changes=args.max_changes, default_film_coefficient=args.default_h,
                              max_groups=args.max_candidates,
                              **({"sizes": args.sizes} if args.sizes else {}),
                              solver=args.solver, time_limit=args.time_limit,
                              progress=None if (args.quiet or args.json) else lambda t: note(args, f"  {t}"))
    data = result.to_dict()
    data["source"] = {role: str(p) for role, p in files.items()}
    data["dtmin_note"] = dt_note
    data["safety_note"] = defaults.SAFETY_NOTE
    if out is not None:
        from ..io.retrofit_figures import grid_figures, savings_investment_figure

        out.json("retrofit.json", data)
        options, changes, sheets = _frames(result)
        out.csv("retrofit_options.csv", options)
        out.csv("retrofit_changes.csv", changes)
        out.workbook("retrofit.xlsx", sheets)
        best = result.best
        changed = set() if best is None else {c.unit for c in best.changes}
        first, second = grid_figures(result.simulation, None if best is None else best.simulation, streams,
                                     changed=changed, label="Option 1 (largest NPV)")
        out.figures("retrofit_grid_existing", first)
        if second is not None:
            out.figures("retrofit_grid_proposed", second)
        out.figures("retrofit_savings", savings_investment_figure(result))
    return finish(args, data, format_retrofit(result, str(args.network), dt_note), out)
