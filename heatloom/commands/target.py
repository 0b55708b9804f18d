"""``heatloom target``: energy targets, pinch, composite curves, utility levels."""

from __future__ import annotations

import argparse

from ..errors import InputError
from .common import add_shared, add_table_options, dt_min_of, finish, fmt, note_lines, read_inputs
from .console import Column, text_table

__all__ = ["register", "run", "format_targets", "PLOT_FILES"]

PLOT_FILES = ("composite_curves", "shifted_composite_curves", "grand_composite_curve", "balanced_composite_curves",
              "driving_force")
"""Figures written into --out with --plot (each as PNG and SVG)."""

EPILOG_TARGET = """\
examples:
  heatloom target streams.csv --dtmin 10
  heatloom target plant.xlsx --sheet "Stream data" --dtmin 15 --utilities utilities.csv
  heatloom target export.csv --columns "Line=name,Inlet=T_supply,Outlet=T_target,Wcp=CP" --json
  heatloom target streams.csv --out results --plot

input: a CSV or .xlsx table with columns name, T_supply, T_target, CP (°C and kW/K unless the header
says otherwise, e.g. "T_supply [degF]", "CP [MW/K]"); optional h [kW/m2K], dT_min_contrib [K], duty [kW].
"""



def register(sub) -> None:
    p = sub.add_parser("target", help="energy targets, pinch, composite curves, utility levels",
                       description="Minimum hot and cold utility, pinch and heat recovery of a stream table "
                                   "(problem table algorithm), with composite and grand composite curves "
                                   "and the duties of several utility levels.",
                       epilog=EPILOG_TARGET, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", metavar="FILE", help="stream table: CSV or .xlsx")
    add_shared(p)
    add_table_options(p)
    p.add_argument("--plot", action="store_true",
                   help="write figures (PNG and SVG) into --out: composite, shifted composite, grand composite and "
                        "balanced composite curves (utilities included) and the driving-force plot (ΔT between "
                        "the composites against heat flow)")
    p.set_defaults(handler=run)


def _area_targets(targets):
    """Area, units and shells targets when every stream and utility in use has a film coefficient, else
    (None, why not)."""
    from ..errors import TemperatureCrossError
    from ..pinch.area import area_targets, missing_film_coefficients, target_utilities

    missing = missing_film_coefficients(targets.streams, [u for u, _ in target_utilities(targets)])
    if missing:
        return None, (f"area, units and shells targets omitted: film coefficient h missing for "
                      f"{', '.join(missing)} (add an h column in kW/(m²·K))")
    try:
        return area_targets(targets), None
    except TemperatureCrossError as e:
        return None, f"area, units and shells targets omitted: {e.message}"


def format_targets(targets, source: str, dt_min_note: str, area=None, area_note: str | None = None) -> str:
    """The human summary of a targeting run (a few lines and one table)."""
    s = targets.streams
    n_seg = sum(len(x.segments) for x in s)
    lines = [f"heatloom target: {source}",
             f"  streams        {len(s.hot)} hot, {len(s.cold)} cold ({n_seg} segments)",
             f"  ΔTmin          {targets.dt_min:g} K ({dt_min_note})"]
    own = sum(1 for x in s for g in x.segments if g.dt_min_contribution is not None)
    if own:
        lines.append(f"                 {own} segments use their own ΔTmin contribution")
    lines += [f"  hot utility    {fmt(targets.hot_utility):>14}   minimum",
              f"  cold utility   {fmt(targets.cold_utility):>14}   minimum",
              f"  heat recovery  {fmt(targets.heat_recovery):>14}   of {fmt(targets.hot_process_duty)} "
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
    if area is not None:
        lines.append(f"  area           {area.area:>14,.1f} m²  minimum (Townsend–Linnhoff, vertical transfer)")
        lines.append(f"  units          {area.units:>14d}     minimum overall (N − 1); {area.units_mer} for maximum "
                     "energy recovery (per pinch side)")
        lines.append(f"  shells         {area.shells:>14d}     minimum 1-2 shells (Ahmad & Smith, X_P criterion)")
    elif area_note:
        lines.append(f"  note: {area_note}")
    if targets.placement is None:
        lines.append("  utilities      none given: ideal utilities assumed (hotter and colder than every "
                     "process temperature); give --utilities FILE to place real levels")
    else:
        lines.append("  utility levels (cheapest placement against the grand composite curve):")
        from ..io.export import placement_currency

        cur = placement_currency(targets)
        lines += text_table([Column("name"), Column("kind"), Column("T_supply", "[°C]", "g"),
                             Column("T_target", "[°C]", "g"), Column("duty", "[kW]", ",.1f"),
                             Column("cost", f"[{cur}/year]", ",.0f")],
                            [[d.utility.name, d.utility.kind.value, d.utility.supply_temperature,
                              d.utility.target_temperature, d.duty, d.annual_cost]
                             for d in targets.placement.duties], indent="    ")
        for t in targets.placement.utility_pinches:
            lines.append(f"    utility pinch at {t:g} °C shifted")
    lines += note_lines()
    return "\n".join(lines)


def run(args) -> int:
    from ..pinch import target

    if args.plot and not args.out:
        raise InputError("--plot writes figures into a folder: add --out DIR (e.g. --out results)")
    streams, utilities, _ = read_inputs(args)
    dt_min, dt_note = dt_min_of(args)
    out = None
    if args.out:
        from ..io.export import OutputDirectory

        out = OutputDirectory(args.out, [p for p in (args.file, args.utilities) if p], force=args.force)
        names = ["targets.json", "stream_table.csv", "problem_table.csv", "targets.xlsx"]
        if args.plot:
            names += [f"{n}.{e}" for n in PLOT_FILES for e in ("png", "svg")]
        out.check(names)  # refuse before computing anything, so nothing is half written
    t = target(streams, dt_min, utilities)
    result = t.to_dict()
    result["dtmin_source"] = dt_note
    result["source"] = str(args.file)
    area, area_note = _area_targets(t)
    if area is not None:
        result.update(area=area.area, units=area.units, units_mer=area.units_mer, shells=area.shells)
    if out is not None:
        from ..io.export import targets_workbook_sheets

        out.json("targets.json", result)
        out.csv("stream_table.csv", streams.to_frame())
        out.csv("problem_table.csv", t.table.to_frame())
        out.workbook("targets.xlsx", targets_workbook_sheets(t, area, area_note))
        if args.plot:
            from ..io.figures import (
                balanced_composite_figure,
                composite_figure,
                driving_force_figure,
                grand_composite_figure,
            )

            out.figures("composite_curves", composite_figure(t))
            out.figures("shifted_composite_curves", composite_figure(t, shifted=True))
            out.figures("grand_composite_curve", grand_composite_figure(t))
            out.figures("balanced_composite_curves", balanced_composite_figure(t))
            out.figures("driving_force", driving_force_figure(t))
    return finish(args, result, format_targets(t, str(args.file), dt_note, area, area_note), out)
