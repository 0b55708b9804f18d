"""``heatloom site``: site-wide targets over several zones and the steam mains they share."""

from __future__ import annotations

import argparse
from dataclasses import replace

from .. import defaults
from ..errors import InputError
from ..validation import check_dt_min
from .common import (
    add_output_options,
    add_site_table_options,
    dt_min_of,
    finish,
    fmt,
    note,
    note_lines,
    positive_or_zero,
)
from .console import Column, text_table

__all__ = ["register", "run", "format_site", "parse_zone_dt_min"]

EPILOG_SITE = """\
examples:
  heatloom site plant_site/ --mains plant_site/mains.csv --dtmin 10
  heatloom site plant_site.xlsx --dtmin 10 --zone-dtmin "tank farm=20" --json
  heatloom site case_studies/three_zone_site --out results

input: a folder with one stream table per zone, each file named '<zone>_streams.csv' (or .xlsx), or a
workbook with one sheet per zone; the mains table (name, T [°C], optional cost [money/(kW·year)] and
kind: steam or cooling) is given with --mains or found as a file or sheet whose name contains 'mains'.
"""

# no output name contains "streams" or "mains", so --out into the site folder never adds a zone or mains table
OUTPUT_NAMES = ("site.json", "site_zones.csv", "site_main_balance.csv", "site_zone_steam.csv",
                "site_profiles.csv", "site.xlsx")
FIGURE_NAMES = tuple(f"{n}.{e}" for n in ("site_profiles", "zone_profiles") for e in ("png", "svg"))


def register(sub) -> None:
    p = sub.add_parser("site", help="site-wide targets over several zones and shared steam mains",
                       description="Target each zone (process) alone, build the site source and sink profiles "
                                   "from the zones' grand composite curves with the pockets removed, and "
                                   "find the heat the zones can exchange through the steam mains, the "
                                   "remaining fuel and cooling, and the saving against zone-by-zone "
                                   "targeting.",
                       epilog=EPILOG_SITE, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("path", metavar="PATH",
                   help="folder of zone stream tables ('<zone>_streams.csv'), a workbook with one sheet per zone, "
                        "or one stream table")
    p.add_argument("--mains", metavar="FILE",
                   help="mains table (CSV or .xlsx): name, T [°C], optional cost [money/(kW·year)], kind")
    p.add_argument("--dtmin", type=positive_or_zero, default=None, metavar="K",
                   help=f"minimum approach temperature of every zone [K] (default {defaults.DT_MIN:g} K)")
    p.add_argument("--zone-dtmin", action="append", default=[], metavar="ZONE=K",
                   help="a zone's own ΔTmin [K]; repeat for several zones")
    p.add_argument("--site-dt", type=positive_or_zero, default=0.0, metavar="K",
                   help="extra temperature difference for raising and using steam [K] (default 0 K)")
    add_site_table_options(p)
    add_output_options(p)
    p.set_defaults(handler=run)


def parse_zone_dt_min(items: list[str], zones: list[str]) -> dict[str, float]:
    """``["A=15", "tank farm=20"]`` → ``{"A": 15.0, "tank farm": 20.0}``, checked against the zone names.

    Examples
    --------
    >>> parse_zone_dt_min(["east=15"], ["east", "west"])
    {'east': 15.0}
    """
    out: dict[str, float] = {}
    by_key = {z.casefold(): z for z in zones}
    for item in items:
        if "=" not in item:
            raise InputError(f"--zone-dtmin: expected ZONE=K, got {item!r}")
        name, value = item.rsplit("=", 1)
        zone = by_key.get(name.strip().casefold())
        if zone is None:
            raise InputError(f"--zone-dtmin: no zone named {name.strip()!r}; zones: {', '.join(zones)}")
        x = check_dt_min(value.strip(), f"--zone-dtmin: ΔTmin of zone '{zone}'")
        if zone in out:
            raise InputError(f"--zone-dtmin: zone '{zone}' is given twice")
        out[zone] = x
    return out


def format_site(site, source: str, dt_note: str, mains_source: str | None) -> str:
    """The human summary of a site run: one table of zones, one of mains, the saving."""
    lines = [f"heatloom site: {source}",
             f"  zones          {len(site.zones)}; mains {len(site.mains)}"
             + (f" ({mains_source})" if mains_source else " (none given: no heat exchanged between zones)"),
             f"  ΔTmin          {site.dt_min:g} K ({dt_note}); site ΔT for steam {site.dt_site:g} K",
             ""]
    kw = Column("", "[kW]", ",.1f")
    lines += text_table(
        [Column("zone"), Column("ΔTmin", "[K]", "g"), replace(kw, header="hot utility"),
         replace(kw, header="cold utility"), Column("pinch hot/cold", "[°C]", align=">"),
         replace(kw, header="above mains"), replace(kw, header="below mains")],
        [[z.name, z.dt_min, z.hot_utility, z.cold_utility,
          f"{z.targets.pinch.hot:g}/{z.targets.pinch.cold:g}" if z.targets.pinch is not None else "none",
          z.above_mains, z.below_mains] for z in site.zones])
    if site.mains:
        steam_rows = [b for b in site.mains if b.main.is_steam]
        if steam_rows:
            lines += [""] + text_table(
                [Column("steam main"), Column("T", "[°C]", "g"), replace(kw, header="raised"),
                 replace(kw, header="used"), replace(kw, header="recovered"), replace(kw, header="letdown in"),
                 replace(kw, header="boilers"), replace(kw, header="surplus")],
                [[b.main.name, b.main.temperature, b.raised, b.used, b.recovered, b.letdown_in, b.from_boilers,
                  b.surplus] for b in steam_rows])
        cooling = [b for b in site.mains if not b.main.is_steam]
        if cooling:
            lines += [""] + text_table(
                [Column("cooling main"), Column("T", "[°C]", "g"), replace(kw, header="site duty"),
                 replace(kw, header="zone by zone")],
                [[b.main.name, b.main.temperature, b.site_duty, b.zone_by_zone_duty] for b in cooling])
        steam = [b.main.name for b in steam_rows]
        if steam:
            lines += ["", "  net steam export per zone [kW] (+ could raise, − must take)"]
            lines += text_table(
                [Column("zone")] + [Column(n, spec="+,.1f") for n in steam],
                [[z.name] + [z.raised[n] - z.used[n] if (z.raised[n] or z.used[n]) else "-" for n in steam]
                 for z in site.zones])
    lines += ["",
              f"  site hot utility    {fmt(site.site_hot_utility):>14}   fuel above the mains "
              f"{fmt(site.fuel_above_mains)}, steam from boilers {fmt(site.boiler_steam)}",
              f"  site cold utility   {fmt(site.site_cold_utility):>14}",
              f"  zone by zone        {fmt(site.zone_by_zone_hot_utility):>14} hot, "
              f"{fmt(site.zone_by_zone_cold_utility)} cold",
              f"  saving              {fmt(site.saving):>14} of hot utility (and as much cooling)"]
    zbz = site.zone_by_zone_hot_utility
    if zbz > 0:
        lines[-1] += f", {100 * site.saving / zbz:.1f} %"
    if site.saving_money is not None:
        lines.append(f"  saving per year     {site.saving_money:>14,.0f} money (priced mains: site "
                     f"{site.site_cost:,.0f}, zone by zone {site.zone_by_zone_cost:,.0f})")
        if site.unpriced_mains:
            lines.append(f"                      mains without a price are left out: {', '.join(site.unpriced_mains)}")
    lines += note_lines(caution="Steam mains also need pressure ratings, relief and letdown design checked by them.")
    return "\n".join(lines)


def run(args) -> int:
    from ..io.site import read_site
    from ..model.site import Zone
    from ..pinch.site import site_targets

    dt_min, dt_note = dt_min_of(args)
    site_in = read_site(args.path, mains=args.mains, sheet_per_zone=not args.one_zone_workbook,
                        columns=args.columns, fit_tolerance=args.fit_tolerance)
    own = parse_zone_dt_min(args.zone_dtmin, [z.name for z in site_in.zones])
    zones = [Zone(z.name, z.streams, own.get(z.name)) for z in site_in.zones]
    if not site_in.mains:
        note(args, "heatloom site: no mains table given or found: each zone is targeted alone")
    out = None
    if args.out:
        from ..io.export import OutputDirectory

        out = OutputDirectory(args.out, site_in.files, force=args.force)
        out.check([*OUTPUT_NAMES, *FIGURE_NAMES])  # refuse before computing, so nothing is half written
    site = site_targets(zones, site_in.mains, dt_min, dt_site=args.site_dt)  # mains checked when read
    result = site.to_dict()
    result["dtmin_source"] = dt_note
    result["source"] = str(args.path)
    result["mains_source"] = site_in.mains_source
    result["zone_sources"] = site_in.zone_sources
    result["note"] = defaults.SAFETY_NOTE
    if out is not None:
        import matplotlib.pyplot as plt

        from ..io.site_figures import site_profiles_figure, zone_profiles_figure

        frames = site.frames()
        out.json("site.json", result)
        out.csv("site_zones.csv", frames["zones"])
        out.csv("site_main_balance.csv", frames["mains"])
        out.csv("site_zone_steam.csv", frames["zone mains"])
        out.csv("site_profiles.csv", frames["profiles"])
        out.workbook("site.xlsx", frames)
        for name, make in (("site_profiles", site_profiles_figure), ("zone_profiles", zone_profiles_figure)):
            fig = make(site)
            for ext in ("png", "svg"):
                out.figure(f"{name}.{ext}", fig)
            plt.close(fig)
    return finish(args, result, format_site(site, str(args.path), dt_note, site_in.mains_source), out)
