"""The site report: one self-contained HTML page and a workbook for a site of several zones and steam mains.

A :class:`SiteStudy` gathers a site run (:func:`heatloom.pinch.site.site_targets`) with its inputs and the
tables the ``site`` command writes (zones, mains, steam per zone, profiles).  :func:`render_site_report`
turns it into a page in the style of the study report (:func:`heatloom.io.report.render_report`), built
from the same blocks (:mod:`heatloom.io.html`: inline SVG figures, no script, well-formed XML, units in every
header), with these sections: summary, input data, assumptions, zone targets (each zone's grand composite
curve against the mains and its source and sink profiles), site profiles and steam mains,
price scenarios (when the folder holds a prices table), safety and limits, methods and references, about
this report.  :func:`site_sheets` gives the workbook's sheets.

The site targets are screening estimates: steam systems must be checked against local codes by qualified,
licensed engineers (the safety section says so).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

from .. import defaults
from ..studies.study import NotComputed
from .html import (
    Page,
    RenderedReport,
    about_table,
    assumptions_section,
    build_page,
    frame_table,
    long_table,
    methods_table,
    paragraph,
    safety_section,
)

__all__ = ["SiteStudy", "SITE_SHEETS", "site_methods", "render_site_report", "site_sheets"]

SITE_SHEETS = ("about", "summary", "zones", "mains", "zone steam", "profiles")
"""Sheets of a site workbook, in order (a price-scenario study adds its cases, optima, totals and scenarios)."""

_METHODS = (
    ("Problem table algorithm", "each zone's minimum utilities and pinch, at the zone's ΔTmin",
     "Linnhoff, B., Flower, J. R. (1978). Synthesis of heat exchanger networks: I. Systematic generation of "
     "energy optimal networks. AIChE Journal 24(4), 633-642. doi:10.1002/aic.690240411"),
    ("Total site profiles", "site source and sink profiles from the zones' grand composite curves with the "
     "pockets removed",
     "Dhole, V. R., Linnhoff, B. (1993). Total site targets for fuel, co-generation, emissions, and cooling. "
     "Computers & Chemical Engineering 17(5/6), S101-S109"),
    ("Site targets at the steam mains", "steam raised and used at each main, fuel and cooling of the site",
     "Klemeš, J., Dhole, V. R., Raissi, K., Perry, S. J., Puigjaner, L. (1997). Targeting and design "
     "methodology for reduction of fuel, power and CO2 on total sites. Applied Thermal Engineering 17(8-10), "
     "993-1003"),
    ("Cascade of the mains", "steam left over let down to the next colder main, shortfalls from boilers, "
     "cooling mains and prices", "heatloom's own formulation of the steps above (heatloom.pinch.site)"),
)


@dataclass(frozen=True, eq=False)
class SiteStudy:
    """A site run, for the site report and its workbook.

    Attributes
    ----------
    title : str
    site : heatloom.pinch.site.SiteTargets
    frames : dict
        Tables of the run by name (``summary``, ``zones``, ``mains``, ``zone mains``, ``profiles``), as
        :meth:`heatloom.pinch.SiteTargets.frames` makes them; units in the headers.
    dt_min_note : str
        How the site's ΔTmin was chosen.
    zone_sources : dict
        Zone name → file it was read from.
    mains_source : str or None
        File of the mains table; None when there is none.
    sources : dict
        Input role → file (for the record).
    notes : tuple of str
    safety_note : str
    created : str
    version : str
    command : str
    scenarios : heatloom.studies.scenarios.ScenarioStudy, NotComputed or None
        The price-scenario study of the zones when the folder holds a prices table (None when it does not).
    assumed : tuple of (str, str, str)
        Further assumptions of the run as (assumption, value with units, basis), e.g. the film coefficient
        assumed for the price scenarios (``--default-h``).
    """

    title: str
    site: object
    frames: Mapping[str, object]
    dt_min_note: str = "given"
    zone_sources: dict = field(default_factory=dict)
    mains_source: str | None = None
    sources: dict = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    safety_note: str = ""
    created: str = ""
    version: str = ""
    command: str = ""
    scenarios: object = None
    assumed: tuple[tuple[str, str, str], ...] = ()

    def assumption_rows(self) -> list[tuple[str, str, str]]:
        """(assumption, value with units, basis) of every assumption and default of the site run."""
        site = self.site
        own = [f"{z.name} {z.dt_min:g} K" for z in site.zones if z.dt_min != site.dt_min]
        rows = [("ΔTmin", f"{site.dt_min:g} K in every zone" + (f" (own values: {', '.join(own)})" if own else ""),
                 self.dt_min_note),
                ("site ΔT for steam", f"{site.dt_site:g} K more between a process stream and the steam it raises "
                 "or uses (on top of ΔTmin)", "given (--site-dt)" if site.dt_site else "default 0 K; set with "
                 "--site-dt")]
        if site.mains:
            for b in site.mains:
                m = b.main
                price = "not priced" if m.price is None else f"{m.price:g} money/(kW·year)"
                what = "saturation temperature" if m.is_steam else "highest temperature reached"
                rows.append((f"main: {m.name}", f"{m.kind.value}, {what} {m.temperature:g} °C, {price}",
                             f"given ({self.mains_source})" if self.mains_source else "given"))
        else:
            rows.append(("mains", "none: each zone is targeted alone", "no mains table given or found"))
        rows += [("pockets", "heat a zone recovers within itself stays in the zone (pockets of the grand composite "
                  "curve removed)", "method (Dhole & Linnhoff 1993)"),
                 ("letdown", "steam goes from a hotter main to a colder one only; steam left over below the "
                  "coldest main is not raised", "method (heatloom.pinch.site)"),
                 ("fuel above the mains", "hot utility needed above the hottest steam main; not priced here and "
                  "the same zone by zone and across the site", "method (heatloom.pinch.site)")]
        sc = self.scenarios
        if sc is not None and not isinstance(sc, NotComputed):
            rows.append(("price scenarios", "; ".join(f"{s.name}: {s.describe()}" for s in sc.scenarios),
                         "given (prices table)"))
            rows.append(("scenario ΔTmin values", f"{sc.dt_mins[0]:g} to {sc.dt_mins[-1]:g} K, {len(sc.dt_mins)} "
                         "values; each zone's optimum located between them", "report default (--sweep sets the "
                         "range)"))
            rows += [("scenario note", n, "scenario study") for n in sc.notes]
        rows += list(self.assumed)
        return rows

    def cautions(self) -> list[str]:
        """The cautions of the site run: the general one first."""
        out = [defaults.SAFETY_TEXT]
        if self.safety_note:
            out.append(self.safety_note)
        out += ["Steam mains also need pressure ratings, relief and letdown design checked by qualified, licensed "
                "engineers; saturation temperatures stand for pressures that the boilers, turbines and "
                "equipment of each zone must be rated for.",
                f"ΔTmin {self.site.dt_min:g} K and site ΔT {self.site.dt_site:g} K apply to every zone: check that "
                "they suit the fluids and the exchangers raising and using steam.",
                "The targets leave out distances between zones, piping and its heat losses, condensate return, "
                "superheat, and the start-up and upset cases in which one zone stops while another still needs "
                "its steam."]
        if self.site.unpriced_mains:
            out.append(f"Mains without a price are left out of the money saving: {', '.join(self.site.unpriced_mains)}.")
        return out


_SCENARIO_METHOD = (
    "Total annual cost targets against ΔTmin, per price scenario",
    "each zone's area, unit and cost targets and its optimum ΔTmin under every price scenario",
    "Linnhoff, B., Ahmad, S. (1990). Cost optimum heat exchanger networks - 1. Minimum energy and capital using "
    "simple models for capital cost. Computers & Chemical Engineering 14(7), 729-750; Townsend, D. W., "
    "Linnhoff, B. (1984). Surface area targets for heat exchanger networks. IChemE Annual Research Meeting, Bath")


def site_methods(study: SiteStudy) -> list[tuple[str, str, str]]:
    """(method, what it did in this run, reference) of every method the site run used."""
    out = list(_METHODS if study.site.mains else _METHODS[:1])
    if study.scenarios is not None and not isinstance(study.scenarios, NotComputed):
        out.append(_SCENARIO_METHOD)
    return out


# --------------------------------------------------------------------------------------------------
# sections


def _summary(study: SiteStudy, page: Page) -> str:
    site = study.site
    rows = [("zones", len(site.zones), "-"), ("steam and cooling mains", len(site.mains), "-"),
            ("zone-by-zone hot utility", site.zone_by_zone_hot_utility, "kW"),
            ("site hot utility", site.site_hot_utility, "kW"),
            ("saving of hot utility (and as much cooling)", site.saving, "kW")]
    if site.zone_by_zone_hot_utility > 0:
        rows.append(("saving against zone by zone", 100 * site.saving / site.zone_by_zone_hot_utility, "%"))
    rows += [("recovered between zones through the steam mains", site.recovered, "kW"),
             ("fuel above the mains", site.fuel_above_mains, "kW"), ("steam from boilers", site.boiler_steam, "kW"),
             ("site cold utility", site.site_cold_utility, "kW")]
    if site.saving_money is not None:
        rows.append(("saving per year (priced mains)", site.saving_money, "money/year"))
    intro = paragraph(f"Site of {len(site.zones)} zones and {len(site.mains)} mains at ΔTmin {site.dt_min:g} K "
                      f"({study.dt_min_note}). Every number below is a screening estimate; see “Safety and limits”.")
    return intro + long_table(rows, "Key results", "summary-table")


def _inputs(study: SiteStudy, page: Page) -> str:
    import pandas as pd

    site = study.site
    frame = pd.DataFrame([{"zone": z.name, "file": study.zone_sources.get(z.name, "given in code"),
                           "hot streams [-]": len(z.targets.streams.hot),
                           "cold streams [-]": len(z.targets.streams.cold)} for z in site.zones])
    parts = [paragraph("Each zone's stream table, converted to canonical units (°C, kW/K); the mains table gives "
                       "each main's temperature, kind and price."),
             frame_table(frame, "Zones as read", "zones-input-table")]
    mains = study.frames["mains"]
    if len(mains):
        parts.append(frame_table(mains[["main", "kind", "T [°C]", "price [money/(kW·year)]"]],
                                 f"Mains as read ({study.mains_source or 'given'})", "mains-input-table"))
    return "".join(parts)


def _zones(study: SiteStudy, page: Page) -> str:
    from .site_figures import zone_grand_composite_figure, zone_profiles_figure

    site = study.site
    shift = f"ΔTmin/2{' + site ΔT' if site.dt_site else ''}"
    return "".join([
        paragraph("Each zone targeted on its own at its ΔTmin: minimum hot and cold utility, pinch, and the heat "
                  "it needs above the hottest steam main and rejects below the coldest one."),
        frame_table(study.frames["zones"], "Targets of each zone", "zones-table"),
        page.figure("fig-zone-grand-composite", lambda: zone_grand_composite_figure(site),
                    "Grand composite curve of each zone (shifted temperature) against the mains: steam used at "
                    f"the main's temperature − {shift} (solid), steam raised and heat rejected at + {shift} "
                    "(dashed), stacked from the axis."),
        page.figure("fig-zone-profiles", lambda: zone_profiles_figure(site),
                    "Source (left of zero) and sink (right) profiles of each zone on the utility temperature "
                    "scale, with the mains.")])


def _mains(study: SiteStudy, page: Page) -> str:
    from .site_figures import site_profiles_figure

    site = study.site
    parts = [page.figure("fig-site-profiles", lambda: site_profiles_figure(site),
                         "Site source and sink profiles against utility temperature, with every main and the steam "
                         "raised and used there.")]
    if not site.mains:
        parts.append(paragraph("No mains were given: the zones exchange no heat and the site targets are the "
                               "zones' own."))
        return "".join(parts)
    parts += [frame_table(study.frames["mains"], "Balance of each main: steam raised by the zones, used by the "
                          "zones, let down, from boilers; duties zone by zone and across the site",
                          "mains-table"),
              frame_table(study.frames["zone mains"], "Steam of each zone at each main (net export: + the zone "
                          "could raise it, − the zone must take it)", "zone-steam-table")]
    rows = [("site hot utility", site.site_hot_utility, "kW"), ("zone-by-zone hot utility",
                                                                site.zone_by_zone_hot_utility, "kW"),
            ("site cold utility", site.site_cold_utility, "kW"),
            ("zone-by-zone cold utility", site.zone_by_zone_cold_utility, "kW"),
            ("saving", site.saving, "kW")]
    if site.saving_money is not None:
        rows += [("site cost of the priced mains", site.site_cost, "money/year"),
                 ("zone-by-zone cost of the priced mains", site.zone_by_zone_cost, "money/year"),
                 ("saving per year", site.saving_money, "money/year")]
    parts.append(long_table(rows, "Saving against zone-by-zone targeting", "saving-table"))
    return "".join(parts)


def _scenarios(study: SiteStudy, page: Page) -> str:
    from .scenario_figures import scenario_cost_figure

    sc = study.scenarios
    if isinstance(sc, NotComputed):
        return page.missing("Price scenarios", "the price-scenario study", sc.reason)
    frames = sc.frames()
    parts = [paragraph(f"Each zone's total annual cost target against ΔTmin under {len(sc.scenarios)} price "
                       f"scenarios ({len(sc.cases)} cases), the optimum ΔTmin of every zone under every scenario, "
                       "and the site total at those optima. Zones are targeted alone here (no heat through the "
                       "mains)."),
             page.figure("fig-scenario-costs", lambda: scenario_cost_figure(sc),
                         "Total annual cost target against ΔTmin for each zone, one line per price scenario; dots "
                         "mark each scenario's optimum."),
             frame_table(frames["optima"], "Optimum ΔTmin of each zone under each price scenario", "optima-table"),
             frame_table(frames["totals"], "Site total at each zone's optimum, per scenario", "totals-table")]
    return "".join(parts)


def _methods(study: SiteStudy, page: Page) -> str:
    return methods_table(site_methods(study), "Methods used")


def _about(study: SiteStudy, page: Page) -> str:
    return about_table(study, study.command)


def render_site_report(study: SiteStudy) -> RenderedReport:
    """The site run as one self-contained HTML page (see the module notes).

    Examples
    --------
    Two invented zones and one steam main:

    >>> from heatloom.model import StreamTable
    >>> from heatloom.model.site import SteamMain
    >>> from heatloom.pinch.site import site_targets
    >>> a = StreamTable.from_arrays(["H1", "C1"], [200, 40], [120, 100], [2.0, 1.0])
    >>> b = StreamTable.from_arrays(["H2", "C2"], [90, 130], [40, 170], [1.0, 2.0])
    >>> site = site_targets({"A": a, "B": b}, [SteamMain("LP", 140.0, 50.0)], 10.0)
    >>> r = render_site_report(SiteStudy("demo site", site, site.frames()))
    >>> r.figures, [k for k, _ in r.sections]
    (3, ['summary', 'inputs', 'assumptions', 'zones', 'mains', 'safety', 'methods', 'about'])
    """
    plan = [("summary", "Summary", _summary), ("inputs", "Input data", _inputs),
            ("assumptions", "Assumptions and defaults", assumptions_section), ("zones", "Targets of each zone", _zones),
            ("mains", "Site profiles, steam mains and saving", _mains)]
    if study.scenarios is not None:
        plan.append(("scenarios", "Price scenarios", _scenarios))
    plan += [("safety", "Safety and limits", safety_section), ("methods", "Methods and references", _methods),
             ("about", "About this report", _about)]
    return build_page(study, plan, Page(), lede="Site study")


def site_sheets(study: SiteStudy) -> dict:
    """The site run's tables as frames, one per workbook sheet (see :data:`SITE_SHEETS`)."""
    import pandas as pd

    about = [("title", study.title, ""), ("made by", f"heatloom {study.version}", ""),
             ("made on", study.created, "")]
    about += [(f"input: {role}", path, "") for role, path in study.sources.items()]
    about += [(f"assumption: {k}", v, b) for k, v, b in study.assumption_rows()]
    about += [("caution", text, "") for text in study.cautions()]
    about += [("method", f"{m}: {w}", r) for m, w, r in site_methods(study)]
    f = study.frames
    sheets = {"about": pd.DataFrame(about, columns=["item", "value", "note"]), "summary": f["summary"],
              "zones": f["zones"], "mains": f["mains"], "zone steam": f["zone mains"], "profiles": f["profiles"]}
    sc = study.scenarios
    if isinstance(sc, NotComputed):
        sheets["scenarios"] = pd.DataFrame({"not computed": [sc.reason]})
    elif sc is not None:
        frames = sc.frames()
        sheets.update({"scenario cases": frames["cases"], "scenario optima": frames["optima"],
                       "scenario totals": frames["totals"], "scenarios": frames["scenarios"]})
    return sheets
