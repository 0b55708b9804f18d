"""``heatloom design``: a new network, sized and costed."""

from __future__ import annotations

import argparse

from .. import defaults
from .common import (
    ProgressBars,
    add_shared,
    add_table_options,
    dt_min_of,
    finish,
    fmt,
    match_rules,
    note_lines,
    positive,
    read_inputs,
    solves_summary,
    whole_number,
)
from .console import Column, text_table

__all__ = ["EXCHANGER_TYPES", "register", "run", "format_network", "format_evolution"]

EPILOG_DESIGN = """\
examples:
  heatloom design streams.csv --dtmin 10
  heatloom design streams.csv --dtmin 10 --utilities utilities.csv --costs costs.json --out results
  heatloom design table.csv --dtmin 20 --default-h 0.5 --json
  heatloom design streams.csv --mode tac --utilities utilities.csv --costs costs.json --time-limit 300
  heatloom design streams.csv --mode tac --emat 2 --seed 7 --starts 2 --rounds 40 --json
  heatloom design streams.csv --mode tac --utilities utilities.csv --time-limit 300 --restructure
  heatloom design streams.csv --mode tac --utilities utilities.csv --restructure --branch-overshoot
  heatloom design streams.csv --dtmin 10 --min-duty 50 --min-area 5
  heatloom design streams.csv --dtmin 10 --forbid H1:C2 --forbid H2:steam --require H3:C1
  heatloom design streams.csv --mode tac --utilities utilities.csv --forbid H1:C2 --require H3:C1

--mode tac searches for the lowest total annual cost: no ΔTmin, only the exchanger minimum approach
temperature (--emat, default 1 K) at both ends of every unit; --time-limit bounds the whole run, and the
same --seed, --starts and --rounds give the same network when the time limit is not reached.

--min-duty and --min-area evolve the design: units below them are removed by shifting their load around a
heat-load loop or along a path from a hot to a cold utility, and ΔTmin (EMAT) is restored by path
relaxation (Linnhoff & Hindmarsh 1983); every step is printed with its energy penalty.

--forbid and --require take HOT:COLD, a hot stream or hot utility and a cold stream or cold utility as named
in the stream and utility tables (repeat the option for more pairs). A stream table may also carry the
columns 'forbid' and 'require', listing for each stream the names it may not or must be matched with,
separated by ';'; both sources are merged. Both modes keep them: --mode tac never tries a topology with a
forbidden match and keeps only those with every required one (the notes give each required match's duty).

Areas need a film coefficient h for every stream and utility (column h, kW/(m²·K)); --default-h assumes
one where it is missing, and the output says so.
"""

EXCHANGER_TYPES = {"counter-current": "counter_current", "shell-and-tube": "shell_and_tube_1_2",
                   "double-pipe": "double_pipe"}
"""Values of ``--exchanger-type`` → the value of their :class:`heatloom.model.ExchangerType`; the design
refuses a kind without a geometry other than counter-current (see :func:`heatloom.network.design_mer`)."""


def register(sub) -> None:
    p = sub.add_parser("design", help="a new network: maximum energy recovery with the fewest units",
                       description="Design a heat-exchanger network that reaches the energy targets with the "
                                   "fewest units (transshipment LP, minimum-matches MILP per pinch subnetwork, "
                                   "then placement with temperatures and splits), then size and cost it.",
                       epilog=EPILOG_DESIGN, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="stream table: CSV or .xlsx (film coefficients in column h)")
    add_shared(p)
    add_table_options(p)
    p.add_argument("--mode", choices=["mer", "tac"], default="mer",
                   help="mer: maximum energy recovery with the fewest units (default); tac: lowest total "
                        "annual cost (stagewise MILP topologies refined against the exact cost)")
    p.add_argument("--costs", metavar="FILE", help="cost laws and annualisation (JSON, YAML or .xlsx)")
    p.add_argument("--default-h", type=positive, metavar="H",
                   help="film coefficient [kW/(m²·K)] assumed for streams and utilities without one")
    p.add_argument("--solver", choices=["highs", "cbc"], default=None,
                   help="MILP solver (default: HiGHS when installed, else CBC)")
    p.add_argument("--time-limit", type=positive, default=None, metavar="S",
                   help="wall-clock budget of the whole run [s], shared by its solves (mer: default 60 s; "
                        "tac: default 120 s)")
    geo = p.add_argument_group("geometry (--mode mer)")
    geo.add_argument("--exchanger-type", choices=list(EXCHANGER_TYPES),
                     default="counter-current",
                     help="report every unit as this type: 1-2 shell-and-tube (shells by the X_P criterion, F, "
                          "cost per shell) or double-pipe hairpins (default: counter-current area only)")
    geo.add_argument("--tube-diameter", type=positive, metavar="M",
                     help="double-pipe: diameter of the inner tube the area refers to [m]")
    geo.add_argument("--hairpin-length", type=positive, metavar="M",
                     help="double-pipe: length of one leg of a hairpin [m]")
    rules = p.add_argument_group("matches and evolution")
    rules.add_argument("--forbid", action="append", default=[], metavar="HOT:COLD",
                       help="a match the design may not use (repeatable)")
    rules.add_argument("--require", action="append", default=[], metavar="HOT:COLD",
                       help="a match the design must use (repeatable)")
    rules.add_argument("--min-duty", type=positive, default=None, metavar="KW",
                       help="remove units of a smaller duty [kW] by loop breaking and path relaxation")
    rules.add_argument("--min-area", type=positive, default=None, metavar="M2",
                       help="remove units of a smaller area [m²] by loop breaking and path relaxation")
    rules.add_argument("--break-loops", action="store_true",
                       help="also remove the smallest unit of every heat-load loop while one can go (fewer units, "
                            "each step's energy penalty printed)")
    p.add_argument("--least-utility-flow", action="store_true",
                   help=f"mer, above {defaults.TICK_OFF_ABOVE} streams: keep hot oil and cooling water at the "
                        "least flow of their energy targets, returned at their design temperatures (by default a "
                        "region may be fed from a supply header, each unit returning the utility at its own "
                        "temperature; the notes say so)")
    tac = p.add_argument_group("--mode tac")
    tac.add_argument("--emat", type=positive, default=None, metavar="K",
                     help=f"exchanger minimum approach temperature at both ends of every unit [K] "
                          f"(default {defaults.EMAT:g} K)")
    tac.add_argument("--seed", type=int, default=0, metavar="N", help="seed of the search (default 0)")
    tac.add_argument("--starts", type=whole_number(1), default=2, metavar="N",
                     help="independent searches run side by side on local processes (default 2)")
    tac.add_argument("--rounds", type=whole_number(0), default=40, metavar="N",
                     help="kicks of the iterated local search per start (default 40)")
    tac.add_argument("--restructure", action="store_true",
                     help=f"give the last {defaults.RESTRUCTURE_SHARE * 100:g}%% of the time limit to a search "
                          "beyond the stagewise form: units moved along their streams, a heater or cooler onto a "
                          f"split branch beside an exchanger (up to {defaults.RESTRUCTURE_STREAMS} streams of one "
                          "segment each; kept only when cheaper)")
    tac.add_argument("--branch-overshoot", action="store_true",
                     help="let the branches of a split stream pass the stream's target temperature before they "
                          "mix back to it (a cold branch hotter than its target, a hot branch colder); off by "
                          "default, every branch stays inside its stream's range; the notes name each branch "
                          "that passes its target")
    p.set_defaults(handler=run)


def unit_lines(net, *, sized: bool = True) -> list[str]:
    """The units table of a network's summary: name, sides, duty, temperatures, split, U, LMTD, the geometry
    (F, shells and area per shell of 1-2 shells; hairpins of double pipes; left out when no unit has them),
    area and cost, each column as wide as its widest cell (areas and costs shown as "-" when not ``sized``)."""
    rows = []
    for u in (*net.exchangers, *net.heaters, *net.coolers):
        hot, cold = u.sides
        hi, ho, ci, co = u.terminals
        hot_t, cold_t = f"{hi:.1f}→{ho:.1f}", f"{ci:.1f}→{co:.1f}"
        fh, fc = getattr(u, "hot_fraction", 1.0), getattr(u, "cold_fraction", 1.0)
        split = f"{fh:.2f}/{fc:.2f}" if (fh < 0.9995 or fc < 0.9995) else "-"
        shells = u.shells if u.f_factor is not None else None        # 1-2 shells (a double pipe has none)
        per_shell = u.area / shells if (sized and u.area is not None and shells) else None
        rows.append([u.name, hot, cold, u.duty, hot_t, cold_t, split, u.u, u.lmtd, u.f_factor, shells,
                     per_shell, (u.geometry or {}).get("hairpins"), u.area if sized else None,
                     u.cost if sized else None])
    cur = net.currency or "money"
    columns = [Column("unit"), Column("hot side"), Column("cold side"), Column("duty", "[kW]", ",.1f"),
               Column("hot in→out", "[°C]", align=">"), Column("cold in→out", "[°C]", align=">"),
               Column("split h/c", "[-]", align=">"), Column("U", "[kW/(m²·K)]", ".3f"), Column("LMTD", "[K]", ".1f"),
               Column("F", "[-]", ".3f"), Column("shells", "[-]", "d"), Column("area/shell", "[m²]", ",.1f"),
               Column("hairpins", "[-]", "d"), Column("area", "[m²]", ",.1f"), Column("cost", f"[{cur}/year]", ",.0f")]
    # the geometry columns of a kind the network does not use (F, shells, hairpins of counter-current units)
    keep = [k for k, c in enumerate(columns)
            if c.header not in ("F", "shells", "area/shell", "hairpins") or any(r[k] is not None for r in rows)]
    return text_table([columns[k] for k in keep], [[r[k] for k in keep] for r in rows])


def format_network(net, source: str, dt_note: str, approach: str = "ΔTmin") -> str:
    """The human summary of a design: one line per unit (name, sides, duty, temperatures, split, U, LMTD, F,
    shells, area, cost), then the costs."""
    cur = net.currency or "money"
    lines = [f"heatloom design: {source}",
             f"  {approach} {net.dt_min:g} K ({dt_note}); {net.units} units"
             + (f" (minimum-units target {net.unit_target})" if net.unit_target is not None else ""),
             f"  hot utility {fmt(net.hot_utility)}, cold utility {fmt(net.cold_utility)}, "
             f"heat recovery {fmt(net.heat_recovery)}",
             ""]

    lines += unit_lines(net)
    lines += ["",
              f"  capital (annualised)  {net.capital_cost:>14,.0f} {cur}/year",
              f"  utilities             {net.operating_cost:>14,.0f} {cur}/year",
              f"  total annual cost     {net.total_annual_cost:>14,.0f} {cur}/year"]
    lines.append("  " + solves_summary(net.solves))
    lines += note_lines(net.notes)
    return "\n".join(lines)


def format_evolution(evolution) -> str:
    """The evolution steps of a design, one per removed unit, with their energy penalties."""
    lines = ["", f"  evolution: {evolution.original.units} → {evolution.network.units} units, energy penalty "
                 f"+{fmt(evolution.hot_penalty)} hot, +{fmt(evolution.cold_penalty)} cold utility"]
    for k, step in enumerate(evolution.steps, 1):
        lines.append(f"  {k:>3}. {step.describe()}")
    if not evolution.steps:
        lines.append("       no unit could be removed keeping the approach in every unit")
    lines += [f"       - {n}" for n in evolution.notes]
    return "\n".join(lines)


def run(args) -> int:
    from ..errors import InputError

    tac = args.mode == "tac"
    if tac and args.dtmin is not None:
        raise InputError("--dtmin does not apply to --mode tac: the TAC design has no ΔTmin, only the exchanger "
                         "minimum approach (give --emat K)")
    if not tac and args.emat is not None:
        raise InputError("--emat applies to --mode tac only (--mode mer uses --dtmin)")
    for flag, given in (("--restructure", args.restructure), ("--branch-overshoot", args.branch_overshoot)):
        if not tac and given:
            raise InputError(f"{flag} applies to --mode tac only (the MER design mixes split branches at one "
                             "temperature)")
    if tac and args.exchanger_type != "counter-current":
        raise InputError(f"--exchanger-type {args.exchanger_type} applies to --mode mer only: the TAC design sizes "
                         "counter-current units")
    if tac and args.least_utility_flow:
        raise InputError("--least-utility-flow applies to --mode mer only: the TAC design always takes a utility "
                         "over its whole range")
    streams, utilities, costs = read_inputs(args)
    if tac:
        dt_min, dt_note = (defaults.EMAT, "EMAT default for --mode tac; set with --emat") if args.emat is None \
            else (args.emat, "EMAT given")
    else:
        dt_min, dt_note = dt_min_of(args)
    out = None
    if args.out:
        from ..io.export import OutputDirectory

        out = OutputDirectory(args.out, [p for p in (args.file, args.utilities, args.costs) if p],
                              force=args.force)
        out.check(["design.json", "design_units.csv", "design.xlsx", "grid_diagram.png", "grid_diagram.svg"])
    rules = match_rules(args, streams, utilities, dt_min)
    extra = {"forbidden": list(rules.forbidden), "required": list(rules.required)} if rules else {}
    if tac:
        from .. import defaults as network_data
        from ..network.tac.search import design_tac

        currency = costs.currency if costs is not None else network_data.CURRENCY
        bar = ProgressBars("heatloom design --mode tac", not (args.quiet or args.json), unit="epoch",
                           describe_best=lambda best: f"best TAC {best:,.0f} {currency}/year")
        try:
            net = design_tac(streams, utilities, costs=costs, emat=dt_min,
                             time_limit=args.time_limit or defaults.TAC_TIME_LIMIT, seed=args.seed, starts=args.starts,
                             rounds=args.rounds, solver=args.solver, default_film_coefficient=args.default_h,
                             progress=bar.best, restructure=args.restructure,
                             branch_overshoot=args.branch_overshoot, **extra)
        finally:
            bar.close()
    else:
        from ..model import ExchangerType
        from ..network import design_mer

        kind = ExchangerType(EXCHANGER_TYPES[args.exchanger_type])
        net = design_mer(streams, dt_min, utilities, costs=costs, solver=args.solver,
                         time_limit=args.time_limit or 60.0, default_film_coefficient=args.default_h,
                         exchanger_type=kind, tube_diameter=args.tube_diameter,
                         hairpin_length=args.hairpin_length, least_utility_flow=args.least_utility_flow, **extra)
    evolution = None
    if args.min_duty is not None or args.min_area is not None or args.break_loops:
        from ..network.evolution import evolve

        geometry = {} if tac else {"exchanger_type": kind, "geometry_options": {
            "tube_diameter": args.tube_diameter, "hairpin_length": args.hairpin_length}}
        evolution = evolve(net, streams, utilities, dt_min, min_duty=args.min_duty, min_area=args.min_area,
                           break_loops=args.break_loops, costs=costs, default_film_coefficient=args.default_h,
                           required=rules.required, **geometry)
        net = evolution.network
    from ..network.streamorder import unordered_streams

    unordered = unordered_streams(net)
    if unordered:
        net = net.with_costs(notes=net.notes + (
            f"the order of the split units on {', '.join(unordered)} does not follow from their temperatures (a "
            "bypass, or branches that meet at no common temperature): the units table writes them by stage, "
            "and a retrofit study may refuse it",))
    result = net.to_dict()
    if evolution is not None:
        result["evolution"] = evolution.to_dict()
    if rules:
        result["matches"] = rules.to_dict()
    result["source"] = str(args.file)
    result["mode"] = args.mode
    if tac:
        result["emat"] = dt_min
        result["seed"] = args.seed
        result["starts"] = args.starts
        result["rounds"] = args.rounds
    if out is not None:
        from ..io.grid_figures import grid_diagram

        out.json("design.json", result)
        frame = net.to_frame()
        out.csv("design_units.csv", frame)
        out.workbook("design.xlsx", {"units": frame, "streams": streams.to_frame()})
        out.figures("grid_diagram", grid_diagram(net, streams, approach="EMAT" if tac else "ΔTmin"))
    summary = format_network(net, str(args.file), dt_note, "EMAT" if tac else "ΔTmin")
    if evolution is not None:
        summary += format_evolution(evolution)
    return finish(args, result, summary, out)


