"""The study report: one self-contained HTML page with every result, figure, assumption and caution.

A :class:`heatloom.studies.study.Study` gathers what a study run computed (targets, area and cost
targets, the ΔTmin sweep, the designed networks, the diagnosis of an existing network and its retrofit
options), each result or a :class:`~heatloom.studies.study.NotComputed` that says why it is missing.
:func:`render_report` turns it into HTML, with the page building blocks of :mod:`heatloom.io.html`:

* one file, no script, no external file, font or style sheet: figures are matplotlib figures rendered to
  SVG (text as paths) and written inline, tables are HTML tables with the unit of every column in its
  header, and the style sheet sits in the page;
* well-formed XML throughout (void elements closed, everything escaped), so the page and every figure
  parse with an XML parser as well as in a browser;
* sections in a fixed order: summary, input data, assumptions and defaults, energy targets, cost targets
  against ΔTmin, the maximum-energy-recovery network, the network of lowest total annual cost, the existing
  network and its retrofit options (when one was given), safety and limits, methods and references, about
  this report.  A result that was not computed keeps its section, which says plainly what is missing and
  why: no number is shown that was not computed.

Numbers are shown with the digits of :func:`heatloom.io.formats.number_formats` (the workbook
:mod:`heatloom.io.workbook` uses the same), and every number cell carries its full value in a
``data-value`` attribute.

The report is a screening study: its designs must be checked against local codes and standards by
qualified, licensed engineers (the safety section says so).
"""

from __future__ import annotations

from ..studies.study import NotComputed, Study
from .html import (
    Page,
    RenderedReport,
    about_table,
    assumptions_section,
    build_page,
    escape,
    frame_table,
    long_table,
    methods_table,
    notes_list,
    paragraph,
    safety_section,
)

__all__ = ["methods_used", "render_report"]

# --------------------------------------------------------------------------------------------------
# methods


_REFERENCES = {
    "pta": ("Problem table algorithm", "minimum utilities and pinch",
            "Linnhoff, B., Flower, J. R. (1978). Synthesis of heat exchanger networks: I. Systematic generation of "
            "energy optimal networks. AIChE Journal 24(4), 633-642. doi:10.1002/aic.690240411"),
    "curves": ("Composite, grand composite and balanced composite curves; driving-force plot",
               "the figures of the energy targets",
               "Hohmann (1971); Linnhoff, B. et al. (1982). User Guide on Process Integration for the Efficient "
               "Use of Energy, IChemE, ch. 2 (as cited in heatloom.pinch.curves); Kemp, I. C. (2007). Pinch "
               "Analysis and Process Integration, 2nd ed., Butterworth-Heinemann (balanced composites and the "
               "driving-force plot; chapter not checked)"),
    "placement": ("Utility placement by the transshipment model of Papoulias–Grossmann",
                  "duties of the utility levels against the grand composite curve (linear programme)",
                  "Papoulias, S. A., Grossmann, I. E. (1983). A structural optimization approach in process "
                  "synthesis II: Heat recovery networks. Computers & Chemical Engineering 7(6), 707-721. "
                  "doi:10.1016/0098-1354(83)85023-6"),
    "area": ("Townsend–Linnhoff area target (Bath formula)",
             "minimum area of vertical heat transfer between the balanced composite curves",
             "Townsend, D. W., Linnhoff, B. (1984). Surface area targets for heat exchanger networks. IChemE 11th "
             "Annual Research Meeting, Bath"),
    "units": ("Minimum units (Euler's network theorem, N − 1)", "units target, overall and per pinch side",
              "Linnhoff, B., Mason, D. R., Wardle, I. (1979). Understanding heat exchanger networks. Computers & "
              "Chemical Engineering 3, 295-302"),
    "shells": ("Minimum 1-2 shells (Ahmad & Smith, X_P criterion of Ahmad, Linnhoff & Smith)", "shells target",
               "Ahmad, S., Smith, R. (1989). Chemical Engineering Research and Design 67, 481-494; Ahmad, S., "
               "Linnhoff, B., Smith, R. (1988). Journal of Heat Transfer 110(2), 304-309"),
    "capital": ("Capital and total annual cost targets before design",
                "cost targets and their optimum against ΔTmin",
                "Linnhoff, B., Ahmad, S. (1990). Cost optimum heat exchanger networks - 1. Computers & Chemical "
                "Engineering 14(7), 729-750. doi:10.1016/0098-1354(90)87083-2"),
    "brent": ("Bounded scalar minimisation", "the ΔTmin of lowest total annual cost target between breakpoints",
              "Brent, R. P. (1973). Algorithms for Minimization without Derivatives, ch. 5"),
    "transshipment": ("Papoulias–Grossmann transshipment LP and minimum-matches MILP",
                      "the fewest matches and their heat loads, per pinch subnetwork",
                      "Papoulias, S. A., Grossmann, I. E. (1983), as above; heat-load distribution after Floudas, "
                      "C. A., Ciric, A. R., Grossmann, I. E. (1986). AIChE Journal 32(2), 276-290"),
    "pdm": ("Pinch decomposition (no heat across the pinch)", "the design split into subnetworks at the pinch",
            "Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical "
            "Engineering Science 38(5), 745-763"),
    "stagewise": ("Yee–Grossmann stagewise superstructure",
                  "placing the matches with temperatures and stream splits (restricted to the planned matches)",
                  "Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II. "
                  "Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184. "
                  "doi:10.1016/0098-1354(90)85010-8"),
    "tac": ("Yee–Grossmann stagewise MILP with exact-cost refinement",
            "topologies of low total annual cost, loads and temperatures refined against the exact cost (SLSQP), "
            "iterated local search over topologies",
            "Yee, T. F., Grossmann, I. E. (1990), as above"),
    "lmtd": ("Counter-current LMTD sizing, segment by segment", "areas of the designed units",
             "the log-mean temperature difference of heat-transfer texts; U from 1/U = 1/h_hot + 1/h_cold"),
    "crf": ("Capital recovery factor", "annualised capital",
            "the annuity (A/P) factor of engineering economics, i(1 + i)ⁿ/[(1 + i)ⁿ − 1]"),
    "entu": ("ε-NTU rating", "simulation of the existing network at its areas",
             "Incropera, F. P., DeWitt, D. P., Bergman, T. L., Lavine, A. S. (2007). Fundamentals of Heat and "
             "Mass Transfer, 6th ed., Wiley, Table 11.3"),
    "retrofit": ("Cross-pinch analysis, area efficiency α and retrofit targets at constant α",
                 "diagnosis of the existing network",
                 "Tjoe, T. N., Linnhoff, B. (1986). Using pinch technology for process retrofit. Chemical "
                 "Engineering Progress 82(4), 47-60 (citation from memory, unverified)"),
    "retrofit_options": ("Retrofit options: candidate changes rated by ε-NTU simulation, sets of them chosen by "
                         "a MILP, ranked by net present value",
                         "ranked, costed retrofit options for the existing network",
                         "heatloom's own formulation (heatloom.retrofit.options); net present value with the "
                         "annuity present-worth factor of engineering economics, [1 − (1 + i)⁻ⁿ]/i"),
    "network_pinch": ("Network pinch", "what limits more recovery in the existing network",
                      "Asante, N. D. K., Zhu, X. X. (1997). Transactions of the IChemE 75(A), 349-360 (citation "
                      "from memory, unverified)"),
}


def methods_used(study: Study) -> list[tuple[str, str, str]]:
    """(method, what it did in this run, reference) of every published method the run used, in order."""
    done = lambda x: x is not None and not isinstance(x, NotComputed)  # noqa: E731
    keys = []
    if done(study.targets):
        keys += ["pta", "curves"]
        if study.targets.placement is not None:
            keys.append("placement")
    if done(study.area):
        keys += ["area", "units", "shells", "capital"]
    if done(study.sweep):
        keys += [k for k in ("area", "units", "capital") if k not in keys] + ["brent"]
    if done(study.design):
        keys += ["transshipment", "pdm", "stagewise", "lmtd"]
    if done(study.tac):
        keys += ["tac"] + (["lmtd"] if "lmtd" not in keys else [])
    if (done(study.design) or done(study.tac) or done(study.area)) and not study.costs.annualised:
        keys.append("crf")
    if done(study.diagnosis):
        keys += ["entu", "retrofit"]
        if "area" not in keys and study.diagnosis.efficiency is not None:
            keys.append("area")
        keys.append("network_pinch")
    if done(study.retrofit):
        keys += ["entu", "retrofit_options"] + (["crf"] if not study.costs.annualised else [])
    return [_REFERENCES[k] for k in dict.fromkeys(keys)]


# --------------------------------------------------------------------------------------------------
# sections


def _done(x) -> bool:
    return x is not None and not isinstance(x, NotComputed)


def _solves_table(solves) -> str:
    import pandas as pd

    if not solves:
        return ""
    frame = pd.DataFrame([{"problem": r.problem, "solver": r.solver, "status": r.status.value,
                           "gap [-]": r.gap, "time [s]": r.wall_time, "time limit [s]": r.time_limit}
                          for r in solves])
    return frame_table(frame, "Solves behind the network (status, relative gap, wall time)")


def _summary(study: Study, page: Page) -> str:
    cur = study.currency
    rows = []
    t = study.targets
    if _done(t):
        rows += [("minimum hot utility", t.hot_utility, "kW"), ("minimum cold utility", t.cold_utility, "kW"),
                 ("maximum heat recovery", t.heat_recovery, "kW")]
        if t.pinch is not None:
            rows += [("pinch, hot side", t.pinch.hot, "°C"), ("pinch, cold side", t.pinch.cold, "°C")]
    if _done(study.area):
        rows += [("area target", study.area.area, "m²"),
                 ("total annual cost target", study.area.total_annual_cost, f"{cur}/year")]
    if _done(study.sweep):
        o = study.sweep.optimum
        lo, hi = study.sweep.dt_min_range
        at_end = " (at an end of the swept range: see section 5)" if min(o.dt_min - lo, hi - o.dt_min) <= 0.011 else ""
        rows += [(f"ΔTmin of lowest total annual cost target{at_end}", o.dt_min, "K"),
                 ("total annual cost target there", o.total_annual_cost, f"{cur}/year")]
    for label, net in (("maximum-energy-recovery network", study.design), ("lowest-cost network", study.tac)):
        if _done(net):
            rows.append((f"{label}: units", net.units, "-"))
            if net.total_annual_cost is not None:
                rows.append((f"{label}: total annual cost", net.total_annual_cost, f"{cur}/year"))
    if _done(study.diagnosis):
        d = study.diagnosis
        rows += [("existing network: hot utility used", d.simulation.hot_utility, "kW"),
                 ("existing network: hot utility beyond the target", d.cross_pinch.excess, "kW")]
        if d.efficiency is not None:
            rows.append(("existing network: area efficiency α", d.efficiency.alpha, "-"))
    if _done(study.retrofit) and study.retrofit.best is not None:
        b = study.retrofit.best
        rcur = study.retrofit.costs.currency
        rows += [("retrofit option 1 (largest NPV): hot utility saved", b.saving, "kW"),
                 ("retrofit option 1: investment", b.investment, rcur),
                 ("retrofit option 1: simple payback", b.payback_years, "year"),
                 ("retrofit option 1: net present value", b.npv, rcur)]
    intro = paragraph(f"Study of {len(study.streams.hot)} hot and {len(study.streams.cold)} cold streams at "
                      f"ΔTmin {study.dt_min:g} K ({study.dt_min_note}). Every number below is a screening "
                      "estimate; see “Safety and limits”.")
    return intro + long_table(rows, "Key results", "summary-table")


def _inputs(study: Study, page: Page) -> str:
    from .workbook import utility_frame

    source = study.sources.get("stream table", study.streams.source or "given in code")
    parts = [paragraph(f"Stream table: {source}, converted to canonical units (°C, kW/K, kW/(m²·K)); consecutive "
                       "rows of one name are segments of one stream."),
             frame_table(study.streams.to_frame(), "Process streams as read", "streams-table")]
    if study.utilities is None:
        parts.append(paragraph("No utility table was given. The energy targets assume ideal utilities, hotter and "
                               "colder than every process temperature; designs and costs use the two assumed "
                               "utilities below."))
    given = "given" if study.utilities is not None else "assumed"
    parts.append(frame_table(utility_frame(study), f"Utilities {given} and their duties at the targets",
                             "utilities-table"))
    return "".join(parts)


def _targets(study: Study, page: Page) -> str:
    from .figures import (
        balanced_composite_figure,
        composite_figure,
        driving_force_figure,
        grand_composite_figure,
    )
    from .workbook import target_rows

    t = study.targets
    if not _done(t):
        return page.missing("Energy targets", "energy targets", t.reason)
    parts = [long_table(target_rows(study), f"Energy targets at ΔTmin {t.dt_min:g} K", "targets-table")]
    if not _done(study.area):
        parts.append(page.missing("Energy targets", "area, units, shells and cost targets", study.area.reason))
    else:
        parts.append('<p class="basis">Basis of the area, units, shells and cost targets: '
                     f"{escape(study.area.basis)}</p>")
    if t.placement is not None:
        cur = study.currency
        import pandas as pd

        frame = pd.DataFrame([{"utility": d.utility.name, "kind": d.utility.kind.value,
                               "T_supply [°C]": d.utility.supply_temperature,
                               "T_target [°C]": d.utility.target_temperature,
                               f"price [{cur}/(kW·year)]": d.utility.cost, "duty [kW]": d.duty,
                               f"annual cost [{cur}/year]": d.annual_cost} for d in t.placement.duties])
        parts.append(frame_table(frame, "Utility levels: cheapest placement against the grand composite curve",
                                 "utility-levels-table"))
    else:
        parts.append(paragraph("No utility levels were given: the hot and cold utility targets are the minimum "
                               "duties of ideal utilities."))
    parts.append(page.figure("fig-composite", lambda: composite_figure(t),
                             f"Hot and cold composite curves at ΔTmin {t.dt_min:g} K, with the utility targets "
                             "and the pinch."))
    parts.append(page.figure("fig-grand-composite", lambda: grand_composite_figure(t),
                             "Grand composite curve (net heat flow against shifted temperature)"
                             + (", with the utility levels placed." if t.placement is not None else ".")))
    parts.append(page.figure("fig-balanced-composite", lambda: balanced_composite_figure(t),
                             "Balanced composite curves: the composites with the "
                             + ("utility levels placed" if t.placement is not None else "two assumed utilities")
                             + " added, so that both curves carry the same heat."))
    parts.append(page.figure("fig-driving-force", lambda: driving_force_figure(t),
                             "Driving-force plot: temperature difference between the hot and cold composite curves "
                             "against heat flow over the heat-recovery range; the smallest is ΔTmin, at the pinch."))
    parts.append(frame_table(t.table.to_frame(), "Problem table: shifted temperature intervals and the feasible "
                             "heat cascade", "problem-table"))
    return "".join(parts)


def _sweep(study: Study, page: Page) -> str:
    import pandas as pd

    w = study.sweep
    if not _done(w):
        return page.missing("Cost targets against ΔTmin", "the ΔTmin sweep", w.reason)
    cur = w.currency
    o = w.optimum
    rows = [("ΔTmin of lowest total annual cost target", o.dt_min, "K"),
            ("total annual cost target", o.total_annual_cost, f"{cur}/year"),
            ("capital cost target (annualised)", o.capital_cost, f"{cur}/year"),
            ("energy cost target", o.energy_cost, f"{cur}/year"),
            ("hot utility", o.hot_utility, "kW"), ("cold utility", o.cold_utility, "kW"),
            ("area target", o.area, "m²"), ("units target (MER)", o.units_mer, "-"), ("shells target", o.shells, "-")]
    lo, hi = w.dt_min_range
    parts = [paragraph(f"Targets evaluated from {lo:g} to {hi:g} K by {w.step:g} K ({len(w.points)} points, with "
                       "both sides of every breakpoint), then the optimum refined between breakpoints."),
             long_table(rows, "Optimum of the total annual cost target", "sweep-optimum-table")]
    try:
        from .sweep_figures import cost_figure, targets_figure
    except ImportError as e:
        parts.append(page.missing("Cost targets against ΔTmin", "the sweep figures",
                                  f"heatloom.io.sweep_figures is not available ({e})"))
    else:
        parts.append(page.figure("fig-sweep-cost", lambda: cost_figure(w),
                                 "Energy, capital and total annual cost targets against ΔTmin; dotted lines "
                                 "mark steps of the unit targets."))
        parts.append(page.figure("fig-sweep-targets", lambda: targets_figure(w),
                                 "Utility targets (left axis) and area target (right axis) against ΔTmin."))
    if w.breakpoints:
        frame = pd.DataFrame([{"ΔTmin low [K]": b.low, "ΔTmin high [K]": b.high, "change": b.change}
                              for b in w.breakpoints])
        parts.append(frame_table(frame, "Breakpoints: where the pinch, the unit targets or feasibility change",
                                 "sweep-breakpoints-table"))
    grid = [p for p in w.points if p.kind == "grid"]
    every = max(1, -(-len(grid) // 15))
    shown = grid[::every] + ([grid[-1]] if grid and grid[::every][-1] is not grid[-1] else [])
    frame = pd.DataFrame([{"ΔTmin [K]": p.dt_min, "feasible": "yes" if p.feasible else "no",
                           "hot utility [kW]": p.hot_utility, "cold utility [kW]": p.cold_utility,
                           "area [m²]": p.area, "units MER [-]": p.units_mer,
                           f"capital [{cur}/year]": p.capital_cost, f"energy [{cur}/year]": p.energy_cost,
                           f"total [{cur}/year]": p.total_annual_cost} for p in shown])
    parts.append(frame_table(frame, "Targets at selected ΔTmin (every point is in the workbook)", "sweep-table"))
    parts.append(notes_list(list(w.notes)))
    return "".join(parts)


def _network_section(study: Study, page: Page, net, section: str, what: str, key: str, intro: str) -> str:
    from .grid_figures import grid_diagram
    from .workbook import network_frame

    if not _done(net):
        return page.missing(section, what, net.reason)
    cur = net.currency or study.currency
    rows = [("units", net.units, "-")]
    if net.unit_target is not None:
        rows.append(("minimum-units target", net.unit_target, "-"))
    rows += [("hot utility", net.hot_utility, "kW"), ("cold utility", net.cold_utility, "kW"),
             ("heat recovery", net.heat_recovery, "kW")]
    if net.total_annual_cost is not None:
        rows += [("capital cost (annualised)", net.capital_cost, f"{cur}/year"),
                 ("utility cost", net.operating_cost, f"{cur}/year"),
                 ("total annual cost", net.total_annual_cost, f"{cur}/year")]
    return "".join([
        paragraph(intro), long_table(rows, f"The {what}", f"{key}-summary-table"),
        frame_table(network_frame(net, cur), "Units: X exchangers, HU heaters, CU coolers (names as on the grid diagram)", f"{key}-units-table"),
        page.figure(f"fig-{key}-grid", lambda: grid_diagram(net, study.streams,
                                                             approach="EMAT" if key == "tac" else "ΔTmin"),
                    f"Grid diagram of the {what}: hot streams above, cold streams below; diamonds joined by a "
                    "line are exchangers, triangles up heaters, triangles down coolers.", wide=True),
        notes_list(list(net.notes)), _solves_table(net.solves)])


def _retrofit(study: Study, page: Page) -> str:
    import pandas as pd

    from .retrofit_figures import grid_figures, retrofit_curve_figure
    from .workbook import retrofit_rows

    d = study.diagnosis
    if not _done(d):
        return page.missing("Existing network", "the retrofit diagnosis", d.reason)
    sim = d.simulation
    facts = [r for r in retrofit_rows(study) if r[0] not in ("note", "problem")]
    parts = [paragraph(f"The existing network ({study.sources.get('existing network', 'given')}) simulated at its "
                       f"areas, then compared with the targets at ΔTmin {d.cross_pinch.dt_min:g} K."),
             long_table(facts, "Existing network against the targets", "retrofit-table"),
             frame_table(sim.to_frame(), "Units as simulated at their areas", "retrofit-units-table"),
             page.figure("fig-existing-grid", lambda: grid_figures(sim, None, study.streams)[0],
                         "Grid diagram of the existing network with its simulated duties and unit names.",
                         wide=True)]
    if d.cross_pinch.units:
        frame = pd.DataFrame([{"unit": u.unit, "what": u.kind, "pinch, shifted [°C]": u.pinch,
                               "downward [kW]": u.downward, "upward [kW]": u.upward, "net [kW]": u.net}
                              for u in d.cross_pinch.units])
        parts.append(frame_table(frame, "Heat moved across the pinch, unit by unit", "cross-pinch-table"))
    else:
        parts.append(paragraph("No unit moves heat across the pinch."))
    if d.curve is not None:
        parts.append(page.figure("fig-retrofit-curve", lambda: retrofit_curve_figure(d.curve),
                                 "Retrofit targets: hot utility saving against extra area, keeping the existing "
                                 "area efficiency α, and with new area working at α = 1."))
        parts.append(frame_table(d.curve.to_frame(), "Retrofit targets against ΔTmin", "retrofit-curve-table"))
    else:
        parts.append(page.missing("Existing network", "area efficiency and retrofit curve",
                                  "; ".join(d.notes) or "not computed"))
    if d.pinch.paths:
        frame = pd.DataFrame([{"heater": p.heater, "cooler": p.cooler, "exchangers": ", ".join(p.exchangers),
                               "load shift [kW]": p.shift, "stopped by": p.limit, "why": p.reason}
                              for p in d.pinch.paths])
        parts.append(frame_table(frame, "Utility paths: load that each could shift on its own", "paths-table"))
    parts.append(notes_list(list(sim.problems), "Problems of the network as simulated"))
    parts.append(notes_list([*d.notes, *sim.notes, *d.pinch.notes]))
    return "".join(parts)


def _retrofit_options(study: Study, page: Page) -> str:
    from .retrofit_figures import grid_figures, savings_investment_figure
    from .workbook import retrofit_option_frame

    r = study.retrofit
    if not _done(r):
        return page.missing("Existing network: retrofit options", "ranked, costed retrofit options", r.reason)
    cur = r.costs.currency
    kept = ", ".join(f"{k} {b} of {a}" for k, (a, b) in r.candidates.items())
    parts = [paragraph(f"Changes to the existing network (added area, new exchangers, resequencing, repiping) were "
                       f"each simulated at fixed areas by ε-NTU and kept only if every unit keeps at least "
                       f"{r.min_approach:g} K; a MILP chose sets of them, and every set it chose was simulated again "
                       f"({r.evaluations} simulations). Options are ranked by net present value at "
                       f"{100 * r.costs.interest_rate:g} % over {r.costs.years:g} years; savings, investment, "
                       "payback and NPV are the simulated ones."),
             f'<p class="basis">Candidates that work alone and save energy, of those tried: {escape(kept)}. '
             f"Cost basis: {escape(r.costs.describe())} {escape(r.retrofit_costs.describe(cur))}</p>"]
    if not r.options:
        parts.append(paragraph("No retrofit option saves energy within the limits given."))
    else:
        parts.append(frame_table(retrofit_option_frame(r), f"Retrofit options ranked by net present value "
                                 f"(money in {cur})", "retrofit-options-table"))
    parts.append(page.figure("fig-retrofit-savings", lambda: savings_investment_figure(r),
                             "Hot utility saved against investment: every working set of changes simulated (grey), "
                             "the largest saving found for each investment (steps) and the ranked options "
                             "(diamonds, numbered by rank)."))
    best = r.best
    if best is not None:
        changed = {c.unit for c in best.changes}

        def proposed():
            _, second = grid_figures(r.simulation, best.simulation, study.streams, changed=changed,
                                     label="Option 1 (largest NPV)")
            return second

        parts.append(page.figure("fig-proposed-grid", proposed,
                                 "Grid diagram of option 1 (largest NPV) as simulated after its changes, new and "
                                 "changed units framed; compare with the existing network in the diagnosis above.",
                                 wide=True))
    parts.append(notes_list(list(r.notes)))
    parts.append(_solves_table(r.solves))
    return "".join(parts)


def _methods(study: Study, page: Page) -> str:
    used = methods_used(study)
    if not used:
        return paragraph("No published method was used: nothing was computed.")
    return methods_table(used, "Published methods used")


def _about(study: Study, page: Page) -> str:
    return about_table(study, study.settings.command)


def render_report(study: Study) -> RenderedReport:
    """The study as one self-contained HTML page (see the module notes).

    Parameters
    ----------
    study : Study

    Returns
    -------
    RenderedReport

    Examples
    --------
    Energy targets only (invented streams): every section is there, those not computed say so.

    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [60, 120], [2.0, 2.5])
    >>> r = render_report(Study("demo", s, 10.0, "given", target(s, 10.0)))
    >>> r.figures, [k for k, _ in r.sections][:4], r.html.count("<svg")
    (4, ['summary', 'inputs', 'assumptions', 'targets'], 4)
    >>> [w for w, _ in r.not_computed]
    ['Energy targets', 'Cost targets against ΔTmin', 'Network for maximum energy recovery', 'Network of lowest total annual cost']
    """
    page = Page()
    plan = [("summary", "Summary", _summary), ("inputs", "Input data", _inputs),
            ("assumptions", "Assumptions and defaults", assumptions_section), ("targets", "Energy targets", _targets),
            ("sweep", "Cost targets against ΔTmin", _sweep),
            ("design", "Network for maximum energy recovery",
             lambda s, p: _network_section(s, p, s.design, "Network for maximum energy recovery",
                                           "maximum-energy-recovery network", "design",
                                           f"Maximum energy recovery at ΔTmin {s.dt_min:g} K with the fewest units, "
                                           "every unit sized and costed and checked for its energy balance and "
                                           "ΔTmin at both ends.")),
            ("tac", "Network of lowest total annual cost",
             lambda s, p: _network_section(s, p, s.tac, "Network of lowest total annual cost",
                                           "lowest-total-annual-cost network", "tac",
                                           "The network of lowest total annual cost found by the search (no "
                                           "ΔTmin, only the exchanger minimum approach EMAT; a heuristic, not a "
                                           "proven optimum)."))]
    if study.diagnosis is not None:
        plan.append(("retrofit", "Existing network: retrofit diagnosis", _retrofit))
    if study.retrofit is not None:
        plan.append(("retrofit_options", "Existing network: retrofit options", _retrofit_options))
    plan += [("safety", "Safety and limits", safety_section), ("methods", "Methods and references", _methods),
             ("about", "About this report", _about)]
    return build_page(study, plan, page, lede="Heat-integration study")
