"""``heatloom scenarios``: targets (and optionally designs) over zones × price scenarios × ΔTmin."""

from __future__ import annotations

import argparse

from .. import defaults
from ..errors import InfeasibleError, InputError
from ..validation import check_dt_min
from .common import (
    ProgressBars,
    add_cost_target_options,
    add_output_options,
    add_site_table_options,
    check_cost_target_inputs,
    check_rules,
    finish,
    fmt,
    folder_tables,
    note,
    note_lines,
    number_list,
    positive,
    read_scenario_inputs,
)
from .console import Column, text_table
from .sweep import parse_range

__all__ = ["register", "run", "format_study", "parse_factors", "parse_span", "DEFAULT_STEP", "OUTPUT_FILES"]

DEFAULT_STEP = 5.0
"""ΔTmin step of a study's cases when none is given [K] (coarser than a sweep's: every case may carry a
MILP design; the optimum of each zone and scenario is still located to 0.01 K by its own sweep)."""

EPILOG = """\
examples:
  heatloom scenarios streams.csv --price-factors 0.5,1,1.5,2
  heatloom scenarios site_folder/ --utilities utilities.csv --prices prices.csv --dtmin 5:30 --step 2.5
  heatloom scenarios site.xlsx --price-factors 1,2 --designs --time-limit 20 --out study
  heatloom scenarios site_folder/ --prices prices.csv --utilities utilities.csv --cluster tcp://scheduler:8786

PATH is one stream table (one zone) or a site: a folder of '<zone>_streams.csv' files or a workbook with
one sheet per zone; all zones share the utility table and its prices.  A prices table has the columns
scenario, utility, cost (a price, units in the header as in the utility table) and/or factor (multiplies
the utility's price; a factor row with no utility scales every utility the scenario does not name):

  scenario,utility,cost [USD/MWh],factor
  gas spike,HP steam,45,
  gas spike,,,1.2

Cases run on a local process pool (one worker per core) unless --workers 1 (serially) or --cluster
(a Dask distributed scheduler; needs the optional extra heatloom[dask] here and heatloom on every worker).
"""


def parse_span(text: str) -> tuple[float, float]:
    """``"LO:HI"`` or one value ``"K"`` → (LO, HI) [K], for ``--dtmin`` (LO may equal HI).

    Examples
    --------
    >>> parse_span("5:40"), parse_span("10")
    ((5.0, 40.0), (10.0, 10.0))
    """
    if ":" not in str(text):
        try:
            x = check_dt_min(text, positive=True)
        except InputError as e:
            raise argparse.ArgumentTypeError(f"expected LO:HI or one ΔTmin, e.g. 5:40: {e.message}") from None
        return x, x
    parts = str(text).split(":")
    if len(parts) == 2 and parts[0].strip() and parts[0].strip() == parts[1].strip():
        return parse_span(parts[0])
    return parse_range(text)


def parse_factors(text: str) -> tuple[float, ...]:
    """``"0.5,1,2"`` → (0.5, 1.0, 2.0), for ``--price-factors``.

    Examples
    --------
    >>> parse_factors("0.8, 1, 1.25")
    (0.8, 1.0, 1.25)
    """
    return number_list(text, what="price factors", example="0.5,1,2", zero_allowed=True, unique=True)


def register(sub) -> None:
    p = sub.add_parser("scenarios", help="targets and optimum ΔTmin over zones × utility price scenarios",
                       description="Energy, area, unit and total annual cost targets for every zone × price "
                                   "scenario × ΔTmin, the optimum ΔTmin of every zone under every scenario, the "
                                   "site total per scenario, and optionally a designed network per case.",
                       epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("path", metavar="PATH",
                   help="one stream table, a folder of zone stream tables, or a workbook with one sheet per zone")
    p.add_argument("--dtmin", type=parse_span, default=None, metavar="LO:HI",
                   help=f"ΔTmin range [K], or one value (default {defaults.SWEEP_RANGE[0]:g}:{defaults.SWEEP_RANGE[1]:g})")
    p.add_argument("--step", type=positive, default=DEFAULT_STEP, metavar="K",
                   help=f"ΔTmin step of the cases [K] (default {DEFAULT_STEP:g})")
    p.add_argument("--utilities", metavar="FILE",
                   help="utility table shared by all zones (CSV or .xlsx): name,T_supply,T_target,cost,h")
    p.add_argument("--utilities-sheet", metavar="NAME", help="worksheet of the utility table")
    p.add_argument("--hours-per-year", type=positive, default=None, metavar="H",
                   help="operating hours per year [h/year], to read prices given per kWh or MWh")
    p.add_argument("--prices", metavar="FILE", help="price scenarios table (CSV or .xlsx), see below")
    p.add_argument("--price-factors", type=parse_factors, default=(), metavar="LIST",
                   help="also one scenario per factor on every utility price, e.g. 0.5,1,2")
    p.add_argument("--costs", metavar="FILE", help="cost laws and annualisation (JSON, YAML or .xlsx)")
    p.add_argument("--designs", action="store_true",
                   help="also design and cost a network for every feasible case (a MILP each: slow)")
    p.add_argument("--no-optimum", action="store_true",
                   help="skip locating the optimum ΔTmin of each zone and scenario")
    p.add_argument("--solver", choices=["highs", "cbc"], default=None,
                   help="MILP solver of the designs (default: HiGHS when installed, else CBC)")
    p.add_argument("--time-limit", type=positive, default=30.0, metavar="S",
                   help="time limit of each design MILP solve [s] (default 30)")
    add_cost_target_options(p)
    add_site_table_options(p)
    add_output_options(p)
    p.set_defaults(handler=run)


OUTPUT_FILES = ("scenarios.json", "scenario_cases.csv", "scenario_optima.csv", "scenarios.xlsx",
                "scenario_costs.png", "scenario_costs.svg")
"""Files written into --out."""


def format_study(study, source: str, range_note: str) -> str:
    """The human summary: the grid, the optimum of each zone and scenario, the site totals."""
    cur = study.currency
    lo, hi = study.dt_mins[0], study.dt_mins[-1]
    lines = [f"heatloom scenarios: {source}",
             f"  zones          {len(study.zones)}: {', '.join(study.zones[:8])}"
             + (f", ... ({len(study.zones) - 8} more)" if len(study.zones) > 8 else ""),
             f"  scenarios      {len(study.scenarios)}:"]
    for s in study.scenarios[:12]:
        lines.append(f"    {s.name}: {s.describe()}")
    if len(study.scenarios) > 12:
        lines.append(f"    ... {len(study.scenarios) - 12} more (see --json or --out)")
    lines.append(f"  ΔTmin          {lo:g} to {hi:g} K, {len(study.dt_mins)} values ({range_note})")
    lines.append(f"  cases          {len(study.cases):,}, run on {study.executor}")
    if study.optima:
        rows = []
        for o in study.optima[:40]:
            p = o.optimum
            if p is None:
                rows.append([o.zone, o.scenario, None, None, None, None, None, f"no feasible ΔTmin ({o.error})"])
                continue
            best = (f"{o.best_design.total_annual_cost:,.0f} at {o.best_design.dt_min:g} K"
                    if o.best_design is not None else None)
            rows.append([o.zone, o.scenario, p.dt_min, p.hot_utility, p.cold_utility, p.area, p.total_annual_cost,
                         best])
        columns = [Column("zone"), Column("scenario"), Column("ΔTmin", "[K]", ".2f"),
                   Column("hot util", "[kW]", ",.1f"), Column("cold util", "[kW]", ",.1f"),
                   Column("area", "[m²]", ",.1f"), Column("total", f"[{cur}/year]", ",.0f"),
                   Column("best design", f"[{cur}/year]")]
        if all(r[-1] is None for r in rows):
            columns, rows = columns[:-1], [r[:-1] for r in rows]
        lines += [""] + text_table(columns, rows)
        if len(study.optima) > 40:
            lines.append(f"  ... {len(study.optima) - 40} more (see --json or --out)")
    if study.totals and len(study.zones) > 1:
        lines += ["", "  site total at each zone's optimum:"]
        for t in study.totals:
            miss = f" ({len(t.missing)} zones without a feasible ΔTmin)" if t.missing else ""
            lines.append(f"    {t.scenario}: hot utility {fmt(t.hot_utility)}, cold utility {fmt(t.cold_utility)}, "
                         f"total annual cost {t.total_annual_cost:,.0f} {cur}/year{miss}")
    lines += note_lines([*study.notes, study.basis])
    return "\n".join(lines)


def run(args) -> int:
    from ..io.site import read_site
    from ..model.prices import price_factor_scenarios
    from ..studies.scenarios import scenario_study

    site = read_site(args.path, sheet_per_zone=not args.one_zone_workbook, columns=args.columns,
                     fit_tolerance=args.fit_tolerance)
    given = {"utilities": args.utilities, "prices": args.prices, "costs": args.costs}
    found = folder_tables(args.path, given)
    if found:
        note(args, "heatloom scenarios: from the folder, " + "; ".join(f"{role} {p.name}" for role, p in found.items())
             + " (give the option to use another file)")
    utilities, scenarios, costs, missing = read_scenario_inputs(
        site.zones, utilities=args.utilities or found.get("utilities"), utilities_sheet=args.utilities_sheet,
        prices=args.prices or found.get("prices"), costs=args.costs or found.get("costs"),
        hours_per_year=args.hours_per_year)
    scenarios = (*scenarios, *price_factor_scenarios(args.price_factors))
    rng, range_note = (args.dtmin, "given") if args.dtmin is not None else (defaults.SWEEP_RANGE, "default; set with --dtmin LO:HI")
    check_cost_target_inputs(missing, args.default_h, args.cluster)
    out = None
    if args.out:
        from ..io.export import OutputDirectory

        inputs = [*site.files, *(p for p in (*given.values(), *found.values()) if p)]
        out = OutputDirectory(args.out, inputs, force=args.force)
        out.check(OUTPUT_FILES)
    if missing:
        note(args, f"heatloom: film coefficient {args.default_h:g} kW/(m²·K) assumed for {len(missing)} streams or "
                   "utilities without one")
    if site.mains:
        note(args, "heatloom scenarios: the mains table is not used (each zone is targeted alone); see heatloom site")
    rules = site.zone_rules if args.designs else {}   # the designs keep each zone table's forbid/require
    for zone in site.zones:
        try:
            check_rules(rules.get(zone.name), zone.streams, utilities, rng[0])
        except InputError as exc:
            raise InputError(f"zone '{zone.name}' ({site.zone_sources[zone.name]}): {exc}") from None
    bars = ProgressBars("heatloom scenarios", enabled=not (args.quiet or args.json))
    try:
        study = scenario_study(site.zones, rng, utilities, scenarios, costs, step=args.step, designs=args.designs,
                               rules=rules,
                               optimum=not args.no_optimum, workers=args.workers, cluster=args.cluster,
                               default_film_coefficient=args.default_h, capital_basis=args.capital_basis,
                               solver=args.solver, design_time_limit=args.time_limit, progress=bars)
    finally:
        bars.close()
    if study.cases and not any(c.targets.feasible for c in study.cases):
        first = next((c.targets.note for c in study.cases if c.targets.note), "")
        raise InfeasibleError(f"none of the {len(study.cases)} cases (zones × price scenarios × ΔTmin) can be "
                              f"served by the utilities given{': ' + first if first else ''}")
    data = study.to_dict()
    data["source"] = str(args.path)
    data["zone_sources"] = site.zone_sources
    data["dtmin_source"] = range_note
    data["step"] = args.step
    if missing:
        data["notes"].append(f"film coefficient {args.default_h:g} kW/(m²·K) assumed for {', '.join(missing)}")
    data["notes"].append(defaults.SAFETY_NOTE)
    if out is not None:
        import pandas as pd

        from ..io.scenario_figures import scenario_cost_figure

        frames = study.frames()
        out.json("scenarios.json", data)
        out.csv("scenario_cases.csv", frames["cases"])
        out.csv("scenario_optima.csv", frames["optima"])
        frames["basis"] = pd.DataFrame({"note": [*data["notes"], study.basis]})
        out.workbook("scenarios.xlsx", frames)
        out.figures("scenario_costs", scenario_cost_figure(study))
    return finish(args, data, format_study(study, str(args.path), range_note), out)
